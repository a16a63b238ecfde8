import { useState } from "react";
import { formatCents, parseCents } from "../../../../shared/domain/money";
import { pricingUpdateSchema } from "../../../../shared/schemas/queue";
import { buttonClass, Card, inputClass, Notice } from "../../../components/ui/form";
import { useAdminPricing, useUpdatePricing, type AdminPricing } from "../api/admin-pricing";

interface TierDraft {
  id: string;
  label: string;
  description: string;
  price: string;
  deadlineHours: string;
  active: boolean;
}

const toDraft = (p: AdminPricing) => ({
  deskSharePercent: (p.deskShareBasisPoints / 100).toString(),
  widenAfterMinutes: String(p.widenAfterMinutes),
  firstWaveSize: String(p.firstWaveSize),
  closeAnsweredAfterDays: String(p.closeAnsweredAfterDays),
  tiers: p.tiers.map<TierDraft>((t) => ({
    id: t.id,
    label: t.label,
    description: t.description ?? "",
    price: (t.priceCents / 100).toFixed(2),
    deadlineHours: String(t.deadlineMinutes / 60),
    active: t.active,
  })),
});

/** "20" or "12.5" (percent, at most two decimals) → basis points as an integer, or NaN. */
function percentToBp(s: string): number {
  const c = parseCents(s);
  return c === null ? Number.NaN : c;
}

/** One tier: its code (fixed once saved), name, price, answer deadline, whether it is offered. */
function TierFields({
  tier,
  currency,
  codeLocked,
  onChange,
}: {
  tier: TierDraft;
  currency: string;
  codeLocked: boolean;
  onChange: (patch: Partial<TierDraft>) => void;
}) {
  return (
    <fieldset className="grid gap-3 rounded-lg border border-ink-200 p-3 sm:grid-cols-6">
      <legend className="px-1 text-sm font-semibold text-ink-700">{tier.label || "New tier"}</legend>
      <label className="sm:col-span-1">
        <span className="mb-1 block text-sm font-semibold">Code</span>
        <input
          className={inputClass}
          value={tier.id}
          onChange={(e) => onChange({ id: e.target.value })}
          disabled={codeLocked}
        />
      </label>
      <label className="sm:col-span-2">
        <span className="mb-1 block text-sm font-semibold">Name</span>
        <input className={inputClass} value={tier.label} onChange={(e) => onChange({ label: e.target.value })} />
      </label>
      <label>
        <span className="mb-1 block text-sm font-semibold">Price ({currency.toUpperCase()})</span>
        <input
          className={inputClass}
          inputMode="decimal"
          value={tier.price}
          onChange={(e) => onChange({ price: e.target.value })}
        />
        <span className="mt-1 block text-xs text-ink-500">
          {parseCents(tier.price) !== null
            ? formatCents(parseCents(tier.price)!, currency.toUpperCase())
            : "e.g. 49.00"}
        </span>
      </label>
      <label>
        <span className="mb-1 block text-sm font-semibold">Answer within (h)</span>
        <input
          className={inputClass}
          inputMode="decimal"
          value={tier.deadlineHours}
          onChange={(e) => onChange({ deadlineHours: e.target.value })}
        />
      </label>
      <label className="flex items-center gap-2 self-end pb-2">
        <input
          type="checkbox"
          className="h-5 w-5 accent-kiln-500"
          checked={tier.active}
          onChange={(e) => onChange({ active: e.target.checked })}
        />
        <span className="text-sm font-semibold">Offered</span>
      </label>
      <label className="sm:col-span-6">
        <span className="mb-1 block text-sm font-semibold">Description</span>
        <input
          className={inputClass}
          value={tier.description}
          onChange={(e) => onChange({ description: e.target.value })}
        />
      </label>
    </fieldset>
  );
}

