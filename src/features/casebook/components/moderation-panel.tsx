import { useState } from "react";
import type { CasebookEntryView } from "../../../../shared/schemas/casebook";
import { useModerateEntry } from "../api/moderate-entry";
import { buttonClass, inputClass, Panel } from "./ui";

/** Admin: hide or unhide the entry (with a reason) and correct its text. Shown only with the moderate ability. */
export function ModerationPanel({ entry }: { entry: CasebookEntryView }) {
  const m = useModerateEntry(entry.id);
  const [reason, setReason] = useState(entry.hiddenReason ?? "");
  const [editing, setEditing] = useState(false);
  const [draft, setDraft] = useState({
    title: entry.title,
    complaint: entry.complaint,
    diagnosis: entry.answer.diagnosis,
    rootCause: entry.answer.rootCause,
    fix: entry.answer.fix,
  });
  if (!entry.abilities.moderate) return null;
  const field = (key: keyof typeof draft, label: string, rows = 3) => (
    <label className="block text-sm font-semibold text-ink-800">
      {label}
      {key === "title" ? (
        <input
          className={`${inputClass} mt-1 font-normal`}
          value={draft[key]}
          onChange={(e) => setDraft({ ...draft, [key]: e.target.value })}
        />
      ) : (
        <textarea
          rows={rows}
          className={`${inputClass} mt-1 font-normal`}
          value={draft[key]}
          onChange={(e) => setDraft({ ...draft, [key]: e.target.value })}
        />
      )}
    </label>
  );
  return (
    <Panel id="moderation" title="Moderation">
      <div className="flex flex-wrap items-end gap-3">
        <label className="min-w-64 flex-1 text-sm font-semibold text-ink-800">
          Reason (for the desk)
          <input
            className={`${inputClass} mt-1 font-normal`}
            value={reason}
            maxLength={500}
            onChange={(e) => setReason(e.target.value)}
            placeholder="e.g. the fix needs checking"
          />
        </label>
        <button
          type="button"
          className={buttonClass.secondary}
          disabled={m.isPending}
          onClick={() =>
            m.mutate(
              entry.hidden
                ? { hidden: false }
                : { hidden: true, ...(reason.trim() ? { hiddenReason: reason.trim() } : {}) },
            )
          }
        >
          {entry.hidden ? "Show it again" : "Hide from the casebook"}
        </button>
        <button
          type="button"
          className={buttonClass.quiet}
          aria-expanded={editing}
          onClick={() => setEditing((x) => !x)}
        >
          {editing ? "Close the editor" : "Edit the text"}
        </button>
      </div>
      {editing ? (
        <form
          className="space-y-3"
          onSubmit={(e) => {
            e.preventDefault();
            m.mutate(draft, { onSuccess: () => setEditing(false) });
          }}
        >
          {field("title", "Title")}
          {field("complaint", "Complaint")}
          {field("diagnosis", "Diagnosis", 5)}
          {field("rootCause", "Root cause")}
          {field("fix", "Recommended fix")}
          <p className="text-sm text-ink-600">
            E-mail addresses, phone numbers and VINs are removed from the text again when it is saved.
          </p>
          <button type="submit" className={buttonClass.primary} disabled={m.isPending}>
            Save the text
          </button>
        </form>
      ) : null}
      {m.isError ? (
        <p role="alert" className="text-sm font-semibold text-alarm-600">
          {m.error.message}
        </p>
      ) : null}
    </Panel>
  );
}
