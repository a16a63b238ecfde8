/** Burnline's mark: a spark's trace — a flat baseline, the firing line, the burn plateau and a short ring-out. */
export function LogoMark({ className = "h-8 w-8" }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} role="img" aria-label="Burnline">
      <rect width="32" height="32" rx="9" fill="#1e2a32" />
      <path
        d="M4 21h6l2-15 2 11h7l1.5 2.5L24 17l1.5 3L27 19"
        fill="none"
        stroke="#e9a23b"
        strokeWidth="2.4"
        strokeLinejoin="round"
        strokeLinecap="round"
      />
    </svg>
  );
}

export function Wordmark() {
  return (
    <span className="flex items-center gap-2 font-bold tracking-tight text-lg">
      <LogoMark />
      <span>
        Burn<span className="text-kiln-500">line</span>
      </span>
    </span>
  );
}
