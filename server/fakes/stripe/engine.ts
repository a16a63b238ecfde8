/**
 * The fake's business rules: objects, state transitions and events, independent of HTTP.
 *
 * Behaviour follows Stripe's API reference (docs.stripe.com/api) for the endpoints Burnline uses.
 * Where the fake simplifies, the comment says so. Notable points:
 * - A Checkout Session in payment mode creates its PaymentIntent when the customer pays
 *   (`payment_intent` is null before that), as Stripe does since API version 2022-08-01.
 * - Manual capture: an authorised intent sits in `requires_capture` with `amount_capturable` set and
 *   the charge's `payment_method_details.card.capture_before` 7 days after authorisation (Stripe:
 *   "Place a hold on a payment method" — online card authorisations are valid for 7 days). Past that
 *   time the hold lapses: the intent becomes `canceled` (cancellation_reason `automatic`) and a
 *   capture is refused with `charge_expired_for_capture`.
 * - A completed session with manual capture reports `payment_status: "unpaid"` (the funds are only
 *   held, not yet in the balance) — from memory of Stripe's behaviour; the app should rely on the
 *   PaymentIntent's `status === "requires_capture"`, not on payment_status.
 * - Simplification: captured funds are available in the balance at once (Stripe keeps test card
 *   funds pending for a while unless a transfer names its `source_transaction`).
 */
import { createHash, randomBytes } from "node:crypto";
import {
  cardBrand,
  evaluateCard,
  normaliseCardNumber,
  TEST_PAYMENT_METHOD_TOKENS,
  testCardNumber,
  type CardInput,
} from "./cards";
import {
  arr,
  bool,
  currency,
  FakeStripeError,
  int,
  invalidRequest,
  metadata,
  missingParam,
  obj,
  oneOf,
  rejectUnknown,
  resourceMissing,
  str,
  unexpectedState,
  type StripeErrorBody,
} from "./errors";
import type { FormObject, FormValue } from "./form";
import {
  emptyState,
  type AccountObject,
  type CaptureMethod,
  type ChargeObject,
  type CheckoutSessionObject,
  type CustomerObject,
  type EventObject,
  type FakeStripeState,
  type LineItemObject,
  type ListObject,
  type Metadata,
  type PaymentIntentObject,
  type PaymentMethodObject,
  type RefundObject,
  type SessionIntentData,
  type TransferObject,
} from "./types";

export const DEFAULT_API_VERSION = "2026-10-28.endive";
/** Online card authorisations: 7 days (Stripe, "Place a hold on a payment method"). */
export const AUTHORIZATION_VALIDITY_SECONDS = 7 * 24 * 60 * 60;
const SESSION_DEFAULT_LIFETIME_SECONDS = 24 * 60 * 60;

const BASE62 = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz";
export function randomId(prefix: string, length = 24): string {
  const bytes = randomBytes(length);
  let out = "";
  for (let i = 0; i < length; i++) out += BASE62[bytes[i] % 62];
  return `${prefix}${out}`;
}

/** Per-request context: who asked and with which headers. */
export interface RequestContext {
  requestId: string | null;
  idempotencyKey: string | null;
  apiVersion: string;
}

export interface PayResult {
  ok: boolean;
  session: CheckoutSessionObject;
  paymentIntent: PaymentIntentObject | null;
  error?: StripeErrorBody;
  /** True when the card was refused before reaching the issuer (bad number, expiry or CVC). */
  validationError?: boolean;
}

export interface EngineOptions {
  now: () => number;
  publicBaseUrl: () => string;
  onEvent: (event: EventObject) => void;
  state?: FakeStripeState;
}

const clone = <T>(v: T): T => structuredClone(v);

function minimumAmount(cur: string): number {
  // Stripe's minimum charge amounts: USD 0.50, EUR 0.50 (docs.stripe.com/currencies#minimum-and-maximum-charge-amounts).
  return cur === "usd" || cur === "eur" ? 50 : 1;
}

function assertAmount(amount: number, cur: string, param = "amount"): void {
  if (amount < minimumAmount(cur)) {
    throw invalidRequest(`Amount must be at least ${minimumAmount(cur)} ${cur}`, "amount_too_small", param);
  }
  if (amount > 99_999_999) {
    throw invalidRequest("Amount must be no more than 99999999", "amount_too_large", param);
  }
}

function urlParam(params: FormObject, key: string, required: boolean): string | undefined {
  const v = str(params, key, { required });
  if (v === undefined) return undefined;
  try {
    const u = new URL(v);
    if (u.protocol !== "http:" && u.protocol !== "https:") throw new Error("scheme");
  } catch {
    throw invalidRequest(`Not a valid URL`, "url_invalid", key);
  }
  return v;
}

export class FakeStripeEngine {
  state: FakeStripeState;
  private readonly opts: EngineOptions;

  constructor(opts: EngineOptions) {
    this.opts = opts;
    this.state = opts.state ?? emptyState();
  }

  now(): number {
    return this.opts.now();
  }

  // ------------------------------------------------------------------ events

  private emit(
    type: string,
    object: unknown,
    ctx: RequestContext | null,
    previous?: Record<string, unknown>,
  ): EventObject {
    const event: EventObject = {
      id: randomId("evt_"),
      object: "event",
      api_version: ctx?.apiVersion ?? DEFAULT_API_VERSION,
      created: this.now(),
      data: { object: clone(object), ...(previous ? { previous_attributes: previous } : {}) },
      livemode: false,
      pending_webhooks: 0,
      request: { id: ctx?.requestId ?? null, idempotency_key: ctx?.idempotencyKey ?? null },
      type,
    };
    this.state.events.push(event);
    this.opts.onEvent(event);
    return event;
  }

  retrieveEvent(id: string): EventObject {
    const ev = this.state.events.find((e) => e.id === id);
    if (!ev) throw resourceMissing("event", id);
    return ev;
  }

  listEvents(params: FormObject): ListObject<EventObject> {
    rejectUnknown(params, [
      "type",
      "types",
      "limit",
      "starting_after",
      "ending_before",
      "created",
      "expand",
      "delivery_success",
    ]);
    const limit = int(params, "limit", { min: 1 }) ?? 10;
    if (limit > 100)
      throw invalidRequest("This value must be less than or equal to 100.", "parameter_invalid_integer", "limit");
    const type = str(params, "type");
    const types = arr(params, "types")?.map(String);
    let data = [...this.state.events].reverse();
    if (type) {
      const re = new RegExp(`^${type.replace(/[.+?^${}()|[\]\\]/g, "\\$&").replace(/\*/g, "[^]*")}$`);
      data = data.filter((e) => re.test(e.type));
    }
    if (types) data = data.filter((e) => types.includes(e.type));
    const after = str(params, "starting_after");
    if (after) {
      const i = data.findIndex((e) => e.id === after);
      if (i === -1) throw resourceMissing("event", after, "starting_after");
      data = data.slice(i + 1);
    }
    return { object: "list", data: data.slice(0, limit), has_more: data.length > limit, url: "/v1/events" };
  }

