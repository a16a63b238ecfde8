import { useConfig } from "../api/get-config";

/** Demo mode: the four demo accounts, one click to fill the sign-in form. */
export function DemoSignIns({
  onPick,
  disabled,
}: {
  onPick: (email: string, password: string) => void;
  disabled?: boolean;
}) {
  const config = useConfig();
  const c = config.data;
  if (!c?.demo || c.demoSignIns.length === 0 || !c.demoPassword) return null;
  return (
    <section
      aria-labelledby="demo-title"
      className="mt-6 rounded-xl border border-dashed border-kiln-400 bg-kiln-50 p-4"
    >
      <h2 id="demo-title" className="font-bold text-ink-900">
        Demo accounts
      </h2>
      <p className="mt-1 text-sm text-ink-700">
        All use the password{" "}
        <code className="rounded bg-white px-1.5 py-0.5 font-mono text-ink-900">{c.demoPassword}</code>. Pick one to
        sign in.
      </p>
      <ul className="mt-3 grid gap-2">
        {c.demoSignIns.map((d) => (
          <li key={d.email}>
            <button
              type="button"
              disabled={disabled}
              onClick={() => onPick(d.email, c.demoPassword!)}
              className="flex min-h-11 w-full flex-col items-start rounded-lg border border-ink-200 bg-white px-3 py-2 text-left hover:border-kiln-500 disabled:opacity-50"
            >
              <span className="font-semibold text-ink-900">{d.email}</span>
              <span className="text-sm text-ink-600">{d.label}</span>
            </button>
          </li>
        ))}
      </ul>
    </section>
  );
}
