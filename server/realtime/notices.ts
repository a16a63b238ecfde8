/**
 * The notices of the live review's happenings (server/workflow/live-notices.ts), sent in the
 * background after the write's commit, by the node that stored it.
 *
 * A burst (an expert placing marks quickly, a run of chat lines) would otherwise cost one notice
 * write per happening — on a libSQL server a few round trips each under the write lock. While one
 * notice of a case, kind and author is being sent, the further ones of the same key are counted,
 * and sent as one notice standing for all of them (`Notice.times`): the reader sees the same folded
 * notice ("5 new marks…"), the latest happening's text, and at most the one mail.
 */
import type { AppContext } from "../context";
import { getCaseRow } from "../workflow/records";
import { runEffects } from "../workflow/effects";
import { liveHappeningEffects, type LiveHappening } from "../workflow/live-notices";
import type { Presence } from "./presence";

type Author = { id: string; name: string };
interface Next {
  author: Author;
  what: LiveHappening;
  times: number;
}

export type SendLiveNotice = (caseId: string, author: Author, what: LiveHappening) => void;

export function liveNoticeSender(ctx: AppContext, presence: Presence): SendLiveNotice {
  /** per key: null while a send runs with nothing behind it, or what came meanwhile */
  const inFlight = new Map<string, Next | null>();

  async function send(caseId: string, n: Next): Promise<void> {
    const present = new Set(await presence.users(caseId));
    const effects = await ctx.db.read(async (tx) => {
      const c = await getCaseRow(tx, caseId);
      return c ? liveHappeningEffects(tx, c, n.author, n.what, present) : [];
    });
    for (const e of effects) if (e.kind === "notify") e.notice.times = n.times;
    if (effects.length) await runEffects(ctx, effects);
  }

  async function drain(key: string, caseId: string, first: Next): Promise<void> {
    let job: Next | null = first;
    while (job) {
      await send(caseId, job).catch((err: unknown) => ctx.logger.error({ err }, "live notices failed"));
      job = inFlight.get(key) ?? null;
      if (job) inFlight.set(key, null);
      else inFlight.delete(key);
    }
  }

  return (caseId, author, what) => {
    if (what.kind === "message" && what.request) return; // the request itself is told (commands/data.ts)
    const key = `${caseId}|${what.kind}|${author.id}`;
    if (inFlight.has(key)) {
      const behind = inFlight.get(key);
      inFlight.set(key, { author, what, times: (behind?.times ?? 0) + 1 });
      return;
    }
    inFlight.set(key, null);
    void drain(key, caseId, { author, what, times: 1 });
  };
}
