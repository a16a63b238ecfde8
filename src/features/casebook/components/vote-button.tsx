import { useVoteEntry } from "../api/vote-entry";
import { buttonClass } from "./ui";

/** "This helped": one vote per user; pressing again takes it back. Hidden when the server says no. */
export function VoteButton({
  entryId,
  voted,
  count,
  canVote,
}: {
  entryId: string;
  voted: boolean;
  count: number;
  canVote: boolean;
}) {
  const vote = useVoteEntry(entryId);
  return (
    <div className="flex flex-wrap items-center gap-3">
      {canVote ? (
        <button
          type="button"
          aria-pressed={voted}
          disabled={vote.isPending}
          onClick={() => vote.mutate(!voted)}
          className={voted ? buttonClass.primary : buttonClass.secondary}
        >
          {voted ? "✓ This helped" : "This helped"}
        </button>
      ) : null}
      <span className="text-sm text-ink-600">
        {count === 1 ? "1 person found this helpful" : `${count.toLocaleString("en-US")} people found this helpful`}
      </span>
      {vote.isError ? (
        <span role="alert" className="text-sm font-semibold text-alarm-600">
          {vote.error.message}
        </span>
      ) : null}
    </div>
  );
}
