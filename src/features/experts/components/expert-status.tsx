import { Link } from "react-router-dom";
import { Card, Notice, buttonClass } from "../../../components/ui/form";
import { useMyExpertProfile } from "../api/get-my-profile";
import { useSetAvailability } from "../api/set-availability";
import { expertPages } from "../api/paths";
import { statusLabel, systemLabel } from "./labels";

/** An expert's standing: review status, specialties, and the available/away switch once approved. */
export function ExpertStatusCard() {
  const q = useMyExpertProfile();
  const setAvail = useSetAvailability();
  if (q.isPending) return <p className="text-ink-500">Loading your profile…</p>;
  if (q.isError)
    return (
      <Notice tone="error" title="Your profile could not be loaded">
        {q.error.message}
      </Notice>
    );
  const { profile, abilities } = q.data;
  return (
    <div className="space-y-4">
      {profile.status === "pending" ? (
        <Notice tone="info" title="Your application is awaiting review">
          The desk checks every application. You get an e-mail when it is decided; until then the queue stays closed to
          you.
        </Notice>
      ) : null}
      {profile.status === "rejected" || profile.status === "suspended" ? (
        <Notice tone="error" title={statusLabel[profile.status]}>
          You can't take cases at the moment. Write to the desk if you think this is a mistake.
        </Notice>
      ) : null}
      <Card title="Your expert profile" id="expert-profile">
        <dl className="grid gap-x-6 gap-y-2 text-sm sm:grid-cols-[auto_1fr]">
          <dt className="font-semibold text-ink-700">Status</dt>
          <dd>{statusLabel[profile.status]}</dd>
          <dt className="font-semibold text-ink-700">Systems</dt>
          <dd>{profile.systems.map((s) => systemLabel[s] ?? s).join(", ")}</dd>
          <dt className="font-semibold text-ink-700">Makes</dt>
          <dd>{profile.makes.length ? profile.makes.join(", ") : "Any make"}</dd>
        </dl>
        {abilities.setAvailability ? (
          <div className="mt-4 flex flex-wrap items-center gap-3 border-t border-ink-100 pt-4">
            <p className="text-sm" aria-live="polite">
              You are{" "}
              <strong className={profile.available ? "text-verdigris-600" : "text-ink-700"}>
                {profile.available ? "available for new cases" : "away"}
              </strong>
              .
            </p>
            <button
              type="button"
              className={profile.available ? buttonClass.secondary : buttonClass.primary}
              disabled={setAvail.isPending}
              onClick={() => setAvail.mutate(!profile.available)}
            >
              {profile.available ? "Set me away" : "Set me available"}
            </button>
            {setAvail.isError ? (
              <p role="alert" className="text-sm font-semibold text-alarm-600">
                {setAvail.error.message}
              </p>
            ) : null}
          </div>
        ) : null}
      </Card>
      {profile.status === "approved" ? (
        <Card title="Queue" id="queue">
          <p className="text-sm text-ink-600">Cases that match your systems and makes wait in the queue.</p>
          <p className="mt-3">
            <Link to={expertPages.queue} className={buttonClass.primary}>
              Open the queue
            </Link>
          </p>
        </Card>
      ) : null}
    </div>
  );
}
