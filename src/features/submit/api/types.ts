import type { PaymentView, AnswerView, ConfirmationView } from "../../../../shared/views/queue";
export type { PaymentView, AnswerView, ConfirmationView };

export type {
  TierView as Tier,
  PublicPricingView as PublicPricing,
  WorkflowAbilities,
  WorkflowView as Workflow,
  HistoryEntryView as HistoryEntry,
} from "../../../../shared/views/workflow";
