import { useEffect, useRef, useState, type FormEvent, type KeyboardEvent } from "react";
import type { LiveAbilities, Participant } from "../../../../shared/realtime";
import type { DataRequest } from "../../../../shared/schemas/realtime";
import { MAX_MESSAGE } from "../../../../shared/schemas/realtime";
import type { LiveMessage } from "../lib/room-state";
import { useTouchScreen } from "../../../lib/use-media-query";
import { DataRequestCard } from "./data-request-card";
import { DataRequestForm } from "./data-request-form";

const ROLE: Record<string, string> = { technician: "Technician", owner: "Shop owner", expert: "Expert", admin: "Desk" };

function time(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? "" : d.toLocaleTimeString(undefined, { hour: "2-digit", minute: "2-digit" });
}

export interface ChatPanelProps {
  messages: LiveMessage[];
  participants: Participant[];
  youId?: string | null;
  abilities: LiveAbilities;
  onSend: (text: string, request?: DataRequest) => void;
  onTyping: (typing: boolean) => void;
  onDismiss: (clientId: string) => void;
  className?: string;
  /** false while the panel is out of sight (a lowered sheet): on showing it scrolls to the newest message */
  shown?: boolean;
}

/** The case's chat: messages in order, requests for more data as cards, who is typing, the composer. */
export function ChatPanel({
  messages,
  participants,
  youId,
  abilities,
  onSend,
  onTyping,
  onDismiss,
  className,
  shown = true,
}: ChatPanelProps) {
  const [text, setText] = useState("");
  const [asking, setAsking] = useState(false);
  const touch = useTouchScreen();
  const listRef = useRef<HTMLOListElement>(null);
  const typing = participants.filter((p) => p.typing && p.userId !== youId);

  useEffect(() => {
    const el = listRef.current;
    if (el && shown) el.scrollTop = el.scrollHeight;
  }, [messages.length, shown]);

  const submit = (e?: FormEvent) => {
    e?.preventDefault();
    const t = text.trim();
    if (!t) return;
    onSend(t);
    setText("");
    onTyping(false);
  };
  // on a touch screen Enter starts a new line (the keyboard has no Shift+Enter); the button sends
  const onKey = (e: KeyboardEvent<HTMLTextAreaElement>) => {
    if (e.key === "Enter" && !e.shiftKey && !touch) {
      e.preventDefault();
      submit();
    }
  };

  return (
    <section
      aria-label="Chat"
      className={`flex min-h-0 flex-col rounded-xl border border-ink-200 bg-white ${className ?? ""}`}
    >
      <h3 className="border-b border-ink-100 px-3 py-2 text-sm font-semibold text-ink-700">Chat</h3>
      <ol
        ref={listRef}
        className="min-h-40 flex-1 space-y-3 overflow-y-auto px-3 py-3"
        aria-live="polite"
        aria-label="Messages"
      >
        {messages.length === 0 ? <li className="text-sm text-ink-500">No messages yet.</li> : null}
        {messages.map((m) => {
          const mine = m.authorId != null && m.authorId === youId;
          return (
            <li key={m.id} data-seq={m.seq} className={`flex flex-col ${mine ? "items-end" : "items-start"}`}>
              <p className="text-xs text-ink-500">
                <span className="font-semibold" style={{ color: m.color }}>
                  {mine ? "You" : (m.authorName ?? "Someone")}
                </span>
                {m.authorRole ? ` · ${ROLE[m.authorRole] ?? m.authorRole}` : ""}
                {" · "}
                {m.pending ? (m.error ? "not sent" : "sending…") : time(m.createdAt)}
              </p>
              <div className={`mt-0.5 max-w-[90%] ${m.pending && !m.error ? "opacity-70" : ""}`}>
                {m.kind === "data_request" && m.request ? (
                  <DataRequestCard request={m.request} text={m.text} authorName={mine ? null : m.authorName} />
                ) : (
                  <p
                    className={`whitespace-pre-wrap rounded-lg px-3 py-2 text-sm ${mine ? "bg-ink-800 text-white" : "bg-ink-50 text-ink-900"}`}
                  >
                    {m.text}
                  </p>
                )}
              </div>
              {m.error && m.clientId ? (
                <p role="alert" className="mt-1 text-xs font-semibold text-alarm-600">
                  {m.error}{" "}
                  <button type="button" className="underline" onClick={() => onDismiss(m.clientId!)}>
                    Dismiss
                  </button>
                </p>
              ) : null}
            </li>
          );
        })}
      </ol>
      <p className="min-h-5 px-3 text-xs text-ink-500" aria-live="polite">
        {typing.length ? `${typing.map((p) => p.name).join(", ")} ${typing.length > 1 ? "are" : "is"} typing…` : ""}
      </p>
      {abilities.chat ? (
        <div className="space-y-2 border-t border-ink-100 p-3">
          {asking ? (
            <DataRequestForm
              onCancel={() => setAsking(false)}
              onSubmit={(r, t) => {
                onSend(t, r);
                setAsking(false);
              }}
            />
          ) : null}
          <form onSubmit={submit} className="flex items-end gap-2">
            <label className="sr-only" htmlFor="chat-input">
              Message
            </label>
            <textarea
              id="chat-input"
              rows={2}
              maxLength={MAX_MESSAGE}
              value={text}
              placeholder="Write a message…"
              aria-describedby={touch ? undefined : "chat-input-hint"}
              onChange={(e) => {
                setText(e.target.value);
                onTyping(e.target.value.trim().length > 0);
              }}
              onBlur={() => onTyping(false)}
              onKeyDown={onKey}
              className="block min-h-11 w-full min-w-0 flex-1 resize-y rounded-lg border border-ink-300 px-3 py-2 text-base focus:border-kiln-500 focus:outline-none focus:ring-2 focus:ring-kiln-300"
            />
            <button
              type="submit"
              disabled={!text.trim()}
              className="inline-flex min-h-11 items-center rounded-lg bg-kiln-500 px-4 font-semibold text-ink-950 hover:bg-kiln-400 disabled:opacity-50"
            >
              Send message
            </button>
          </form>
          {touch ? null : (
            <p id="chat-input-hint" className="text-xs text-ink-500">
              Enter sends · Shift+Enter starts a new line
            </p>
          )}
          {abilities.requestData && !asking ? (
            <button
              type="button"
              onClick={() => setAsking(true)}
              className="inline-flex min-h-11 items-center rounded-lg border border-kiln-500 px-3 text-sm font-semibold text-kiln-700 hover:bg-kiln-50"
            >
              Ask for more data…
            </button>
          ) : null}
        </div>
      ) : (
        <p className="border-t border-ink-100 p-3 text-sm text-ink-500">This chat is read-only for you.</p>
      )}
    </section>
  );
}