/** The admin's price list: tiers (price, answer deadline), the desk's share and the queue's timings. */
export function PricingEditor() {
  const q = useAdminPricing();
  const save = useUpdatePricing();
  const [d, setD] = useState<ReturnType<typeof toDraft> | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  // the draft starts from the first price list loaded, set while rendering (no extra effect pass)
  if (q.data && !d) setD(toDraft(q.data));
  if (q.isError)
    return (
      <Notice tone="error" title="Pricing is not available">
        {q.error.message}
      </Notice>
    );
  if (!q.data || !d)
    return <div className="h-40 animate-pulse rounded-xl bg-ink-100" aria-busy="true" aria-label="Loading pricing" />;
  const currency = q.data.currency;

  const setTier = (i: number, patch: Partial<TierDraft>) =>
    setD({ ...d, tiers: d.tiers.map((t, j) => (j === i ? { ...t, ...patch } : t)) });
  const submit = () => {
    setProblem(null);
    const input = {
      currency,
      deskShareBasisPoints: percentToBp(d.deskSharePercent),
      firstWaveSize: Number(d.firstWaveSize),
      widenAfterMinutes: Number(d.widenAfterMinutes),
      closeAnsweredAfterDays: Number(d.closeAnsweredAfterDays),
      tiers: d.tiers.map((t) => ({
        id: t.id.trim(),
        label: t.label,
        description: t.description || null,
        priceCents: parseCents(t.price) ?? Number.NaN,
        deadlineMinutes: Math.round(Number(t.deadlineHours) * 60),
        active: t.active,
      })),
    };
    const parsed = pricingUpdateSchema.safeParse(input);
    if (!parsed.success) {
      const i = parsed.error.issues[0];
      setProblem(`${i.path.join(" › ")}: ${i.message}`);
      return;
    }
    save.mutate(input, { onSuccess: (p) => setD(toDraft(p)) });
  };

  const num = (label: string, value: string, onChange: (v: string) => void, hint: string) => (
    <label className="block">
      <span className="mb-1 block text-sm font-semibold text-ink-800">{label}</span>
      <input className={inputClass} inputMode="decimal" value={value} onChange={(e) => onChange(e.target.value)} />
      <span className="mt-1 block text-sm text-ink-500">{hint}</span>
    </label>
  );

  return (
    <form
      className="space-y-5"
      onSubmit={(e) => {
        e.preventDefault();
        submit();
      }}
    >
      <Card title="The desk">
        <div className="grid gap-4 sm:grid-cols-2 lg:grid-cols-4">
          {num(
            "Desk's share (%)",
            d.deskSharePercent,
            (v) => setD({ ...d, deskSharePercent: v }),
            "Of each charged case; the expert gets the rest.",
          )}
          {num(
            "Offer first to (experts)",
            d.firstWaveSize,
            (v) => setD({ ...d, firstWaveSize: v }),
            "The best-matching available experts.",
          )}
          {num(
            "Offer to everyone after (min)",
            d.widenAfterMinutes,
            (v) => setD({ ...d, widenAfterMinutes: v }),
            "When nobody has claimed the case.",
          )}
          {num(
            "Close unconfirmed after (days)",
            d.closeAnsweredAfterDays,
            (v) => setD({ ...d, closeAnsweredAfterDays: v }),
            "After the answer.",
          )}
        </div>
      </Card>
      <Card
        title="Tiers"
        actions={
          <button
            type="button"
            className={buttonClass.secondary}
            onClick={() =>
              setD({
                ...d,
                tiers: [
                  ...d.tiers,
                  { id: "", label: "", description: "", price: "", deadlineHours: "24", active: true },
                ],
              })
            }
          >
            Add a tier
          </button>
        }
      >
        <div className="space-y-4">
          {d.tiers.map((t, i) => (
            <TierFields
              key={i}
              tier={t}
              currency={currency}
              codeLocked={q.data.tiers.some((x) => x.id === t.id) && t.id !== ""}
              onChange={(patch) => setTier(i, patch)}
            />
          ))}
        </div>
      </Card>
      {problem ? (
        <Notice tone="error" title="Check the prices">
          {problem}
        </Notice>
      ) : null}
      {save.error ? (
        <Notice tone="error" title="Not saved">
          {save.error.message}
        </Notice>
      ) : null}
      {save.isSuccess ? <Notice tone="success">Saved. New prices apply to cases submitted from now on.</Notice> : null}
      <button type="submit" className={buttonClass.primary} disabled={save.isPending}>
        {save.isPending ? "Saving…" : "Save the prices"}
      </button>
    </form>
  );
}