  // ------------------------------------------------------------------ clock-driven transitions

  /** Lapse holds past capture_before and expire open sessions past expires_at. */
  sweep(): void {
    const now = this.now();
    for (const pi of Object.values(this.state.paymentIntents)) {
      if (pi.status !== "requires_capture" || !pi.latest_charge) continue;
      const charge = this.state.charges[pi.latest_charge];
      const before = charge?.payment_method_details.card.capture_before;
      if (charge && before !== undefined && now >= before) {
        pi.status = "canceled";
        pi.cancellation_reason = "automatic";
        pi.canceled_at = before;
        pi.amount_capturable = 0;
        charge.refunded = true;
        charge.amount_refunded = charge.amount;
        this.emit("charge.expired", charge, null);
        this.emit("payment_intent.canceled", pi, null);
      }
    }
    for (const session of Object.values(this.state.checkoutSessions)) {
      if (session.status === "open" && now >= session.expires_at) this.expireSessionInternal(session, null);
    }
  }

  // ------------------------------------------------------------------ lookup / expand

  findById(id: string): unknown {
    const s = this.state;
    const table: Record<string, Record<string, unknown>> = {
      cus_: s.customers,
      cs_: s.checkoutSessions,
      pi_: s.paymentIntents,
      ch_: s.charges,
      pm_: s.paymentMethods,
      re_: s.refunds,
      tr_: s.transfers,
      acct_: s.accounts,
    };
    for (const [prefix, map] of Object.entries(table)) if (id.startsWith(prefix)) return map[id];
    return undefined;
  }

  /** Apply `expand[]` paths such as `latest_charge` or `payment_intent.latest_charge`. */
  expand<T>(object: T, params: FormObject): T {
    const paths = arr(params, "expand")?.map(String) ?? [];
    if (paths.length === 0) return object;
    const out = clone(object) as Record<string, unknown>;
    paths.forEach((path, index) => {
      const ok = this.expandPath(out, path.split("."));
      if (!ok) {
        throw invalidRequest(`This property cannot be expanded (${path}).`, undefined, `expand[${index}]`);
      }
    });
    return out as T;
  }

  private expandPath(target: Record<string, unknown>, parts: string[]): boolean {
    const [head, ...rest] = parts;
    if (!(head in target) && !(head === "line_items" && target.object === "checkout.session")) return false;
    if (head === "line_items" && target.object === "checkout.session") {
      target.line_items = this.listLineItems(String(target.id), {});
      return rest.length === 0;
    }
    let value = target[head];
    if (typeof value === "string") {
      const found = this.findById(value);
      if (found === undefined) return false;
      value = clone(found);
      target[head] = value;
    }
    if (rest.length === 0) return value === null || typeof value === "object";
    if (value === null) return true;
    if (typeof value !== "object") return false;
    return this.expandPath(value as Record<string, unknown>, rest);
  }

  // ------------------------------------------------------------------ customers

  private static CUSTOMER_PARAMS = [
    "email",
    "name",
    "description",
    "metadata",
    "phone",
    "address",
    "preferred_locales",
    "shipping",
    "tax_exempt",
    "invoice_settings",
    "expand",
  ];

  createCustomer(params: FormObject, ctx: RequestContext): CustomerObject {
    rejectUnknown(params, FakeStripeEngine.CUSTOMER_PARAMS);
    const c: CustomerObject = {
      id: randomId("cus_", 14),
      object: "customer",
      address: obj(params, "address") ?? null,
      balance: 0,
      created: this.now(),
      currency: null,
      default_source: null,
      delinquent: false,
      description: str(params, "description") ?? null,
      discount: null,
      email: str(params, "email") ?? null,
      invoice_prefix: randomBytes(4).toString("hex").toUpperCase(),
      invoice_settings: { custom_fields: null, default_payment_method: null, footer: null, rendering_options: null },
      livemode: false,
      metadata: metadata(params) ?? {},
      name: str(params, "name") ?? null,
      phone: str(params, "phone") ?? null,
      preferred_locales: (arr(params, "preferred_locales") ?? []).map(String),
      shipping: obj(params, "shipping") ?? null,
      tax_exempt: oneOf(params, "tax_exempt", ["none", "exempt", "reverse"] as const) ?? "none",
      test_clock: null,
    };
    this.state.customers[c.id] = c;
    this.emit("customer.created", c, ctx);
    return c;
  }

  retrieveCustomer(id: string): CustomerObject {
    const c = this.state.customers[id];
    if (!c) throw resourceMissing("customer", id);
    return c;
  }

  updateCustomer(id: string, params: FormObject, ctx: RequestContext): CustomerObject {
    rejectUnknown(params, FakeStripeEngine.CUSTOMER_PARAMS);
    const c = this.retrieveCustomer(id);
    const previous: Record<string, unknown> = {};
    for (const key of ["email", "name", "description", "phone"] as const) {
      if (params[key] !== undefined) {
        previous[key] = c[key];
        c[key] = str(params, key) ?? null;
      }
    }
    const md = metadata(params);
    if (md !== undefined) {
      previous.metadata = { ...c.metadata };
      c.metadata = params.metadata === "" ? {} : mergeMetadata(c.metadata, params.metadata as FormObject);
    }
    this.emit("customer.updated", c, ctx, previous);
    return c;
  }

  private customerParam(params: FormObject): string | null {
    const id = str(params, "customer");
    if (!id) return null;
    if (!this.state.customers[id]) throw invalidRequest(`No such customer: '${id}'`, "resource_missing", "customer");
    return id;
  }

  // ------------------------------------------------------------------ checkout sessions

