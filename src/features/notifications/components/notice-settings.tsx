import { useState } from "react";
import type { NoticeTopic } from "../../../../shared/domain/notice-topics";
import { buttonClass, Card, Notice } from "../../../components/ui/form";
import { useNoticeSettings, useSaveNoticeSettings, type NoticeSettingsView } from "../api/notifications";

type Choice = Record<NoticeTopic, { inApp: boolean; mail: boolean }>;

const choiceOf = (v: NoticeSettingsView): Choice =>
  Object.fromEntries(v.topics.map((t) => [t.topic, { inApp: t.inApp, mail: t.mail }])) as Choice;

/** Per topic: a notice in the app, a mail, both or neither. On a phone each topic is a card. */
export function NoticeSettingsForm() {
  const q = useNoticeSettings();
  const save = useSaveNoticeSettings();
  // the user's edits over what the server holds (none yet: the server's)
  const [edited, setChoice] = useState<Choice | null>(null);
  const choice = edited ?? (q.data ? choiceOf(q.data) : null);
  if (q.isError)
    return (
      <Notice tone="error" title="Your settings could not be loaded">
        {q.error.message}
      </Notice>
    );
  if (!q.data || !choice)
    return (
      <div className="h-40 animate-pulse rounded-xl bg-ink-100" aria-busy="true" aria-label="Loading your settings" />
    );
  const set = (topic: NoticeTopic, key: "inApp" | "mail", on: boolean) =>
    setChoice({ ...choice, [topic]: { ...choice[topic], [key]: on } });
  const changed = q.data.topics.some((t) => choice[t.topic].inApp !== t.inApp || choice[t.topic].mail !== t.mail);
  return (
    <form
      className="space-y-4"
      onSubmit={(e) => {
        e.preventDefault();
        save.mutate({ topics: q.data!.topics.map((t) => ({ topic: t.topic, ...choice[t.topic] })) });
      }}
    >
      <ul className="space-y-3" aria-label="Topics">
        {q.data.topics.map((t) => (
          <li key={t.topic}>
            <Card>
              <fieldset className="flex flex-wrap items-start justify-between gap-3">
                <legend className="sr-only">{t.label}</legend>
                <div className="min-w-0 flex-1 basis-56">
                  <p className="font-bold text-ink-900">{t.label}</p>
                  <p className="text-sm text-ink-600">{t.hint}</p>
                </div>
                <div className="flex gap-2">
                  {(["inApp", "mail"] as const).map((k) => (
                    <label
                      key={k}
                      className={
                        "flex min-h-11 cursor-pointer items-center gap-2 rounded-lg border border-ink-300 " +
                        "bg-white px-3"
                      }
                    >
                      <input
                        type="checkbox"
                        className="h-5 w-5 accent-kiln-600"
                        checked={choice[t.topic][k]}
                        onChange={(e) => set(t.topic, k, e.target.checked)}
                        aria-label={`${t.label}: ${k === "inApp" ? "in the app" : "by mail"}`}
                      />
                      {k === "inApp" ? "In the app" : "By mail"}
                    </label>
                  ))}
                </div>
              </fieldset>
            </Card>
          </li>
        ))}
      </ul>
      <div className="flex flex-wrap items-center gap-3">
        <button type="submit" className={buttonClass.primary} disabled={!changed || save.isPending}>
          {save.isPending ? "Saving…" : "Save the settings"}
        </button>
        {save.isSuccess && !changed ? (
          <p role="status" className="text-sm font-semibold text-verdigris-600">
            Saved.
          </p>
        ) : null}
      </div>
      {save.error ? <Notice tone="error">{save.error.message}</Notice> : null}
    </form>
  );
}
