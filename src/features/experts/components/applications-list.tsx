import { useState } from "react";
import type { ExpertStatus } from "../../../../shared/schemas/auth";
import { Notice, buttonClass, inputClass } from "../../../components/ui/form";
import { useExpertApplications, type ExpertApplication } from "../api/list-applications";
import { useDecideExpert } from "../api/decide-expert";
import { statusLabel, systemLabel } from "./labels";

function ApplicationItem({ e }: { e: ExpertApplication }) {
  const decide = useDecideExpert();
  const [note, setNote] = useState("");
  const noteId = `note-${e.userId}`;
  return (
    <li className="rounded-xl border border-ink-200 bg-white p-4 shadow-sm">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h3 className="text-lg font-bold text-ink-900">{e.name}</h3>
        <span className="text-sm text-ink-600">{statusLabel[e.status]}</span>
      </div>
      <p className="break-all text-sm text-ink-600">
        {e.email}{" "}
        {e.emailVerified ? "" : <span className="font-semibold text-alarm-600">(e-mail not confirmed yet)</span>}
      </p>
      <dl className="mt-3 grid gap-x-6 gap-y-1 text-sm sm:grid-cols-[auto_1fr]">
        <dt className="font-semibold text-ink-700">Systems</dt>
        <dd>{e.systems.map((s) => systemLabel[s] ?? s).join(", ")}</dd>
        <dt className="font-semibold text-ink-700">Makes</dt>
        <dd>{e.makes.length ? e.makes.join(", ") : "Any make"}</dd>
        <dt className="font-semibold text-ink-700">Experience</dt>
        <dd>{e.yearsExperience != null ? `${e.yearsExperience} years` : "not given"}</dd>
      </dl>
      {e.bio ? <p className="mt-2 whitespace-pre-line text-sm text-ink-800">{e.bio}</p> : null}
      {e.abilities.decide ? (
        <div className="mt-4 space-y-2 border-t border-ink-100 pt-3">
          <label htmlFor={noteId} className="block text-sm font-semibold text-ink-800">
            Note to the applicant <span className="font-normal text-ink-500">(optional, goes into the e-mail)</span>
          </label>
          <input
            id={noteId}
            className={inputClass}
            value={note}
            maxLength={1000}
            onChange={(ev) => setNote(ev.target.value)}
          />
          <div className="flex flex-wrap gap-2">
            {e.status !== "approved" ? (
              <button
                type="button"
                className={buttonClass.primary}
                disabled={decide.isPending}
                onClick={() => decide.mutate({ userId: e.userId, verb: "approve", note })}
              >
                Approve {e.name}
              </button>
            ) : null}
            {e.status !== "rejected" ? (
              <button
                type="button"
                className={buttonClass.danger}
                disabled={decide.isPending}
                onClick={() => decide.mutate({ userId: e.userId, verb: "reject", note })}
              >
                Reject
              </button>
            ) : null}
          </div>
          {decide.isError ? (
            <p role="alert" className="text-sm font-semibold text-alarm-600">
              {decide.error.message}
            </p>
          ) : null}
        </div>
      ) : null}
    </li>
  );
}

/** Expert applications with a given status, with approve/reject for the desk. */
export function ApplicationsList({ status }: { status: ExpertStatus }) {
  const q = useExpertApplications(status);
  if (q.isPending) return <p className="text-ink-500">Loading applications…</p>;
  if (q.isError)
    return (
      <Notice tone="error" title="Applications could not be loaded">
        {q.error.message}
      </Notice>
    );
  if (q.data.experts.length === 0)
    return (
      <p className="text-ink-600">
        {status === "pending" ? "No applications are waiting." : "No applications with this status."}
      </p>
    );
  return (
    <ul className="grid gap-3 lg:grid-cols-2">
      {q.data.experts.map((e) => (
        <ApplicationItem key={e.userId} e={e} />
      ))}
    </ul>
  );
}