  createCheckoutSession(params: FormObject, _ctx: RequestContext): CheckoutSessionObject {
    rejectUnknown(params, [
      "mode",
      "line_items",
      "success_url",
      "cancel_url",
      "customer",
      "customer_email",
      "customer_creation",
      "client_reference_id",
      "metadata",
      "payment_intent_data",
      "payment_method_types",
      "expires_at",
      "locale",
      "submit_type",
      "billing_address_collection",
      "allow_promotion_codes",
      "ui_mode",
      "expand",
    ]);
    const mode = str(params, "mode", { required: true });
    if (mode !== "payment") {
      throw invalidRequest(
        `The local fake supports only mode=payment (got ${mode}).`,
        "parameter_invalid_string",
        "mode",
      );
    }
    const uiMode = str(params, "ui_mode");
    if (uiMode && uiMode !== "hosted") {
      throw invalidRequest("The local fake supports only ui_mode=hosted.", "parameter_invalid_string", "ui_mode");
    }
    const successUrl = urlParam(params, "success_url", true)!;
    const cancelUrl = urlParam(params, "cancel_url", false) ?? null;
    const customer = this.customerParam(params);
    const customerEmail = str(params, "customer_email") ?? null;
    if (customer && customerEmail) {
      throw invalidRequest(
        "You may only specify one of these parameters: customer, customer_email.",
        undefined,
        "customer_email",
      );
    }
    const pmTypes = (arr(params, "payment_method_types") ?? ["card"]).map(String);
    if (pmTypes.some((t) => t !== "card")) {
      throw invalidRequest(
        "The local fake supports only the card payment method.",
        "parameter_invalid_string",
        "payment_method_types",
      );
    }

    const rawItems = arr(params, "line_items");
    if (!rawItems || rawItems.length === 0) throw missingParam("line_items");
    const sessionId = randomId("cs_test_", 58);
    const { items, currency: sessionCurrency, total } = lineItemsFrom(rawItems);
    if (total < minimumAmount(sessionCurrency)) {
      throw invalidRequest(
        `The Checkout Session's total amount due must add up to at least ${minimumAmount(sessionCurrency)} ${sessionCurrency}.`,
        "amount_too_small",
        "line_items",
      );
    }

    const intentData = sessionIntentDataFrom(params);

    const now = this.now();
    const expiresAt = sessionExpiry(params, now);

    const session: CheckoutSessionObject = {
      id: sessionId,
      object: "checkout.session",
      after_expiration: null,
      allow_promotion_codes: null,
      amount_subtotal: total,
      amount_total: total,
      automatic_tax: { enabled: false, liability: null, status: null },
      billing_address_collection: null,
      cancel_url: cancelUrl,
      client_reference_id: str(params, "client_reference_id") ?? null,
      client_secret: null,
      created: now,
      currency: sessionCurrency,
      customer,
      customer_creation: customer ? null : "if_required",
      customer_details: null,
      customer_email: customerEmail,
      expires_at: expiresAt,
      invoice: null,
      livemode: false,
      locale: str(params, "locale") ?? null,
      metadata: metadata(params) ?? {},
      mode: "payment",
      payment_intent: null,
      payment_link: null,
      payment_method_types: pmTypes,
      payment_status: "unpaid",
      status: "open",
      submit_type: str(params, "submit_type") ?? null,
      success_url: successUrl,
      total_details: { amount_discount: 0, amount_shipping: 0, amount_tax: 0 },
      ui_mode: "hosted",
      url: `${this.opts.publicBaseUrl()}/checkout/${sessionId}`,
    };
    this.state.checkoutSessions[sessionId] = session;
    this.state.sessionLineItems[sessionId] = items;
    this.state.sessionIntentData[sessionId] = intentData;
    return session;
  }

  retrieveCheckoutSession(id: string): CheckoutSessionObject {
    const s = this.state.checkoutSessions[id];
    if (!s) throw resourceMissing("checkout.session", id, "session");
    return s;
  }

  listLineItems(id: string, params: FormObject): ListObject<LineItemObject> {
    rejectUnknown(params, ["limit", "starting_after", "ending_before", "expand"]);
    this.retrieveCheckoutSession(id);
    const data = this.state.sessionLineItems[id] ?? [];
    return { object: "list", data: clone(data), has_more: false, url: `/v1/checkout/sessions/${id}/line_items` };
  }

  expireCheckoutSession(id: string, params: FormObject, ctx: RequestContext): CheckoutSessionObject {
    rejectUnknown(params, ["expand"]);
    const s = this.retrieveCheckoutSession(id);
    if (s.status !== "open") {
      throw invalidRequest(
        `Only Checkout Sessions with a status in ["open"] can be expired. This Checkout Session has a status of ${s.status}.`,
        "checkout_session_not_open",
      );
    }
    this.expireSessionInternal(s, ctx);
    return s;
  }

  private expireSessionInternal(s: CheckoutSessionObject, ctx: RequestContext | null): void {
    s.status = "expired";
    s.url = null;
    if (s.payment_intent) {
      const pi = this.state.paymentIntents[s.payment_intent];
      if (pi && pi.status === "requires_payment_method") {
        pi.status = "canceled";
        pi.cancellation_reason = "abandoned";
        pi.canceled_at = this.now();
        this.emit("payment_intent.canceled", pi, ctx);
      }
    }
    this.emit("checkout.session.expired", s, ctx);
  }

  /** The hosted page's "Pay": create the session's intent if needed, then try the card. */
  payCheckoutSession(id: string, card: CardInput, ctx: RequestContext): PayResult {
    const session = this.retrieveCheckoutSession(id);
    if (session.status !== "open") {
      const message =
        session.status === "complete" ? "This checkout has already been paid." : "This checkout has expired.";
      return {
        ok: session.status === "complete",
        session,
        paymentIntent: session.payment_intent ? this.state.paymentIntents[session.payment_intent] : null,
        ...(session.status === "complete"
          ? {}
          : { error: { type: "invalid_request_error", code: "checkout_session_not_open", message } }),
      };
    }
    const outcome = evaluateCard(card, this.now());
    if (!outcome.ok && !outcome.declined) {
      // Refused on the page before any charge is attempted (as a payment form validates input).
      return {
        ok: false,
        session,
        paymentIntent: session.payment_intent ? this.state.paymentIntents[session.payment_intent] : null,
        error: {
          type: "card_error",
          code: outcome.code,
          message: outcome.message,
          doc_url: `https://stripe.com/docs/error-codes/${outcome.code.replace(/_/g, "-")}`,
        },
        validationError: true,
      };
    }
    let pi = session.payment_intent ? this.state.paymentIntents[session.payment_intent] : undefined;
    if (!pi) {
      const data = this.state.sessionIntentData[id];
      pi = this.newPaymentIntent({
        amount: session.amount_total,
        currency: session.currency,
        customer: session.customer,
        capture_method: data.capture_method,
        metadata: { ...data.metadata },
        description: data.description,
        receipt_email: data.receipt_email ?? session.customer_email,
        statement_descriptor: data.statement_descriptor,
        statement_descriptor_suffix: data.statement_descriptor_suffix,
        transfer_group: data.transfer_group,
        setup_future_usage: data.setup_future_usage,
      });
      this.state.intentSession[pi.id] = id;
      session.payment_intent = pi.id;
      this.emit("payment_intent.created", pi, ctx);
    }
    const email =
      session.customer_email ?? (session.customer ? (this.state.customers[session.customer]?.email ?? null) : null);
    const result = this.attemptPayment(pi, card, ctx, email);
    if (!result.ok) {
      return { ok: false, session, paymentIntent: pi, error: result.error };
    }
    session.status = "complete";
    session.url = null;
    session.payment_status = pi.status === "succeeded" ? "paid" : "unpaid";
    session.customer_details = { email, name: null, address: null, phone: null, tax_exempt: "none", tax_ids: [] };
    this.emit("checkout.session.completed", session, ctx);
    return { ok: true, session, paymentIntent: pi };
  }

