import { useExpertRecord } from "../api/get-expert-record";

/** An expert's casebook record: published entries, confirmed fixes, helpful votes, readers. */
export function ExpertCasebookRecordCard({ expertId }: { expertId: string }) {
  const q = useExpertRecord(expertId);
  if (q.isPending)
    return (
      <div
        className="h-20 animate-pulse rounded-xl bg-ink-100"
        aria-busy="true"
        aria-label="Loading the casebook record"
      />
    );
  if (q.isError) return null;
  const r = q.data;
  const stat = (n: number, label: string) => (
    <div className="rounded-lg bg-ink-50 px-3 py-2">
      <dd className="text-xl font-bold tabular-nums text-ink-900">{n.toLocaleString("en-US")}</dd>
      <dt className="text-xs text-ink-600">{label}</dt>
    </div>
  );
  return (
    <section aria-label="Casebook record" className="rounded-xl border border-ink-200 bg-white p-4 shadow-sm">
      <h2 className="text-lg font-bold">Casebook record</h2>
      <dl className="mt-3 grid grid-cols-2 gap-2 sm:grid-cols-4">
        {stat(r.entries, "entries published")}
        {stat(r.confirmed, "fixes confirmed")}
        {stat(r.helpfulVotes, "helpful votes")}
        {stat(r.views, "readers")}
      </dl>
    </section>
  );
}
