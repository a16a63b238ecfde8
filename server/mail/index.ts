import type { Db } from "../db/client";
import type { Mailer } from "../context";
import { afterResponse } from "../http/after-response";
import { enqueueMail } from "./outbox";
import type { MailDispatcher } from "./dispatcher";

export { startMailDispatcher, type MailDispatcher, type MailTransport } from "./dispatcher";

/** ctx.mailer: queues in the outbox and wakes the dispatcher once the current request is answered. */
export function outboxMailer(db: Db, dispatcher: MailDispatcher): Mailer {
  const enqueue: Mailer["enqueue"] = (mail, opts = {}) => {
    const ids = enqueueMail(opts.tx ?? db, mail, { kind: opts.kind });
    afterResponse(() => dispatcher.kick());
    return ids;
  };
  return {
    enqueue,
    async send(mail, opts) {
      return { messageId: enqueue(mail, opts)[0] };
    },
    drain: (timeoutMs) => dispatcher.drain(timeoutMs),
  };
}