  // ------------------------------------------------------------------ payment intents

  private newPaymentIntent(p: {
    amount: number;
    currency: string;
    customer: string | null;
    capture_method: CaptureMethod;
    metadata: Metadata;
    description: string | null;
    receipt_email: string | null;
    statement_descriptor: string | null;
    statement_descriptor_suffix: string | null;
    transfer_group: string | null;
    setup_future_usage: string | null;
  }): PaymentIntentObject {
    const id = randomId("pi_");
    const pi: PaymentIntentObject = {
      id,
      object: "payment_intent",
      amount: p.amount,
      amount_capturable: 0,
      amount_received: 0,
      application_fee_amount: null,
      canceled_at: null,
      cancellation_reason: null,
      capture_method: p.capture_method,
      client_secret: `${id}_secret_${randomId("", 25)}`,
      confirmation_method: "automatic",
      created: this.now(),
      currency: p.currency,
      customer: p.customer,
      description: p.description,
      last_payment_error: null,
      latest_charge: null,
      livemode: false,
      metadata: p.metadata,
      next_action: null,
      on_behalf_of: null,
      payment_method: null,
      payment_method_types: ["card"],
      receipt_email: p.receipt_email,
      setup_future_usage: p.setup_future_usage,
      statement_descriptor: p.statement_descriptor,
      statement_descriptor_suffix: p.statement_descriptor_suffix,
      status: "requires_payment_method",
      transfer_group: p.transfer_group,
    };
    this.state.paymentIntents[id] = pi;
    return pi;
  }

  private static PI_CREATE_PARAMS = [
    "amount",
    "currency",
    "customer",
    "capture_method",
    "confirm",
    "payment_method",
    "payment_method_types",
    "automatic_payment_methods",
    "metadata",
    "description",
    "receipt_email",
    "statement_descriptor",
    "statement_descriptor_suffix",
    "transfer_group",
    "setup_future_usage",
    "off_session",
    "return_url",
    "confirmation_method",
    "error_on_requires_action",
    "payment_method_options",
    "expand",
  ];

  createPaymentIntent(params: FormObject, ctx: RequestContext): PaymentIntentObject {
    rejectUnknown(params, FakeStripeEngine.PI_CREATE_PARAMS);
    const cur = currency(params)!;
    const amount = int(params, "amount", { required: true })!;
    assertAmount(amount, cur);
    const pmTypes = arr(params, "payment_method_types")?.map(String);
    if (pmTypes && pmTypes.some((t) => t !== "card")) {
      throw invalidRequest(
        "The local fake supports only the card payment method.",
        "parameter_invalid_string",
        "payment_method_types",
      );
    }
    const pi = this.newPaymentIntent({
      amount,
      currency: cur,
      customer: this.customerParam(params),
      capture_method:
        oneOf(params, "capture_method", ["automatic", "automatic_async", "manual"] as const) ?? "automatic_async",
      metadata: metadata(params) ?? {},
      description: str(params, "description") ?? null,
      receipt_email: str(params, "receipt_email") ?? null,
      statement_descriptor: str(params, "statement_descriptor") ?? null,
      statement_descriptor_suffix: str(params, "statement_descriptor_suffix") ?? null,
      transfer_group: str(params, "transfer_group") ?? null,
      setup_future_usage: oneOf(params, "setup_future_usage", ["on_session", "off_session"] as const) ?? null,
    });
    const pmParam = str(params, "payment_method");
    let pmNumber: string | null = null;
    if (pmParam) {
      const pm = this.resolvePaymentMethod(pmParam, pi.customer);
      pi.payment_method = pm.id;
      pi.status = "requires_confirmation";
      pmNumber = this.cardNumberOf(pm);
    }
    this.emit("payment_intent.created", pi, ctx);
    if (bool(params, "confirm")) {
      if (!pmNumber) {
        throw unexpectedState(
          "You cannot confirm this PaymentIntent because it's missing a payment method. To confirm the PaymentIntent with " +
            `${pi.customer ?? "a customer"}, specify a payment method attached to this customer along with the customer ID.`,
        );
      }
      this.confirmWithNumber(pi, pmNumber, ctx);
    }
    return pi;
  }

  retrievePaymentIntent(id: string): PaymentIntentObject {
    const pi = this.state.paymentIntents[id];
    if (!pi) throw resourceMissing("payment_intent", id, "intent");
    return pi;
  }

  updatePaymentIntent(id: string, params: FormObject, ctx: RequestContext): PaymentIntentObject {
    rejectUnknown(params, [
      "metadata",
      "description",
      "receipt_email",
      "amount",
      "statement_descriptor",
      "transfer_group",
      "expand",
    ]);
    const pi = this.retrievePaymentIntent(id);
    const previous: Record<string, unknown> = {};
    if (params.amount !== undefined) {
      if (!["requires_payment_method", "requires_confirmation"].includes(pi.status)) {
        throw unexpectedState(
          `This PaymentIntent's amount could not be updated because it has a status of ${pi.status}.`,
        );
      }
      const amount = int(params, "amount", { required: true })!;
      assertAmount(amount, pi.currency);
      previous.amount = pi.amount;
      pi.amount = amount;
    }
    for (const key of ["description", "receipt_email", "statement_descriptor", "transfer_group"] as const) {
      if (params[key] !== undefined) {
        previous[key] = pi[key];
        pi[key] = str(params, key) ?? null;
      }
    }
    if (metadata(params) !== undefined) {
      previous.metadata = { ...pi.metadata };
      pi.metadata = params.metadata === "" ? {} : mergeMetadata(pi.metadata, params.metadata as FormObject);
    }
    if (Object.keys(previous).length > 0) this.emit("payment_intent.updated", pi, ctx, previous);
    return pi;
  }

