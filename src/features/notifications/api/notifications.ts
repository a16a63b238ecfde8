import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useEffect } from "react";
import { api } from "../../../lib/api-client";
import type { NotificationView as NotificationItem } from "../../../../shared/views/queue";
import type { NoticeSettingsView, SeenView } from "../../../../shared/views/desk";
import { noticeSettingsSchema, type NoticeSettingsInput } from "../../../../shared/schemas/queue";
export type { NotificationItem, NoticeSettingsView };

export const notificationPaths = {
  list: "/api/notifications",
  read: (id: string) => `/api/notifications/${encodeURIComponent(id)}/read`,
  readAll: "/api/notifications/read-all",
  settings: "/api/me/notice-settings",
  seen: (caseId: string) => `/api/cases/${encodeURIComponent(caseId)}/seen`,
};
export const notificationKeys = { list: ["notifications"] as const, settings: ["notice-settings"] as const };
/** The case lists carry unread counts: they live under ["cases", "list"] (features/cases/api/paths.ts). */
const caseListsKey = ["cases", "list"] as const;

export const listNotifications = () =>
  api.get<{ unread: number; items: NotificationItem[] }>(`${notificationPaths.list}?limit=30`);
export const notificationsQuery = queryOptions({ queryKey: notificationKeys.list, queryFn: listNotifications });

/** New notices arrive pushed (hooks/use-live-notices.ts); the poll every 2 min is only a safety net. */
export const useNotifications = (enabled: boolean) =>
  useQuery({ ...notificationsQuery, enabled, refetchInterval: 120_000, refetchOnWindowFocus: true });

export function useMarkRead() {
  const qc = useQueryClient();
  const settle = () => qc.invalidateQueries({ queryKey: notificationKeys.list });
  return {
    one: useMutation({ mutationFn: (id: string) => api.post<void>(notificationPaths.read(id)), onSettled: settle }),
    all: useMutation({ mutationFn: () => api.post<{ marked: number }>(notificationPaths.readAll), onSettled: settle }),
  };
}

export const noticeSettingsQuery = queryOptions({
  queryKey: notificationKeys.settings,
  queryFn: () => api.get<NoticeSettingsView>(notificationPaths.settings),
});
export const useNoticeSettings = () => useQuery(noticeSettingsQuery);

export function useSaveNoticeSettings() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: NoticeSettingsInput) =>
      api.put<NoticeSettingsView>(notificationPaths.settings, noticeSettingsSchema.parse(input)),
    onSuccess: (v) => qc.setQueryData(notificationKeys.settings, v),
  });
}

/**
 * The reader has the case in front of them: its messages and marks are read, and so are the
 * notices about them. Posted once per case opened (and again when `version` changes).
 */
export function useMarkCaseSeen(caseId: string, enabled: boolean, version: unknown = 0) {
  const qc = useQueryClient();
  useEffect(() => {
    if (!enabled || !caseId) return;
    let live = true;
    api
      .post<SeenView>(notificationPaths.seen(caseId))
      .then(() => {
        if (!live) return;
        void qc.invalidateQueries({ queryKey: notificationKeys.list });
        void qc.invalidateQueries({ queryKey: caseListsKey });
      })
      .catch(() => undefined);
    return () => {
      live = false;
    };
  }, [qc, caseId, enabled, version]);
}
