import { useMe } from "../../features/auth/api/get-me";

export function HomePage() {
  const me = useMe();
  if (me.isPending) return <p className="text-ink-500">Loading…</p>;
  return (
    <section className="space-y-2">
      <h1 className="text-2xl font-bold">Welcome to Burnline</h1>
      <p className="text-ink-600">{me.data ? `Signed in as ${me.data.email}.` : "Sign in to open a case."}</p>
    </section>
  );
}