  confirmPaymentIntent(id: string, params: FormObject, ctx: RequestContext): PaymentIntentObject {
    rejectUnknown(params, [
      "payment_method",
      "return_url",
      "off_session",
      "receipt_email",
      "setup_future_usage",
      "error_on_requires_action",
      "expand",
    ]);
    const pi = this.retrievePaymentIntent(id);
    if (this.state.intentSession[pi.id]) {
      throw unexpectedState(
        "This PaymentIntent was created by a Checkout Session and is confirmed through its hosted page.",
      );
    }
    if (!["requires_payment_method", "requires_confirmation", "requires_action"].includes(pi.status)) {
      throw unexpectedState(
        `You cannot confirm this PaymentIntent because it has a status of ${pi.status}. Only a PaymentIntent with one of the ` +
          "following statuses may be confirmed: requires_confirmation, requires_payment_method, requires_action.",
      );
    }
    const pmParam = str(params, "payment_method");
    if (pmParam) pi.payment_method = this.resolvePaymentMethod(pmParam, pi.customer).id;
    if (!pi.payment_method) {
      throw unexpectedState("You cannot confirm this PaymentIntent because it's missing a payment method.");
    }
    const receipt = str(params, "receipt_email");
    if (receipt) pi.receipt_email = receipt;
    const number = this.cardNumberOf(this.state.paymentMethods[pi.payment_method]);
    if (!number)
      throw unexpectedState(
        "This PaymentMethod is not one of the test cards the local fake accepts; attach a test card (docs.stripe.com/testing).",
      );
    this.confirmWithNumber(pi, number, ctx);
    return pi;
  }

  /** API confirmation: a decline answers 402 with the intent inside the error, as Stripe does. */
  private confirmWithNumber(pi: PaymentIntentObject, number: string, ctx: RequestContext): void {
    const pm = pi.payment_method ? this.state.paymentMethods[pi.payment_method] : undefined;
    const card: CardInput = {
      number,
      expMonth: pm?.card.exp_month ?? 12,
      expYear: pm?.card.exp_year ?? new Date(this.now() * 1000).getUTCFullYear() + 3,
      cvc: cardBrand(number) === "amex" ? "1234" : "123",
    };
    const result = this.attemptPayment(pi, card, ctx, pi.receipt_email);
    if (!result.ok) {
      throw new FakeStripeError(402, {
        ...result.error,
        payment_intent: clone(pi),
        payment_method: result.paymentMethod ? clone(result.paymentMethod) : undefined,
      });
    }
  }

  private resolvePaymentMethod(idOrToken: string, customer: string | null): PaymentMethodObject {
    const existing = this.state.paymentMethods[idOrToken];
    if (existing) return existing;
    const number = TEST_PAYMENT_METHOD_TOKENS[idOrToken];
    if (!number) throw invalidRequest(`No such PaymentMethod: '${idOrToken}'`, "resource_missing", "payment_method");
    const year = new Date(this.now() * 1000).getUTCFullYear() + 3;
    return this.newPaymentMethod({ number, expMonth: 12, expYear: year, cvc: "123" }, customer, null);
  }

  /** The test card behind a stored payment method (only brand and last 4 are kept), or null. */
  private cardNumberOf(pm: PaymentMethodObject | undefined): string | null {
    return pm ? (testCardNumber(pm.card.brand, pm.card.last4) ?? null) : null;
  }

  /** A payment method keeps brand, last 4 and expiry of the card; never the number. */
  private newPaymentMethod(card: CardInput, customer: string | null, email: string | null): PaymentMethodObject {
    const digits = normaliseCardNumber(card.number);
    const brand = cardBrand(digits);
    const last4 = digits.slice(-4);
    const pm: PaymentMethodObject = {
      id: randomId("pm_"),
      object: "payment_method",
      billing_details: { address: null, email, name: null, phone: null },
      card: {
        brand,
        checks: { address_line1_check: null, address_postal_code_check: null, cvc_check: "pass" },
        country: "US",
        exp_month: card.expMonth,
        exp_year: card.expYear < 100 ? 2000 + card.expYear : card.expYear,
        // stable per test card, derived from what is kept (Stripe's fingerprint identifies a card number)
        fingerprint: createHash("sha256").update(`${brand}:${last4}`).digest("base64url").slice(0, 16),
        funding: "credit",
        last4,
      },
      created: this.now(),
      customer,
      livemode: false,
      metadata: {},
      type: "card",
    };
    this.state.paymentMethods[pm.id] = pm;
    return pm;
  }

  /**
   * One payment attempt with a card: creates the payment method and the charge, moves the intent,
   * and emits charge.succeeded / charge.failed and the payment_intent event.
   */
  private attemptPayment(
    pi: PaymentIntentObject,
    card: CardInput,
    ctx: RequestContext,
    email: string | null,
  ): { ok: true } | { ok: false; error: StripeErrorBody; paymentMethod?: PaymentMethodObject } {
    const now = this.now();
    const outcome = evaluateCard(card, now);
    const attached = pi.payment_method ? this.state.paymentMethods[pi.payment_method] : undefined;
    const pm =
      attached && this.cardNumberOf(attached) === normaliseCardNumber(card.number)
        ? attached
        : this.newPaymentMethod(card, pi.customer, email);
    if (!outcome.ok && !outcome.declined) {
      const error: StripeErrorBody = {
        type: "card_error",
        code: outcome.code,
        message: outcome.message,
        doc_url: `https://stripe.com/docs/error-codes/${outcome.code.replace(/_/g, "-")}`,
      };
      return { ok: false, error, paymentMethod: pm };
    }
    const manual = pi.capture_method === "manual";
    const chargeId = randomId("ch_");
    const charge: ChargeObject = {
      id: chargeId,
      object: "charge",
      amount: pi.amount,
      amount_captured: 0,
      amount_refunded: 0,
      balance_transaction: null,
      billing_details: { address: null, email, name: null, phone: null },
      captured: false,
      created: now,
      currency: pi.currency,
      customer: pi.customer,
      description: pi.description,
      failure_code: null,
      failure_message: null,
      livemode: false,
      metadata: { ...pi.metadata },
      outcome: {
        network_status: "approved_by_network",
        reason: null,
        risk_level: "normal",
        seller_message: "Payment complete.",
        type: "authorized",
      },
      paid: true,
      payment_intent: pi.id,
      payment_method: pm.id,
      payment_method_details: {
        type: "card",
        card: {
          brand: pm.card.brand,
          country: pm.card.country,
          exp_month: pm.card.exp_month,
          exp_year: pm.card.exp_year,
          fingerprint: pm.card.fingerprint,
          funding: pm.card.funding,
          last4: pm.card.last4,
          network: pm.card.brand,
          ...(manual ? { capture_before: now + AUTHORIZATION_VALIDITY_SECONDS } : {}),
        },
      },
      receipt_email: pi.receipt_email,
      refunded: false,
      refunds: { object: "list", data: [], has_more: false, total_count: 0, url: `/v1/charges/${chargeId}/refunds` },
      status: "succeeded",
      transfer_group: pi.transfer_group,
    };
    this.state.charges[chargeId] = charge;
    pi.latest_charge = chargeId;

    if (!outcome.ok) {
      charge.status = "failed";
      charge.paid = false;
      charge.failure_code = outcome.code;
      charge.failure_message = outcome.message;
      charge.outcome = {
        network_status: "declined_by_network",
        reason: outcome.declineCode ?? null,
        risk_level: "normal",
        seller_message: "The bank did not return any further details with this decline.",
        type: "issuer_declined",
      };
      delete charge.payment_method_details.card.capture_before;
      const error: StripeErrorBody = {
        type: "card_error",
        code: outcome.code,
        ...(outcome.declineCode ? { decline_code: outcome.declineCode } : {}),
        message: outcome.message,
        doc_url: `https://stripe.com/docs/error-codes/${outcome.code.replace(/_/g, "-")}`,
        charge: chargeId,
      };
      pi.status = "requires_payment_method";
      pi.payment_method = null;
      pi.last_payment_error = {
        type: "card_error",
        code: outcome.code,
        ...(outcome.declineCode ? { decline_code: outcome.declineCode } : {}),
        doc_url: error.doc_url!,
        message: outcome.message,
        charge: chargeId,
        payment_method: clone(pm),
      };
      this.emit("charge.failed", charge, ctx);
      this.emit("payment_intent.payment_failed", pi, ctx);
      return { ok: false, error, paymentMethod: pm };
    }

    pi.payment_method = pm.id;
    pi.last_payment_error = null;
    if (manual) {
      pi.status = "requires_capture";
      pi.amount_capturable = pi.amount;
      this.emit("charge.succeeded", charge, ctx);
      this.emit("payment_intent.amount_capturable_updated", pi, ctx, {
        amount_capturable: 0,
        status: "requires_payment_method",
      });
    } else {
      charge.captured = true;
      charge.amount_captured = pi.amount;
      charge.balance_transaction = randomId("txn_");
      pi.status = "succeeded";
      pi.amount_received = pi.amount;
      this.credit(pi.currency, pi.amount);
      this.emit("charge.succeeded", charge, ctx);
      this.emit("payment_intent.succeeded", pi, ctx);
    }
    return { ok: true };
  }

