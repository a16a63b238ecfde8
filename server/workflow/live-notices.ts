/**
 * Notices of the live review's own happenings: a new chat message or a new mark tells the others on
 * the case (whoever opened it, the shop's owners, the expert on it) — except the author and whoever
 * is in the case's live review right now (they see it there). Requests for more data are not told
 * here: the request itself (commands/data.ts) sends `data_requested`.
 *
 * Read after the live write's commit (one read unit), run as workflow effects; the live layer does
 * both in the background, the author's acknowledgement never waits for them.
 */
import { and, eq } from "drizzle-orm";
import { schema, type Tx } from "../db/client";
import { notices } from "../services/notices";
import type { Effect } from "./effect";
import { noticeCase } from "./notice-data";
import type { CaseRow } from "./records";

export type LiveHappening =
  | { kind: "message"; text: string; request: boolean }
  | { kind: "mark"; mark: "pin" | "span" | "level" | "note" | string; label: string | null };

/** Everybody on the case who hears of its live happenings. */
export async function peopleOnCase(tx: Tx, c: CaseRow): Promise<string[]> {
  const rows = await tx
    .select({ id: schema.user.id })
    .from(schema.user)
    .where(and(eq(schema.user.shopId, c.shopId), eq(schema.user.role, "owner")))
    .all();
  const owners = rows.map((r) => r.id);
  return [...new Set([c.createdBy, ...owners, c.expertId].filter((x): x is string => !!x))];
}

const markWords: Record<string, string> = { pin: "pin", span: "span", level: "level line", note: "note" };

/** The notices a new message or mark sends, as effects to run after the commit. */
export async function liveHappeningEffects(
  tx: Tx,
  c: CaseRow,
  author: { id: string; name: string },
  what: LiveHappening,
  present: ReadonlySet<string>,
): Promise<Effect[]> {
  if (what.kind === "message" && what.request) return [];
  const to = (await peopleOnCase(tx, c)).filter((id) => id !== author.id && !present.has(id));
  if (to.length === 0) return [];
  const nc = noticeCase(c);
  const notice =
    what.kind === "message"
      ? notices.newMessage(nc, author.name, what.text)
      : notices.newMark(nc, author.name, markWords[what.mark] ?? "mark", what.label);
  return [{ kind: "notify", to, notice }];
}
