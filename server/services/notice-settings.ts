/**
 * Each user's notice settings: per topic (shared/domain/notice-topics.ts), in the app and by mail.
 * A topic the user never changed has its default.
 */
import { and, eq, inArray } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import {
  noticeTopicInfo,
  noticeTopics,
  type NoticeChannels,
  type NoticeTopic,
} from "../../shared/domain/notice-topics";
import type { NoticeSettingsInput } from "../../shared/schemas/queue";
import type { NoticeSettingsView } from "../../shared/views/desk";

const { noticePreference } = schema;

/** Each user's channels for one topic (the default where they never chose). */
export async function noticeChannels(
  tx: Tx,
  userIds: readonly string[],
  topic: NoticeTopic,
): Promise<Map<string, NoticeChannels>> {
  const out = new Map<string, NoticeChannels>();
  for (const id of userIds) out.set(id, { ...noticeTopicInfo[topic].defaults });
  if (userIds.length === 0) return out;
  const rows = await tx
    .select()
    .from(noticePreference)
    .where(and(inArray(noticePreference.userId, [...userIds]), eq(noticePreference.topic, topic)))
    .all();
  for (const r of rows) out.set(r.userId, { inApp: r.inApp, mail: r.mail });
  return out;
}

async function settingsOf(tx: Tx, userId: string): Promise<NoticeSettingsView> {
  const rows = await tx.select().from(noticePreference).where(eq(noticePreference.userId, userId)).all();
  const chosen = new Map(rows.map((r) => [r.topic, r] as const));
  return {
    topics: noticeTopics.map((topic) => {
      const info = noticeTopicInfo[topic];
      const r = chosen.get(topic);
      return {
        topic,
        label: info.label,
        hint: info.hint,
        inApp: r ? r.inApp : info.defaults.inApp,
        mail: r ? r.mail : info.defaults.mail,
      };
    }),
  } satisfies NoticeSettingsView;
}

/** GET /api/me/notice-settings */
export async function getNoticeSettings(ctx: AppContext, userId: string): Promise<NoticeSettingsView> {
  return ctx.db.read(async (tx) => settingsOf(tx, userId));
}

/** PUT /api/me/notice-settings: the topics named are set; the others keep what they were. */
export async function setNoticeSettings(
  ctx: AppContext,
  userId: string,
  input: NoticeSettingsInput,
): Promise<NoticeSettingsView> {
  const now = ctx.now();
  return ctx.db.write(async (tx) => {
    for (const t of input.topics) {
      await tx
        .insert(noticePreference)
        .values({ userId, topic: t.topic, inApp: t.inApp, mail: t.mail, updatedAt: now })
        .onConflictDoUpdate({
          target: [noticePreference.userId, noticePreference.topic],
          set: { inApp: t.inApp, mail: t.mail, updatedAt: now },
        })
        .run();
    }
    return settingsOf(tx, userId);
  });
}
