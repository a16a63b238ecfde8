import type { Db, Tx } from "../db/client";
import type { Mailer } from "../context";
import { afterResponse } from "../http/after-response";
import { enqueueMail } from "./outbox";
import type { MailDispatcher } from "./dispatcher";

export { startMailDispatcher, type MailDispatcher, type MailTransport } from "./dispatcher";

/** ctx.mailer: queues in the outbox and wakes the dispatcher once the current request is answered. */
export function outboxMailer(db: Db, dispatcher: MailDispatcher): Mailer {
  const enqueue: Mailer["enqueue"] = async (mail, opts = {}) => {
    const write = (tx: Tx) => enqueueMail(tx, mail, { kind: opts.kind });
    const ids = opts.tx ? await write(opts.tx) : await db.write(write);
    afterResponse(() => dispatcher.kick());
    return ids;
  };
  return {
    enqueue,
    async send(mail, opts) {
      return { messageId: (await enqueue(mail, opts))[0] };
    },
    drain: (timeoutMs) => dispatcher.drain(timeoutMs),
  };
}