  capturePaymentIntent(id: string, params: FormObject, ctx: RequestContext): PaymentIntentObject {
    rejectUnknown(params, [
      "amount_to_capture",
      "metadata",
      "statement_descriptor",
      "statement_descriptor_suffix",
      "final_capture",
      "expand",
    ]);
    const pi = this.retrievePaymentIntent(id);
    if (pi.status === "canceled" && pi.cancellation_reason === "automatic") {
      throw invalidRequest(
        "This PaymentIntent could not be captured because its authorization expired (capture_before has passed) and the funds were released.",
        "charge_expired_for_capture",
      );
    }
    if (pi.status !== "requires_capture") {
      throw unexpectedState(
        `This PaymentIntent could not be captured because it has a status of ${pi.status}. ` +
          "Only a PaymentIntent with one of the following statuses may be captured: requires_capture.",
      );
    }
    const charge = this.state.charges[pi.latest_charge!];
    const amount = int(params, "amount_to_capture", { min: 1 }) ?? pi.amount_capturable;
    if (amount > pi.amount_capturable) {
      throw invalidRequest(
        `The amount to capture (${amount}) is greater than the amount capturable (${pi.amount_capturable}).`,
        "amount_too_large",
        "amount_to_capture",
      );
    }
    const md = metadata(params);
    if (md !== undefined) pi.metadata = mergeMetadata(pi.metadata, params.metadata as FormObject);
    charge.captured = true;
    charge.amount_captured = amount;
    charge.balance_transaction = randomId("txn_");
    pi.status = "succeeded";
    pi.amount_received = amount;
    pi.amount_capturable = 0;
    this.credit(pi.currency, amount);
    this.emit("charge.captured", charge, ctx, { amount_captured: 0, captured: false });
    this.emit("payment_intent.succeeded", pi, ctx);
    return pi;
  }

  cancelPaymentIntent(id: string, params: FormObject, ctx: RequestContext): PaymentIntentObject {
    rejectUnknown(params, ["cancellation_reason", "expand"]);
    const pi = this.retrievePaymentIntent(id);
    const reason =
      oneOf(params, "cancellation_reason", [
        "duplicate",
        "fraudulent",
        "requested_by_customer",
        "abandoned",
      ] as const) ?? null;
    const cancelable = [
      "requires_payment_method",
      "requires_capture",
      "requires_confirmation",
      "requires_action",
      "processing",
    ];
    if (!cancelable.includes(pi.status)) {
      throw unexpectedState(
        `You cannot cancel this PaymentIntent because it has a status of ${pi.status}. Only a PaymentIntent with one of the ` +
          `following statuses may be canceled: ${cancelable.join(", ")}.`,
      );
    }
    const sessionId = this.state.intentSession[pi.id];
    if (sessionId && this.state.checkoutSessions[sessionId]?.status === "open") {
      throw unexpectedState(
        `This PaymentIntent belongs to the open Checkout Session ${sessionId}; expire the Checkout Session instead.`,
      );
    }
    if (pi.latest_charge) {
      const charge = this.state.charges[pi.latest_charge];
      if (charge && charge.status === "succeeded" && !charge.captured) {
        // The held amount is released: Stripe shows the uncaptured charge as refunded.
        charge.refunded = true;
        charge.amount_refunded = charge.amount;
      }
    }
    pi.status = "canceled";
    pi.cancellation_reason = reason;
    pi.canceled_at = this.now();
    pi.amount_capturable = 0;
    this.emit("payment_intent.canceled", pi, ctx);
    return pi;
  }

  retrieveCharge(id: string): ChargeObject {
    const c = this.state.charges[id];
    if (!c) throw resourceMissing("charge", id, "charge");
    return c;
  }

  retrievePaymentMethod(id: string): PaymentMethodObject {
    const pm = this.state.paymentMethods[id];
    if (!pm) throw resourceMissing("PaymentMethod", id, "payment_method");
    return pm;
  }

  // ------------------------------------------------------------------ refunds

