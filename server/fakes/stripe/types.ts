/** Shapes of the objects the fake stores and returns, following Stripe's API reference. */

export type Metadata = Record<string, string>;

export interface ListObject<T> {
  object: "list";
  data: T[];
  has_more: boolean;
  url: string;
  total_count?: number;
}

export interface CustomerObject {
  id: string;
  object: "customer";
  address: unknown;
  balance: number;
  created: number;
  currency: string | null;
  default_source: null;
  delinquent: boolean;
  description: string | null;
  discount: null;
  email: string | null;
  invoice_prefix: string;
  invoice_settings: { custom_fields: null; default_payment_method: null; footer: null; rendering_options: null };
  livemode: false;
  metadata: Metadata;
  name: string | null;
  phone: string | null;
  preferred_locales: string[];
  shipping: unknown;
  tax_exempt: "none" | "exempt" | "reverse";
  test_clock: null;
}

export interface CardDetails {
  brand: string;
  country: string;
  exp_month: number;
  exp_year: number;
  fingerprint: string;
  funding: "credit";
  last4: string;
}

export interface PaymentMethodObject {
  id: string;
  object: "payment_method";
  billing_details: { address: null; email: string | null; name: string | null; phone: null };
  card: CardDetails & {
    checks: { address_line1_check: null; address_postal_code_check: null; cvc_check: "pass" | "fail" };
  };
  created: number;
  customer: string | null;
  livemode: false;
  metadata: Metadata;
  type: "card";
}

export interface LastPaymentError {
  type: "card_error";
  code: string;
  decline_code?: string;
  doc_url: string;
  message: string;
  charge?: string;
  payment_method?: PaymentMethodObject;
}

export type CaptureMethod = "automatic" | "automatic_async" | "manual";
export type PaymentIntentStatus =
  | "requires_payment_method"
  | "requires_confirmation"
  | "requires_action"
  | "processing"
  | "requires_capture"
  | "canceled"
  | "succeeded";

export interface PaymentIntentObject {
  id: string;
  object: "payment_intent";
  amount: number;
  amount_capturable: number;
  amount_received: number;
  application_fee_amount: number | null;
  canceled_at: number | null;
  cancellation_reason: string | null;
  capture_method: CaptureMethod;
  client_secret: string;
  confirmation_method: "automatic" | "manual";
  created: number;
  currency: string;
  customer: string | null;
  description: string | null;
  last_payment_error: LastPaymentError | null;
  latest_charge: string | null;
  livemode: false;
  metadata: Metadata;
  next_action: null;
  on_behalf_of: null;
  payment_method: string | null;
  payment_method_types: string[];
  receipt_email: string | null;
  setup_future_usage: string | null;
  statement_descriptor: string | null;
  statement_descriptor_suffix: string | null;
  status: PaymentIntentStatus;
  transfer_group: string | null;
}

export interface ChargeObject {
  id: string;
  object: "charge";
  amount: number;
  amount_captured: number;
  amount_refunded: number;
  balance_transaction: string | null;
  billing_details: { address: null; email: string | null; name: string | null; phone: null };
  captured: boolean;
  created: number;
  currency: string;
  customer: string | null;
  description: string | null;
  failure_code: string | null;
  failure_message: string | null;
  livemode: false;
  metadata: Metadata;
  outcome: {
    network_status: "approved_by_network" | "declined_by_network";
    reason: string | null;
    risk_level: "normal";
    seller_message: string;
    type: "authorized" | "issuer_declined";
  };
  paid: boolean;
  payment_intent: string;
  payment_method: string;
  payment_method_details: { type: "card"; card: CardDetails & { capture_before?: number; network: string } };
  receipt_email: string | null;
  refunded: boolean;
  refunds: ListObject<RefundObject>;
  status: "succeeded" | "failed" | "pending";
  transfer_group: string | null;
}

export interface RefundObject {
  id: string;
  object: "refund";
  amount: number;
  balance_transaction: string | null;
  charge: string;
  created: number;
  currency: string;
  metadata: Metadata;
  payment_intent: string;
  reason: string | null;
  status: "succeeded";
}

export interface TransferObject {
  id: string;
  object: "transfer";
  amount: number;
  amount_reversed: number;
  balance_transaction: string;
  created: number;
  currency: string;
  description: string | null;
  destination: string;
  destination_payment: string;
  livemode: false;
  metadata: Metadata;
  reversals: ListObject<never>;
  reversed: boolean;
  source_transaction: string | null;
  source_type: "card";
  transfer_group: string | null;
}

