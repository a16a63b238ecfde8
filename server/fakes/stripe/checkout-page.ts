/**
 * The fake's hosted checkout page: a deliberately plain test page (no product styling), so nobody
 * mistakes it for a real payment form.
 */
import { groupedCardNumber, TEST_CARDS } from "./cards";
import type { CheckoutSessionObject, LineItemObject } from "./types";

export function escapeHtml(value: string): string {
  return value
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&#39;");
}

/** Format an amount in the currency's smallest unit (ISO 4217 minor units, via Intl). */
export function formatAmount(amount: number, currency: string): string {
  try {
    const fmt = new Intl.NumberFormat("en-US", { style: "currency", currency: currency.toUpperCase() });
    const digits = fmt.resolvedOptions().maximumFractionDigits ?? 2;
    return fmt.format(amount / 10 ** digits);
  } catch {
    return `${amount} ${currency.toUpperCase()} (minor units)`;
  }
}

const STYLE = `
  body { font-family: system-ui, sans-serif; background: #f3f3f0; color: #1d1d1d; margin: 0; }
  main { max-width: 26rem; margin: 2rem auto; background: #fff; border: 2px dashed #8a8a80; padding: 1.5rem; }
  h1 { font-size: 1.3rem; margin: 0 0 .25rem; }
  .banner { background: #fff4c2; border: 1px solid #c9b458; padding: .5rem .75rem; font-size: .85rem; margin-bottom: 1rem; }
  .amount { font-size: 1.6rem; font-weight: 700; margin: .5rem 0 1rem; }
  table { width: 100%; border-collapse: collapse; font-size: .9rem; margin-bottom: 1rem; }
  td { padding: .2rem 0; } td.num { text-align: right; }
  label { display: block; font-weight: 600; margin-top: .75rem; }
  input { width: 100%; box-sizing: border-box; font-size: 1rem; padding: .5rem; border: 1px solid #777; margin-top: .25rem; }
  .row { display: flex; gap: .75rem; } .row > div { flex: 1; }
  button { margin-top: 1.25rem; width: 100%; font-size: 1.05rem; padding: .65rem; background: #1d1d1d; color: #fff; border: 0; cursor: pointer; }
  .error { background: #fde2e0; border: 1px solid #b3261e; color: #7a1610; padding: .5rem .75rem; margin-top: 1rem; }
  .hint { font-size: .8rem; color: #555; margin-top: 1.25rem; }
  .hint code { background: #eee; padding: 0 .2rem; }
  .hint ul { padding-left: 1.1rem; margin: .25rem 0; }
  a { color: #1d4ed8; }
`;

function layout(title: string, body: string): string {
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="robots" content="noindex">
<title>${escapeHtml(title)}</title>
<style>${STYLE}</style>
</head>
<body>
<main>
<p class="banner">Local payment fake for development and tests. No real card is charged.</p>
${body}
</main>
</body>
</html>`;
}

export interface PageState {
  error?: string;
  cardNumber?: string;
  expiry?: string;
}

export function renderCheckoutPage(
  session: CheckoutSessionObject,
  items: LineItemObject[],
  state: PageState = {},
): string {
  const total = formatAmount(session.amount_total, session.currency);
  if (session.status === "complete") {
    return layout(
      "Test checkout",
      `<h1>Test checkout</h1>
<p>This checkout has already been paid (${escapeHtml(total)}).</p>
<p><a href="${escapeHtml(successUrl(session))}">Return to the site</a></p>`,
    );
  }
  if (session.status === "expired") {
    return layout(
      "Test checkout",
      `<h1>Test checkout</h1>
<p>This checkout has expired. Nothing was charged.</p>
${session.cancel_url ? `<p><a href="${escapeHtml(session.cancel_url)}">Return to the site</a></p>` : ""}`,
    );
  }
  const rows = items
    .map(
      (i) =>
        `<tr><td>${escapeHtml(i.description)}${i.quantity > 1 ? ` × ${i.quantity}` : ""}</td><td class="num">${escapeHtml(
          formatAmount(i.amount_total, i.currency),
        )}</td></tr>`,
    )
    .join("\n");
  const error = state.error ? `<p class="error" role="alert" id="payment-error">${escapeHtml(state.error)}</p>` : "";
  return layout(
    "Test checkout",
    `<h1>Test checkout</h1>
<p class="amount" data-testid="amount">${escapeHtml(total)}</p>
<table aria-label="Items">${rows}</table>
<form method="post" action="/checkout/${encodeURIComponent(session.id)}/pay" novalidate>
  <label for="card-number">Card number</label>
  <input id="card-number" name="card_number" inputmode="numeric" autocomplete="cc-number" required
         value="${escapeHtml(state.cardNumber ?? "")}"${state.error ? ' aria-describedby="payment-error"' : ""}>
  <div class="row">
    <div>
      <label for="card-expiry">Expiry (MM / YY)</label>
      <input id="card-expiry" name="expiry" placeholder="MM / YY" autocomplete="cc-exp" required value="${escapeHtml(state.expiry ?? "")}">
    </div>
    <div>
      <label for="card-cvc">CVC</label>
      <input id="card-cvc" name="cvc" inputmode="numeric" autocomplete="cc-csc" required>
    </div>
  </div>
  <button type="submit">Pay</button>
</form>
${error}
${session.cancel_url ? `<p><a href="${escapeHtml(session.cancel_url)}">Cancel and return to the site</a></p>` : ""}
<div class="hint" id="test-cards">
  <p>Only these test cards are accepted (any other number is declined). Use any future expiry date and any 3-digit CVC.</p>
  <ul>
${TEST_CARDS.map((c) => `    <li><code>${groupedCardNumber(c.number)}</code> ${escapeHtml(c.brand)}: ${escapeHtml(c.outcome)}</li>`).join("\n")}
  </ul>
</div>`,
  );
}

export function successUrl(session: CheckoutSessionObject): string {
  return session.success_url.replace(/\{CHECKOUT_SESSION_ID\}/g, session.id);
}

export function renderNotFound(): string {
  return layout("Test checkout", `<h1>Test checkout</h1><p>No such checkout.</p>`);
}
