import { useId, type ReactNode } from "react";

export interface SheetTab {
  id: string;
  label: string;
  /** a count shown on the dock's button ("2 new", "5") */
  badge?: string | null;
  content: ReactNode;
}

export interface ReviewSheetProps {
  tabs: SheetTab[];
  /** the open tab, or null while the sheet is down (only the dock shows) */
  open: string | null;
  onOpen: (id: string | null) => void;
  /** what the dock and the sheet are for, for assistive technology */
  label: string;
}

/**
 * On a phone or a tablet: a dock fixed at the bottom of the screen with one button per panel (chat,
 * marks); one tap raises a sheet over the lower part of the screen with that panel, its tabs at the
 * top and a button to lower it. Every panel stays mounted (a message being typed is kept).
 */
export function ReviewSheet({ tabs, open, onOpen, label }: ReviewSheetProps) {
  const id = useId();
  return (
    <>
      {open == null ? (
        <nav
          aria-label={label}
          className="fixed inset-x-0 bottom-0 z-30 border-t border-ink-200 bg-white/95 px-3 pt-2 pb-[max(0.5rem,env(safe-area-inset-bottom))] shadow-[0_-4px_16px_rgba(18,26,32,0.12)] backdrop-blur"
        >
          <div className="mx-auto flex max-w-3xl gap-2">
            {tabs.map((t) => (
              <button
                key={t.id}
                type="button"
                aria-haspopup="dialog"
                aria-controls={`${id}-${t.id}`}
                onClick={() => onOpen(t.id)}
                className="inline-flex min-h-11 flex-1 items-center justify-center gap-2 rounded-lg border border-ink-300 bg-white px-3 font-semibold text-ink-900 hover:bg-ink-50"
              >
                {t.label}
                {t.badge ? (
                  <span className="rounded-full bg-kiln-500 px-2 py-0.5 text-xs font-bold text-ink-950">{t.badge}</span>
                ) : null}
              </button>
            ))}
          </div>
        </nav>
      ) : null}
      <div
        role="dialog"
        aria-modal="false"
        aria-label={label}
        hidden={open == null}
        className="fixed inset-x-0 bottom-0 z-40 flex h-[62dvh] max-h-[40rem] flex-col rounded-t-2xl border-t border-ink-200 bg-white shadow-[0_-8px_24px_rgba(18,26,32,0.18)]"
      >
        <div className="flex items-center gap-2 border-b border-ink-100 px-3 py-2">
          <div role="tablist" aria-label={label} className="flex flex-1 gap-1">
            {tabs.map((t) => (
              <button
                key={t.id}
                role="tab"
                type="button"
                id={`${id}-tab-${t.id}`}
                aria-selected={open === t.id}
                aria-controls={`${id}-${t.id}`}
                onClick={() => onOpen(t.id)}
                className={`min-h-10 rounded-md px-3 text-sm font-semibold ${open === t.id ? "bg-ink-800 text-white" : "bg-ink-50 text-ink-800 hover:bg-ink-100"}`}
              >
                {t.label}
                {t.badge && open !== t.id ? (
                  <span className="ml-1.5 rounded-full bg-kiln-500 px-1.5 text-xs text-ink-950">{t.badge}</span>
                ) : null}
              </button>
            ))}
          </div>
          <button
            type="button"
            onClick={() => onOpen(null)}
            className="min-h-10 rounded-md px-3 text-sm font-semibold text-ink-700 hover:bg-ink-100"
            aria-label="Lower the panel"
          >
            Close
          </button>
        </div>
        {tabs.map((t) => (
          <div
            key={t.id}
            id={`${id}-${t.id}`}
            role="tabpanel"
            aria-labelledby={`${id}-tab-${t.id}`}
            hidden={open !== t.id}
            className="min-h-0 flex-1 overflow-y-auto p-3"
          >
            {t.content}
          </div>
        ))}
      </div>
    </>
  );
}
