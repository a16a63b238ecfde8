/** The parts of a case and a payment the notice texts (server/services/notices.ts) talk about. */
import type { NoticeCase, NoticePayment } from "../services/notices";
import { receiptNumber, type PaymentRow } from "../payments/store";
import { caseLabel } from "../../shared/domain/case-label";
import type { CaseRow } from "./records";

export function noticeCase(c: CaseRow): NoticeCase {
  return {
    id: c.id,
    label: caseLabel(c),
    deadlineAt: c.deadlineAt,
    year: c.year,
    make: c.make,
    model: c.model,
    engine: c.engine,
    system: c.system,
  };
}

export function noticePayment(p: PaymentRow): NoticePayment {
  return {
    amountCents: p.amountCents,
    currency: p.currency,
    tierLabel: p.tierLabel,
    deskShareBasisPoints: p.deskShareBasisPoints,
    cardBrand: p.cardBrand,
    cardLast4: p.cardLast4,
    receiptNumber: receiptNumber(p),
  };
}
