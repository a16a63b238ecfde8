/**
 * refund (admins): gives the money of a case back. A case still open (queued, claimed, waiting for
 * data) ends as refunded in the same unit, so an answer racing the refund finds it refunded and
 * captures nothing; an answered, resolved or closed case keeps its state. After the commit the hold
 * is released — or refunded if the answer's capture got to the payment service first — or the
 * capture is refunded. The answer is 200 only when money really went back, read back from the
 * payment service; otherwise 409 (or 502 when the service could not be reached) saying why.
 */
import type { AppContext } from "../../context";
import type { Actor } from "../../auth/session";
import { HttpError, conflict } from "../../http/errors";
import { ledgerBalance } from "../../payments/ledger";
import { currentPayment, presentPayment } from "../../payments/store";
import { isUnreachable } from "../../payments/stripe-calls";
import type { RefundView } from "../../../shared/views/money";
import type { CaseStatus } from "../../../shared/domain/case-status";
import { perform } from "../effects";
import { getCaseRow, transition } from "../records";
import { authorized } from "./authorized";

const OPEN: readonly CaseStatus[] = ["queued", "claimed", "needs_data"];

/** POST /api/admin/cases/:id/refund */
export async function refundCase(ctx: AppContext, actor: Actor, caseId: string, reason?: string): Promise<RefundView> {
  const { after } = await perform(ctx, async (tx, fx) => {
    const now = ctx.now();
    const { c } = await authorized(tx, actor, "refund", caseId);
    const p = await currentPayment(tx, caseId);
    if (!p || (p.status !== "authorized" && p.status !== "captured")) {
      throw conflict(
        "not_refundable",
        `There is no held or captured payment on this case${p ? ` (its payment is ${p.status})` : ""}.`,
      );
    }
    if (OPEN.includes(c.status as CaseStatus)) {
      await transition(tx, {
        caseId,
        from: OPEN,
        to: "refunded",
        actorId: actor.id,
        type: "refunded_by_desk",
        at: now,
        data: { reason: reason ?? null },
      });
    }
    fx.push(
      { kind: "announce", caseId },
      { kind: "returnMoney", caseId, reason: "requested_by_customer", note: reason },
    );
  });
  const back = after.moneyBack;
  if (!back || back.outcome === "nothing" || back.outcome === "expired") {
    const failure = back && back.outcome === "nothing" ? back : null;
    if (failure?.error && isUnreachable(failure.error)) {
      throw new HttpError(
        502,
        "payment_unavailable",
        "The payment service did not answer; nothing was refunded yet. Try again in a moment.",
      );
    }
    const said = failure?.error instanceof Error ? ` The payment service said: ${failure.error.message}` : "";
    throw conflict("not_refundable", `${failure?.why ?? "Nothing was given back."}${said}`);
  }
  return ctx.db.read(async (tx) => {
    const row = (await getCaseRow(tx, caseId))!;
    const p = (await currentPayment(tx, caseId))!;
    return {
      id: caseId,
      status: row.status as CaseStatus,
      payment: presentPayment(p),
      balance: await ledgerBalance(tx, caseId),
    } satisfies RefundView;
  });
}
