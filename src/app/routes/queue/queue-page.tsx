import { useMe } from "../../../features/auth/api/get-me";
import { QueueBoard } from "../../../features/queue/components/queue-board";

/** /queue — the expert's queue (admins watch it without claiming). */
export function QueuePage() {
  const me = useMe();
  return (
    <div className="space-y-5">
      <div>
        <h1 className="text-2xl font-bold">Queue</h1>
        <p className="text-ink-600">Cases offered to you come first; the whole queue follows, soonest deadline first. The first expert to claim a case takes it.</p>
      </div>
      <QueueBoard canClaim={me.data?.role === "expert"} />
    </div>
  );
}
