import { useEffect, useId, useRef, useState } from "react";
import { Link, useNavigate } from "react-router-dom";
import { formatDateTime } from "../../../../shared/format";
import { useMarkRead, useNotifications } from "../api/notifications";
import { useLiveNotices, type PushedNotice } from "../hooks/use-live-notices";

/** The settings page of notices. */
export const noticeSettingsPage = "/settings/notices";

/**
 * The header's notification menu: unread count, the latest notices, mark read. New notices are
 * pushed (no reload, no wait for a poll); `onNotice` lets the page refresh what they concern.
 */
export function NotificationsMenu({ signedIn, onNotice }: { signedIn: boolean; onNotice?: (n: PushedNotice) => void }) {
  const q = useNotifications(signedIn);
  useLiveNotices(signedIn, onNotice);
  const mark = useMarkRead();
  const [open, setOpen] = useState(false);
  const nav = useNavigate();
  const panelId = useId();
  const ref = useRef<HTMLDivElement>(null);
  useEffect(() => {
    if (!open) return;
    const close = (e: MouseEvent | KeyboardEvent) => {
      if (e instanceof KeyboardEvent ? e.key === "Escape" : !ref.current?.contains(e.target as Node)) setOpen(false);
    };
    document.addEventListener("mousedown", close);
    document.addEventListener("keydown", close);
    return () => {
      document.removeEventListener("mousedown", close);
      document.removeEventListener("keydown", close);
    };
  }, [open]);
  if (!signedIn) return null;
  const unread = q.data?.unread ?? 0;
  return (
    // On a phone the panel spans the screen (8 px margins) instead of hanging off its left edge.
    <div className="sm:relative" ref={ref}>
      <button
        type="button"
        aria-expanded={open}
        aria-controls={panelId}
        onClick={() => setOpen((v) => !v)}
        className="inline-flex min-h-11 items-center gap-2 rounded-md px-3 py-2 text-sm text-ink-100 hover:bg-ink-800"
      >
        Notices
        {unread > 0 ? (
          <span
            className="rounded-full bg-kiln-500 px-2 py-0.5 text-xs font-bold text-ink-950"
            aria-label={`${unread} unread`}
          >
            {unread}
          </span>
        ) : null}
      </button>
      {open ? (
        <div
          id={panelId}
          className="absolute inset-x-2 z-40 mt-2 rounded-xl sm:inset-x-auto sm:right-0 sm:w-[22rem] sm:max-w-[90vw] border border-ink-200 bg-white p-2 text-ink-900 shadow-lg"
        >
          <div className="flex items-center justify-between px-2 py-1">
            <p className="font-bold">Notices</p>
            {unread > 0 ? (
              <button
                type="button"
                className="min-h-11 px-2 text-sm font-semibold text-ink-600 hover:text-ink-900"
                onClick={() => mark.all.mutate()}
              >
                Mark all read
              </button>
            ) : null}
          </div>
          {q.data?.items.length ? (
            <ul className="max-h-96 overflow-y-auto">
              {q.data.items.map((n) => (
                <li key={n.id}>
                  <button
                    type="button"
                    className={`block w-full rounded-lg px-2 py-2 text-left hover:bg-ink-50 ${n.read ? "text-ink-600" : "font-semibold"}`}
                    onClick={() => {
                      if (!n.read) mark.one.mutate(n.id);
                      setOpen(false);
                      if (n.link) nav(n.link);
                    }}
                  >
                    <span className="block text-sm">{n.title}</span>
                    <span className="block text-xs font-normal text-ink-500">{formatDateTime(n.createdAt)}</span>
                  </button>
                </li>
              ))}
            </ul>
          ) : (
            <p className="px-2 py-3 text-sm text-ink-600">Nothing yet.</p>
          )}
          <div className="border-t border-ink-100 px-2 pt-1">
            <Link
              to={noticeSettingsPage}
              onClick={() => setOpen(false)}
              className={
                "inline-flex min-h-11 items-center text-sm font-semibold text-ink-700 " +
                "underline-offset-2 hover:underline"
              }
            >
              Choose what you are told, and how
            </Link>
          </div>
        </div>
      ) : null}
    </div>
  );
}