  createRefund(params: FormObject, ctx: RequestContext): RefundObject {
    rejectUnknown(params, ["payment_intent", "charge", "amount", "reason", "metadata", "instructions_email", "expand"]);
    const piId = str(params, "payment_intent");
    const chargeParam = str(params, "charge");
    if (!piId && !chargeParam) throw missingParam("payment_intent");
    if (piId && chargeParam) {
      throw invalidRequest(
        "You may only specify one of these parameters: charge, payment_intent.",
        undefined,
        "charge",
      );
    }
    let pi: PaymentIntentObject;
    let charge: ChargeObject;
    if (piId) {
      const found = this.state.paymentIntents[piId];
      if (!found) throw invalidRequest(`No such payment_intent: '${piId}'`, "resource_missing", "payment_intent");
      pi = found;
      if (pi.status === "requires_capture") {
        throw unexpectedState(
          "This PaymentIntent has not been captured; cancel it to release the authorisation instead of refunding.",
        );
      }
      if (pi.status !== "succeeded" || !pi.latest_charge) {
        throw invalidRequest(
          `This PaymentIntent does not have a successful charge to refund (status ${pi.status}).`,
          "charge_not_refundable",
          "payment_intent",
        );
      }
      charge = this.state.charges[pi.latest_charge];
    } else {
      const found = this.state.charges[chargeParam!];
      if (!found) throw invalidRequest(`No such charge: '${chargeParam}'`, "resource_missing", "charge");
      charge = found;
      pi = this.state.paymentIntents[charge.payment_intent];
      if (!charge.captured || charge.status !== "succeeded") {
        throw invalidRequest(
          `Charge ${charge.id} has not been captured and cannot be refunded.`,
          "charge_not_refundable",
          "charge",
        );
      }
    }
    const refundable = charge.amount_captured - charge.amount_refunded;
    if (refundable <= 0) {
      throw invalidRequest(`Charge ${charge.id} has already been refunded.`, "charge_already_refunded");
    }
    const amount = int(params, "amount", { min: 1 }) ?? refundable;
    if (amount > refundable) {
      throw invalidRequest(
        `Refund amount (${amount}) is greater than unrefunded amount on charge (${refundable})`,
        "amount_too_large",
        "amount",
      );
    }
    const refund: RefundObject = {
      id: randomId("re_"),
      object: "refund",
      amount,
      balance_transaction: randomId("txn_"),
      charge: charge.id,
      created: this.now(),
      currency: charge.currency,
      metadata: metadata(params) ?? {},
      payment_intent: pi.id,
      reason: oneOf(params, "reason", ["duplicate", "fraudulent", "requested_by_customer"] as const) ?? null,
      status: "succeeded",
    };
    this.state.refunds[refund.id] = refund;
    const previousRefunded = charge.amount_refunded;
    charge.amount_refunded += amount;
    charge.refunded = charge.amount_refunded >= charge.amount_captured;
    charge.refunds.data.unshift(clone(refund));
    charge.refunds.total_count = charge.refunds.data.length;
    this.credit(charge.currency, -amount);
    this.emit("refund.created", refund, ctx);
    this.emit("charge.refunded", charge, ctx, { amount_refunded: previousRefunded });
    return refund;
  }

  retrieveRefund(id: string): RefundObject {
    const r = this.state.refunds[id];
    if (!r) throw resourceMissing("refund", id, "refund");
    return r;
  }

  // ------------------------------------------------------------------ connect: accounts, transfers, balance

  createAccount(params: FormObject, ctx: RequestContext): AccountObject {
    rejectUnknown(params, [
      "type",
      "country",
      "email",
      "business_type",
      "capabilities",
      "metadata",
      "business_profile",
      "controller",
      "default_currency",
      "tos_acceptance",
      "individual",
      "company",
      "settings",
      "expand",
    ]);
    const type = oneOf(params, "type", ["express", "custom", "standard"] as const);
    const controller = obj(params, "controller");
    if (!type && !controller) throw missingParam("type");
    const caps = obj(params, "capabilities") ?? {};
    const capabilities: AccountObject["capabilities"] = {};
    for (const [name, value] of Object.entries(caps)) {
      if (typeof value !== "object" || Array.isArray(value)) {
        throw invalidRequest(
          `Invalid object: capabilities[${name}]`,
          "parameter_invalid_object",
          `capabilities[${name}]`,
        );
      }
      // Simplification: a requested capability is active at once (no onboarding in the fake).
      capabilities[name] = value.requested === "true" ? "active" : "inactive";
    }
    const acct: AccountObject = {
      id: randomId("acct_", 16),
      object: "account",
      business_type:
        oneOf(params, "business_type", ["individual", "company", "non_profit", "government_entity"] as const) ?? null,
      capabilities,
      charges_enabled: capabilities.card_payments === "active",
      country: (str(params, "country") ?? "US").toUpperCase(),
      created: this.now(),
      default_currency: currency(params, "default_currency", { required: false }) ?? "usd",
      details_submitted: true,
      email: str(params, "email") ?? null,
      metadata: metadata(params) ?? {},
      payouts_enabled: true,
      type: type ?? "custom",
    };
    this.state.accounts[acct.id] = acct;
    this.emit("account.updated", acct, ctx);
    return acct;
  }

  retrieveAccount(id: string): AccountObject {
    const a = this.state.accounts[id];
    if (!a) throw invalidRequest(`No such account: '${id}'`, "account_invalid", "account", 404);
    return a;
  }

  createTransfer(params: FormObject, ctx: RequestContext): TransferObject {
    rejectUnknown(params, [
      "amount",
      "currency",
      "destination",
      "description",
      "metadata",
      "transfer_group",
      "source_transaction",
      "expand",
    ]);
    const cur = currency(params)!;
    const amount = int(params, "amount", { required: true, min: 1 })!;
    const destination = str(params, "destination", { required: true })!;
    const acct = this.state.accounts[destination];
    if (!acct) throw invalidRequest(`No such destination: '${destination}'`, "resource_missing", "destination");
    if (acct.capabilities.transfers !== "active") {
      throw invalidRequest(
        "Your destination account needs to have at least one of the following capabilities enabled: transfers.",
        "insufficient_capabilities_for_transfer",
        "destination",
      );
    }
    const source = str(params, "source_transaction") ?? null;
    if (source) {
      const charge = this.state.charges[source];
      if (!charge) throw invalidRequest(`No such charge: '${source}'`, "resource_missing", "source_transaction");
      if (charge.currency !== cur) {
        throw invalidRequest(
          "The currency of source_transaction's balance transaction must match the transfer currency.",
          undefined,
          "currency",
        );
      }
      const alreadyTransferred = Object.values(this.state.transfers)
        .filter((t) => t.source_transaction === source)
        .reduce((sum, t) => sum + t.amount, 0);
      const left = charge.amount_captured - charge.amount_refunded - alreadyTransferred;
      if (amount > left) {
        throw invalidRequest(
          `Insufficient funds in the source transaction ${source}: ${left} ${cur} left to transfer.`,
          "balance_insufficient",
          "amount",
        );
      }
    } else if ((this.state.balance[cur] ?? 0) < amount) {
      throw invalidRequest(
        "You have insufficient available funds in your Stripe account.",
        "balance_insufficient",
        "amount",
      );
    }
    const tr: TransferObject = {
      id: randomId("tr_"),
      object: "transfer",
      amount,
      amount_reversed: 0,
      balance_transaction: randomId("txn_"),
      created: this.now(),
      currency: cur,
      description: str(params, "description") ?? null,
      destination,
      destination_payment: randomId("py_"),
      livemode: false,
      metadata: metadata(params) ?? {},
      reversals: { object: "list", data: [], has_more: false, total_count: 0, url: "" },
      reversed: false,
      source_transaction: source,
      source_type: "card",
      transfer_group: str(params, "transfer_group") ?? null,
    };
    tr.reversals.url = `/v1/transfers/${tr.id}/reversals`;
    this.state.transfers[tr.id] = tr;
    this.credit(cur, -amount);
    this.emit("transfer.created", tr, ctx);
    return tr;
  }

