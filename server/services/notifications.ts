/**
 * Notifications by e-mail (through ctx.mailer: the local catcher in development and tests) and in
 * the app (the notification table, pushed live with ctx.realtime.toUser). Called after the unit
 * that caused them has committed (an effect of a workflow command); it never throws: a failed
 * insert or mail is logged. The texts are in ./notices.ts.
 */
import { and, desc, eq, inArray, isNull, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import { renderMail } from "../integrations/mailer";
import { notFound } from "../http/errors";
import type { NotificationView } from "../../shared/views/queue";
import type { Notice } from "./notices";
import { noticeChannels } from "./notice-settings";
import { noticeTopicOf } from "../../shared/domain/notice-topics";
export type { NotificationView, Notice };

const { notification } = schema;

type NotificationRow = typeof notification.$inferSelect;
interface Recipient {
  id: string;
  email: string;
  name: string;
}

/**
 * Stores (or folds into an unread one, see Notice.fold) the notice for each user whose settings
 * take it in the app; answers the rows to push and the users to mail.
 */
async function storeNotice(
  tx: Tx,
  ids: string[],
  n: Notice,
  now: Date,
): Promise<{ rows: NotificationRow[]; mailTo: Recipient[] }> {
  const users = await tx
    .select({ id: schema.user.id, email: schema.user.email, name: schema.user.name })
    .from(schema.user)
    .where(inArray(schema.user.id, ids))
    .all();
  const channels = await noticeChannels(tx, ids, noticeTopicOf[n.kind]);
  const rows: NotificationRow[] = [];
  const mailTo: Recipient[] = [];
  for (const u of users) {
    const ch = channels.get(u.id)!;
    let folded = false;
    if (ch.inApp) {
      const open =
        n.fold && n.caseId
          ? await tx
              .select()
              .from(notification)
              .where(
                and(
                  eq(notification.userId, u.id),
                  eq(notification.kind, n.kind),
                  eq(notification.caseId, n.caseId),
                  isNull(notification.readAt),
                ),
              )
              .orderBy(desc(notification.createdAt))
              .get()
          : undefined;
      if (open && n.fold) {
        const count = open.count + (n.times ?? 1);
        const t = n.fold(count);
        const [row] = await tx
          .update(notification)
          .set({ title: t.title, body: t.paragraphs.join("\n\n"), count, createdAt: now })
          .where(eq(notification.id, open.id))
          .returning()
          .all();
        rows.push(row);
        folded = true;
      } else {
        const times = n.fold ? (n.times ?? 1) : 1;
        const t = times > 1 ? n.fold!(times) : n;
        const row: NotificationRow = {
          id: crypto.randomUUID(),
          userId: u.id,
          kind: n.kind,
          caseId: n.caseId ?? null,
          title: t.title,
          body: t.paragraphs.join("\n\n"),
          link: n.link ?? null,
          count: times,
          readAt: null,
          createdAt: now,
        };
        await tx.insert(notification).values(row).run();
        rows.push(row);
      }
    }
    if (ch.mail && n.mail !== false && !folded) mailTo.push(u);
  }
  return { rows, mailTo };
}

/**
 * Records and pushes one notice to each user, and mails it (in the background; see whenMailSent),
 * each as their notice settings say (./notice-settings.ts).
 */
export async function notify(ctx: AppContext, userIds: readonly string[], n: Notice): Promise<void> {
  const ids = [...new Set(userIds.filter(Boolean))];
  if (ids.length === 0) return;
  const now = ctx.now();
  let stored: { rows: NotificationRow[]; mailTo: Recipient[] } = { rows: [], mailTo: [] };
  try {
    stored = await ctx.db.write(async (tx) => storeNotice(tx, ids, n, now));
  } catch (err) {
    ctx.logger.error({ err, kind: n.kind }, "notification insert failed");
  }
  for (const r of stored.rows)
    ctx.realtime.toUser(r.userId, "notification", { id: r.id, kind: r.kind, caseId: r.caseId, title: r.title });
  if (stored.mailTo.length === 0) return;
  const action = n.link ? { label: n.actionLabel ?? "Open in Burnline", url: absoluteUrl(ctx, n.link) } : undefined;
  const { text, html } = renderMail(n.title, n.paragraphs, action);
  // Mail goes out in the background: a slow SMTP server must not slow the request down.
  for (const u of stored.mailTo) {
    const sending: Promise<void> = ctx.mailer
      .send({ to: u.email, subject: n.title, text, html })
      .then(
        () => undefined,
        (err: unknown) => ctx.logger.error({ err, kind: n.kind, to: u.id }, "notification mail failed"),
      )
      .finally(() => inFlight.delete(sending));
    inFlight.add(sending);
  }
}

const inFlight = new Set<Promise<void>>();

/** Resolves when every notification mail handed out so far has been accepted (or has failed). For tests and shutdown. */
export async function whenMailSent(): Promise<void> {
  while (inFlight.size > 0) await Promise.all([...inFlight]);
}

export function absoluteUrl(ctx: AppContext, path: string): string {
  return new URL(path, ctx.env.publicUrl.endsWith("/") ? ctx.env.publicUrl : ctx.env.publicUrl + "/").toString();
}

export async function listNotifications(
  ctx: AppContext,
  userId: string,
  opts: { unreadOnly?: boolean; limit?: number } = {},
): Promise<{ unread: number; items: NotificationView[] }> {
  const conds = [eq(notification.userId, userId)];
  if (opts.unreadOnly) conds.push(isNull(notification.readAt));
  return ctx.db.read(async (tx) => {
    const items = await tx
      .select()
      .from(notification)
      .where(and(...conds))
      .orderBy(desc(notification.createdAt), desc(notification.id))
      .limit(Math.min(Math.max(opts.limit ?? 50, 1), 200))
      .all();
    const unread = (await tx
      .select({ n: sql<number>`count(*)` })
      .from(notification)
      .where(and(eq(notification.userId, userId), isNull(notification.readAt)))
      .get())!.n;
    return {
      unread,
      items: items.map((r) => ({
        id: r.id,
        kind: r.kind,
        caseId: r.caseId,
        title: r.title,
        body: r.body,
        link: r.link,
        count: r.count,
        read: r.readAt != null,
        createdAt: r.createdAt.toISOString(),
      })),
    };
  });
}

export async function markNotificationRead(ctx: AppContext, userId: string, id: string): Promise<void> {
  await ctx.db.write(async (tx) => {
    const row = await tx.select().from(notification).where(eq(notification.id, id)).get();
    if (!row || row.userId !== userId) throw notFound("Notification");
    if (!row.readAt) await tx.update(notification).set({ readAt: ctx.now() }).where(eq(notification.id, id)).run();
  });
}

export async function markAllNotificationsRead(ctx: AppContext, userId: string): Promise<number> {
  return ctx.db.write(async (tx) => {
    const marked = await tx
      .update(notification)
      .set({ readAt: ctx.now() })
      .where(and(eq(notification.userId, userId), isNull(notification.readAt)))
      .returning({ id: notification.id })
      .all();
    return marked.length;
  });
}
