import { useMe } from "../../../features/auth/api/get-me";
import { QueueBoard } from "../../../features/queue/components/queue-board";

/** /queue — the expert's queue; admins watch every case waiting for an expert and open it. */
export function QueuePage() {
  const me = useMe();
  const admin = me.data?.role === "admin";
  return (
    <div className="space-y-5">
      <div>
        <h1 className="text-2xl font-bold">Queue</h1>
        <p className="text-ink-600">
          {admin
            ? "Every paid case no expert has taken yet, soonest deadline first. " +
              "Open one to see it, hand it to an expert or refund it."
            : "Cases offered to you come first; the whole queue follows, soonest deadline first. " +
              "The first expert to claim a case takes it."}
        </p>
      </div>
      <QueueBoard canClaim={me.data?.role === "expert"} watching={admin} />
    </div>
  );
}