  retrieveTransfer(id: string): TransferObject {
    const t = this.state.transfers[id];
    if (!t) throw resourceMissing("transfer", id);
    return t;
  }

  balance(): unknown {
    const entries = Object.entries(this.state.balance);
    if (entries.length === 0) entries.push(["usd", 0]);
    return {
      object: "balance",
      available: entries.map(([cur, amount]) => ({ amount, currency: cur, source_types: { card: amount } })),
      livemode: false,
      pending: entries.map(([cur]) => ({ amount: 0, currency: cur, source_types: { card: 0 } })),
    };
  }

  private credit(cur: string, amount: number): void {
    this.state.balance[cur] = (this.state.balance[cur] ?? 0) + amount;
  }
}

/** Stripe merges metadata on update; a key set to "" is removed. */
function mergeMetadata(current: Metadata, update: FormObject): Metadata {
  const out: Metadata = { ...current };
  for (const [k, v] of Object.entries(update)) {
    if (typeof v !== "string") continue;
    if (v === "") delete out[k];
    else out[k] = v;
  }
  return out;
}

/** A checkout session's line items (price_data only), their one currency and their total. */
function lineItemsFrom(rawItems: FormValue[]): { items: LineItemObject[]; currency: string; total: number } {
  let cur: string | null = null;
  let total = 0;
  const items: LineItemObject[] = rawItems.map((raw, i) => {
    const p = `line_items[${i}]`;
    if (typeof raw !== "object" || Array.isArray(raw))
      throw invalidRequest(`Invalid object: ${p}`, "parameter_invalid_object", p);
    rejectUnknown(raw, ["price_data", "quantity", "price", "adjustable_quantity"], p);
    if (raw.price !== undefined) {
      throw invalidRequest(
        `No such price: '${String(raw.price)}' (the local fake supports only price_data).`,
        "resource_missing",
        `${p}[price]`,
      );
    }
    const pd = obj(raw, "price_data", `${p}[price_data]`);
    if (!pd) throw missingParam(`${p}[price_data]`);
    rejectUnknown(pd, ["currency", "unit_amount", "product_data", "product", "tax_behavior"], `${p}[price_data]`);
    const itemCur = currency(pd, "currency", { required: true, param: `${p}[price_data][currency]` })!;
    const unit = int(pd, "unit_amount", { required: true, min: 0, param: `${p}[price_data][unit_amount]` })!;
    const quantity = int(raw, "quantity", { required: true, min: 1, param: `${p}[quantity]` })!;
    const productData = obj(pd, "product_data", `${p}[price_data][product_data]`);
    if (!productData) throw missingParam(`${p}[price_data][product_data]`);
    rejectUnknown(
      productData,
      ["name", "description", "metadata", "images", "tax_code"],
      `${p}[price_data][product_data]`,
    );
    const name = str(productData, "name", { required: true, param: `${p}[price_data][product_data][name]` })!;
    if (cur && cur !== itemCur) {
      throw invalidRequest(
        "All line items must use the same currency.",
        "parameter_invalid_string",
        `${p}[price_data][currency]`,
      );
    }
    cur = itemCur;
    total += unit * quantity;
    return {
      id: randomId("li_"),
      object: "item",
      amount_discount: 0,
      amount_subtotal: unit * quantity,
      amount_tax: 0,
      amount_total: unit * quantity,
      currency: itemCur,
      description: name,
      price: {
        id: randomId("price_"),
        object: "price",
        active: false,
        currency: itemCur,
        product: randomId("prod_", 14),
        type: "one_time",
        unit_amount: unit,
      },
      quantity,
    };
  });
  return { items, currency: cur as unknown as string, total };
}

/** The payment intent a checkout session will create, from its payment_intent_data. */
function sessionIntentDataFrom(params: FormObject): SessionIntentData {
  const pid = obj(params, "payment_intent_data") ?? {};
  rejectUnknown(
    pid,
    [
      "capture_method",
      "metadata",
      "description",
      "receipt_email",
      "statement_descriptor",
      "statement_descriptor_suffix",
      "transfer_group",
      "setup_future_usage",
    ],
    "payment_intent_data",
  );
  return {
    capture_method:
      oneOf(
        pid,
        "capture_method",
        ["automatic", "automatic_async", "manual"] as const,
        "payment_intent_data[capture_method]",
      ) ?? "automatic_async",
    metadata: metadata(pid, "metadata", "payment_intent_data") ?? {},
    description: str(pid, "description") ?? null,
    receipt_email: str(pid, "receipt_email") ?? null,
    statement_descriptor: str(pid, "statement_descriptor") ?? null,
    statement_descriptor_suffix: str(pid, "statement_descriptor_suffix") ?? null,
    transfer_group: str(pid, "transfer_group") ?? null,
    setup_future_usage: oneOf(pid, "setup_future_usage", ["on_session", "off_session"] as const) ?? null,
  };
}

/** When a checkout session expires: 24 hours, or the requested time within Stripe's bounds. */
function sessionExpiry(params: FormObject, now: number): number {
  let expiresAt = now + SESSION_DEFAULT_LIFETIME_SECONDS;
  const requestedExpiry = int(params, "expires_at");
  if (requestedExpiry !== undefined) {
    // Stripe: expires_at must be 30 minutes to 24 hours after creation.
    if (requestedExpiry < now + 30 * 60 || requestedExpiry > now + SESSION_DEFAULT_LIFETIME_SECONDS) {
      throw invalidRequest(
        "The `expires_at` timestamp must be between 30 minutes and 24 hours from Checkout Session creation.",
        "parameter_invalid_integer",
        "expires_at",
      );
    }
    expiresAt = requestedExpiry;
  }
  return expiresAt;
}
