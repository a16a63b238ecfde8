import { useEffect, useState } from "react";
import { PASSWORD_MIN_SCORE, estimatePassword, passwordProblem } from "../../../../shared/domain/password-strength";
import { loadPasswordEstimator } from "../lib/password-estimator";

const LABELS = [
  "Very easy to guess",
  "Easy to guess",
  "Fairly easy to guess",
  "Hard to guess",
  "Very hard to guess",
] as const;

/**
 * Live feedback while a new password is typed: a four-step bar and, when the password would be
 * refused, the reason (the same rule the server applies: shared/domain/password-strength.ts).
 * The estimator is loaded when this first shows; until then it says nothing.
 */
export function PasswordStrength({
  password,
  userInputs = [],
}: {
  password: string;
  userInputs?: readonly (string | undefined)[];
}) {
  const [ready, setReady] = useState(false);
  const [shown, setShown] = useState<{ score: number; problem: string | null } | null>(null);
  const inputs = userInputs.filter((v): v is string => !!v);
  const inputsKey = inputs.join("\u0000");

  useEffect(() => {
    let live = true;
    loadPasswordEstimator().then(
      () => live && setReady(true),
      () => undefined,
    );
    return () => {
      live = false;
    };
  }, []);

  // nothing to estimate (or no estimator yet): the last estimate is dropped
  const idle = !ready || !password;
  const [wasIdle, setWasIdle] = useState(idle);
  if (idle !== wasIdle) {
    setWasIdle(idle);
    if (idle) setShown(null);
  }

  useEffect(() => {
    if (!ready || !password) return;
    const t = setTimeout(() => {
      const own = inputsKey ? inputsKey.split("\u0000") : [];
      const est = estimatePassword(password, own);
      setShown({ score: est?.score ?? 0, problem: passwordProblem(password, own) });
    }, 150);
    return () => clearTimeout(t);
  }, [ready, password, inputsKey]);

  if (!shown) return null;
  const ok = !shown.problem;
  const score = ok ? Math.max(shown.score, PASSWORD_MIN_SCORE) : Math.min(shown.score, PASSWORD_MIN_SCORE - 1);
  const tone = ok ? "bg-verdigris-600" : score <= 1 ? "bg-alarm-600" : "bg-kiln-500";
  return (
    <div className="mt-1" data-testid="password-strength">
      <div className="flex gap-1" aria-hidden="true">
        {[1, 2, 3, 4].map((i) => (
          <span key={i} className={`h-1.5 flex-1 rounded ${i <= Math.max(1, score) ? tone : "bg-ink-100"}`} />
        ))}
      </div>
      <p className={`mt-1 text-sm ${ok ? "text-ink-700" : "text-alarm-600"}`} aria-live="polite">
        {LABELS[score]}
        {shown.problem ? `: ${shown.problem}` : "."}
      </p>
    </div>
  );
}
