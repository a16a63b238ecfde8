import type { ReactNode } from "react";
import type { CasebookEntryView } from "../../../../shared/schemas/casebook";
import { formatDay, systemNames } from "../lib/labels";
import { CodeChip, Panel } from "./ui";
import { VoteButton } from "./vote-button";

function Fact({ label, children }: { label: string; children: ReactNode }) {
  if (children === null || children === undefined || children === "") return null;
  return (
    <div>
      <dt className="text-sm font-semibold text-ink-600">{label}</dt>
      <dd className="text-ink-900">{children}</dd>
    </div>
  );
}

function Paragraphs({ text }: { text: string }) {
  if (!text) return <p className="text-ink-500">—</p>;
  return (
    <>
      {text.split(/\n{2,}/).map((p, i) => (
        <p key={i} className="whitespace-pre-line">
          {p}
        </p>
      ))}
    </>
  );
}

/**
 * A casebook entry: vehicle (VIN cut to its model part), complaint, codes, what was tried, the
 * expert's diagnosis, root cause, fix and confirming tests, the shop's outcome, the safety caution,
 * and a slot for the read-only traces (the page puts the trace viewer there).
 */
export function EntryView({
  entry,
  traces,
  measurements,
  moderation,
}: {
  entry: CasebookEntryView;
  traces?: ReactNode;
  measurements?: ReactNode;
  moderation?: ReactNode;
}) {
  const v = entry.vehicle;
  return (
    <div className="space-y-5">
      <header className="space-y-2">
        <h1 className="text-2xl font-bold">{entry.title}</h1>
        <p className="text-sm text-ink-600">
          Published {formatDay(entry.publishedAt)}
          {entry.updatedAt !== entry.publishedAt ? ` · edited ${formatDay(entry.updatedAt)}` : ""} ·{" "}
          {entry.viewCount.toLocaleString("en-US")} {entry.viewCount === 1 ? "reader" : "readers"}
          {entry.outcome.confirmed ? " · fix confirmed by the shop" : ""}
          {entry.outcome.rating ? ` · rated ${entry.outcome.rating} of 5` : ""}
        </p>
        {entry.hidden ? (
          <p
            role="status"
            className="rounded-lg border border-alarm-500 bg-white px-3 py-2 text-sm font-semibold text-alarm-600"
          >
            Hidden from the casebook{entry.hiddenReason ? `: ${entry.hiddenReason}` : ""}.
          </p>
        ) : null}
        <VoteButton entryId={entry.id} voted={entry.voted} count={entry.helpfulCount} canVote={entry.abilities.vote} />
      </header>

      {moderation}

      <div className="grid gap-5 lg:grid-cols-2">
        <Panel id="vehicle" title="Vehicle">
          <dl className="grid grid-cols-2 gap-3">
            <Fact label="Model year">{v.year}</Fact>
            <Fact label="Make">{v.make}</Fact>
            <Fact label="Model">{v.model}</Fact>
            <Fact label="Engine">{v.engine}</Fact>
            <Fact label="Fuel">{v.fuel}</Fact>
            <Fact label="Transmission">{v.transmission}</Fact>
            <Fact label="Mileage (rounded)">
              {v.mileage != null ? `${v.mileage.toLocaleString("en-US")} ${v.mileageUnit ?? ""}` : null}
            </Fact>
            <Fact label="VIN (model part)">{v.vinModel ? <span className="font-mono">{v.vinModel}</span> : null}</Fact>
            <Fact label="System">{entry.system ? (systemNames[entry.system] ?? entry.system) : null}</Fact>
          </dl>
        </Panel>
        <Panel id="complaint" title="Complaint">
          <Paragraphs text={entry.complaint} />
          {entry.codes.length ? (
            <ul className="space-y-1">
              {entry.codes.map((c) => (
                <li key={c.code} className="flex flex-wrap items-center gap-2 text-sm">
                  <CodeChip code={c.code} />
                  <span className="text-ink-700">{c.description}</span>
                </li>
              ))}
            </ul>
          ) : null}
          {entry.symptoms.length ? <p className="text-sm text-ink-700">Symptoms: {entry.symptoms.join(", ")}</p> : null}
          {entry.testsDone ? (
            <div className="text-sm">
              <p className="font-semibold text-ink-800">Already tested</p>
              <Paragraphs text={entry.testsDone} />
            </div>
          ) : null}
          {entry.partsReplaced ? (
            <div className="text-sm">
              <p className="font-semibold text-ink-800">Parts already replaced</p>
              <Paragraphs text={entry.partsReplaced} />
            </div>
          ) : null}
        </Panel>
      </div>

      <Panel id="answer" title="Diagnosis and fix">
        <div>
          <h3 className="font-bold text-ink-800">Diagnosis</h3>
          <Paragraphs text={entry.answer.diagnosis} />
        </div>
        <div>
          <h3 className="font-bold text-ink-800">Root cause</h3>
          <Paragraphs text={entry.answer.rootCause} />
        </div>
        <div>
          <h3 className="font-bold text-ink-800">Recommended fix</h3>
          <Paragraphs text={entry.answer.fix} />
        </div>
        {entry.answer.testsToConfirm ? (
          <div>
            <h3 className="font-bold text-ink-800">Tests that confirm it</h3>
            <Paragraphs text={entry.answer.testsToConfirm} />
          </div>
        ) : null}
        {entry.outcome.note ? (
          <div>
            <h3 className="font-bold text-ink-800">The shop's word after the repair</h3>
            <Paragraphs text={entry.outcome.note} />
          </div>
        ) : null}
        <p className="rounded-lg border border-kiln-300 bg-kiln-50 px-3 py-2 text-sm text-ink-800">
          {entry.safetyNote}
        </p>
      </Panel>

      {measurements}
      {traces}
    </div>
  );
}