export interface AccountObject {
  id: string;
  object: "account";
  business_type: string | null;
  capabilities: Record<string, "active" | "inactive" | "pending">;
  charges_enabled: boolean;
  country: string;
  created: number;
  default_currency: string;
  details_submitted: boolean;
  email: string | null;
  metadata: Metadata;
  payouts_enabled: boolean;
  type: "express" | "custom" | "standard";
}

export interface LineItemObject {
  id: string;
  object: "item";
  amount_discount: number;
  amount_subtotal: number;
  amount_tax: number;
  amount_total: number;
  currency: string;
  description: string;
  price: {
    id: string;
    object: "price";
    active: boolean;
    currency: string;
    product: string;
    type: "one_time";
    unit_amount: number;
  };
  quantity: number;
}

export interface CheckoutSessionObject {
  id: string;
  object: "checkout.session";
  after_expiration: null;
  allow_promotion_codes: null;
  amount_subtotal: number;
  amount_total: number;
  automatic_tax: { enabled: false; liability: null; status: null };
  billing_address_collection: null;
  cancel_url: string | null;
  client_reference_id: string | null;
  client_secret: null;
  created: number;
  currency: string;
  customer: string | null;
  customer_creation: "if_required" | null;
  customer_details: {
    email: string | null;
    name: string | null;
    address: null;
    phone: null;
    tax_exempt: "none";
    tax_ids: [];
  } | null;
  customer_email: string | null;
  expires_at: number;
  invoice: null;
  livemode: false;
  locale: string | null;
  metadata: Metadata;
  mode: "payment";
  payment_intent: string | null;
  payment_link: null;
  payment_method_types: string[];
  payment_status: "paid" | "unpaid" | "no_payment_required";
  status: "open" | "complete" | "expired";
  submit_type: string | null;
  success_url: string;
  total_details: { amount_discount: number; amount_shipping: number; amount_tax: number };
  ui_mode: "hosted";
  url: string | null;
}

/** What the Checkout Session keeps for the PaymentIntent it creates at payment time. */
export interface SessionIntentData {
  capture_method: CaptureMethod;
  metadata: Metadata;
  description: string | null;
  receipt_email: string | null;
  statement_descriptor: string | null;
  statement_descriptor_suffix: string | null;
  transfer_group: string | null;
  setup_future_usage: string | null;
}

export interface EventObject {
  id: string;
  object: "event";
  api_version: string;
  created: number;
  data: { object: unknown; previous_attributes?: Record<string, unknown> };
  livemode: false;
  pending_webhooks: number;
  request: { id: string | null; idempotency_key: string | null };
  type: string;
}

export interface IdempotencyRecord {
  apiKey: string;
  key: string;
  method: string;
  path: string;
  params: string;
  status: number;
  body: string;
  storedAt: number;
}

export interface FakeStripeState {
  version: 1;
  clockOffsetSeconds: number;
  customers: Record<string, CustomerObject>;
  checkoutSessions: Record<string, CheckoutSessionObject>;
  sessionLineItems: Record<string, LineItemObject[]>;
  sessionIntentData: Record<string, SessionIntentData>;
  paymentIntents: Record<string, PaymentIntentObject>;
  /** PaymentIntent id → the Checkout Session that created it. */
  intentSession: Record<string, string>;
  charges: Record<string, ChargeObject>;
  paymentMethods: Record<string, PaymentMethodObject>;
  refunds: Record<string, RefundObject>;
  transfers: Record<string, TransferObject>;
  accounts: Record<string, AccountObject>;
  events: EventObject[];
  idempotency: Record<string, IdempotencyRecord>;
  /** Available balance per currency, in the smallest currency unit. */
  balance: Record<string, number>;
}

export function emptyState(): FakeStripeState {
  return {
    version: 1,
    clockOffsetSeconds: 0,
    customers: {},
    checkoutSessions: {},
    sessionLineItems: {},
    sessionIntentData: {},
    paymentIntents: {},
    intentSession: {},
    charges: {},
    paymentMethods: {},
    refunds: {},
    transfers: {},
    accounts: {},
    events: [],
    idempotency: {},
    balance: {},
  };
}
