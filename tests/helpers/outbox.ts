/**
 * Mail now goes through the outbox (server/mail/): a request writes a row and the dispatcher
 * sends it after the answer, one mail after another in the order they were queued. Tests that
 * need every mail queued so far to have reached the catcher wait for the outbox to drain.
 */
import type { AppContext } from "../../server/context";
import { schema } from "../../server/db/client";

/** Resolves once every queued mail has been sent (or given up); rejects after `timeoutMs`. */
export async function waitForOutboxDrained(server: { ctx: AppContext }, timeoutMs = 15_000): Promise<void> {
  await server.ctx.mailer.drain(timeoutMs);
}

/** The outbox rows (newest last), e.g. to check that a mail was queued without waiting for it. */
export async function outboxRows(server: { ctx: AppContext }) {
  return (await server.ctx.db.read((tx) => tx.select().from(schema.mailOutbox).all())).sort(
    (a, b) => a.createdAt.getTime() - b.createdAt.getTime(),
  );
}
