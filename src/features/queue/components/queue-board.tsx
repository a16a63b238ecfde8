import { useState } from "react";
import { useNavigate } from "react-router-dom";
import { formatMoney, formatTimeLeft } from "../../../../shared/format";
import { ApiError } from "../../../lib/api-client";
import { buttonClass, Card, Notice } from "../../../components/ui/form";
import { useQueue } from "../api/get-queue";
import { useClaimCase } from "../api/queue-actions";
import { queuePages } from "../api/paths";
import type { QueueItem } from "../api/types";
import { AvailabilityToggle } from "./availability-toggle";

const systemNames: Record<string, string> = {
  ignition: "Ignition",
  fuel: "Fuel delivery",
  "starting-charging": "Starting / charging",
  sensors: "Sensors",
  networks: "Networks / modules",
  "engine-mechanical": "Engine mechanical",
  other: "Other",
};

const money = (c: number | null, cur: string) => (c == null ? "—" : formatMoney(c, cur));

function left(iso: string | null): { text: string; urgent: boolean } {
  const t = formatTimeLeft(iso);
  if (!iso) return { text: "", urgent: false };
  const urgent = t.overdue || new Date(iso).getTime() - Date.now() < 60 * 60_000;
  return { text: t.overdue ? t.text : `due ${t.text}`, urgent };
}

/**
 * The queue. An expert sees their open cases, the offers made to them, then the whole queue by
 * deadline; an admin (`watching`) sees every case waiting for an expert, with its price, and opens it.
 */
export function QueueBoard({ canClaim, watching = false }: { canClaim: boolean; watching?: boolean }) {
  const q = useQueue();
  if (q.isPending)
    return <div className="h-40 animate-pulse rounded-xl bg-ink-100" aria-busy="true" aria-label="Loading the queue" />;
  if (q.isError) {
    return (
      <Notice tone="error" title="The queue is not available">
        {q.error.message}
      </Notice>
    );
  }
  const v = q.data;
  return (
    <div className="space-y-6">
      {v.me ? (
        <Card>
          <div className="flex flex-wrap items-center justify-between gap-3">
            <AvailabilityToggle available={v.me.available} />
            <p className="text-sm text-ink-600">
              Open cases: <strong className="text-ink-900">{v.me.openCases}</strong> of {v.me.maxOpenCases}
            </p>
          </div>
        </Card>
      ) : null}
      {watching ? (
        <Group
          title="Waiting for an expert"
          items={[...v.offers, ...v.queue]}
          watching
          empty="No case is waiting for an expert."
        />
      ) : (
        <>
          {v.mine.length ? <Group title="Your cases" items={v.mine} mine /> : null}
          <Group
            title="Offered to you"
            items={v.offers}
            canClaim={canClaim}
            empty="No offers right now. Matching cases are offered to you first when you are available."
          />
          <Group title="The whole queue" items={v.queue} canClaim={canClaim} empty="Nothing else is waiting." />
        </>
      )}
    </div>
  );
}

interface GroupProps {
  title: string;
  items: QueueItem[];
  mine?: boolean;
  canClaim?: boolean;
  empty?: string;
  watching?: boolean;
}

function Group({ title, items, mine, canClaim, empty, watching }: GroupProps) {
  return (
    <section className="space-y-3" aria-label={title}>
      <h2 className="text-xl font-bold text-ink-900">
        {title} <span className="font-normal text-ink-500">({items.length})</span>
      </h2>
      {items.length === 0 && empty ? <p className="text-ink-600">{empty}</p> : null}
      <ul className="grid gap-3 lg:grid-cols-2">
        {items.map((i) => (
          <li key={i.id}>
            <QueueCard item={i} mine={mine} canClaim={!!canClaim} watching={watching} />
          </li>
        ))}
      </ul>
    </section>
  );
}

function QueueCard(props: { item: QueueItem; mine?: boolean; canClaim: boolean; watching?: boolean }) {
  const { item, mine, canClaim, watching } = props;
  const highlight = item.offered && !mine && !watching;
  const claim = useClaimCase();
  const nav = useNavigate();
  const [lost, setLost] = useState<string | null>(null);
  const t = left(item.deadlineAt);
  const vehicle = [item.vehicle.year, item.vehicle.make, item.vehicle.model, item.vehicle.engine]
    .filter(Boolean)
    .join(" ");
  return (
    <article
      className={`h-full rounded-xl border bg-white p-4 shadow-sm ${highlight ? "border-kiln-400" : "border-ink-200"}`}
    >
      <div className="flex flex-wrap items-start justify-between gap-2">
        <div className="min-w-0">
          <h3 className="font-bold text-ink-900">{vehicle || item.label}</h3>
          <p className="text-sm text-ink-600">
            {item.system ? (systemNames[item.system] ?? item.system) : "System not given"}
            {item.codes.length ? ` · ${item.codes.join(", ")}` : ""}
            {` · ${item.traceCount} trace${item.traceCount === 1 ? "" : "s"}`}
          </p>
        </div>
        <div className="text-right">
          <p className={`text-sm font-semibold ${t.urgent ? "text-alarm-600" : "text-ink-800"}`}>{t.text}</p>
          <p className="text-xs text-ink-500">{item.tier ?? ""}</p>
        </div>
      </div>
      {item.complaint ? <p className="mt-2 line-clamp-3 text-sm text-ink-800">{item.complaint}</p> : null}
      <div className="mt-3 flex flex-wrap items-center justify-between gap-2">
        <p className="text-sm text-ink-600">
          {watching ? "Price: " : "Your share: "}
          <strong className="text-ink-900">
            {money(watching ? item.priceCents : item.expertShareCents, item.currency)}
          </strong>
          {mine ? (
            <span className="ml-2 rounded bg-ink-100 px-2 py-0.5 text-xs font-semibold text-ink-700">
              {item.status.replace("_", " ")}
            </span>
          ) : null}
        </p>
        {mine || watching ? (
          <button type="button" className={buttonClass.secondary} onClick={() => nav(queuePages.caseOf(item.id))}>
            Open
          </button>
        ) : canClaim ? (
          <button
            type="button"
            className={buttonClass.primary}
            disabled={claim.isPending || !!lost}
            onClick={() =>
              claim.mutate(item.id, {
                onSuccess: () => nav(queuePages.caseOf(item.id)),
                onError: (e) =>
                  setLost(e instanceof ApiError && e.status === 409 ? e.message : `Could not claim: ${e.message}`),
              })
            }
          >
            {claim.isPending ? "Claiming…" : "Claim"}
          </button>
        ) : null}
      </div>
      {lost ? (
        <p role="alert" className="mt-2 text-sm font-semibold text-alarm-600">
          {lost}
        </p>
      ) : null}
    </article>
  );
}
