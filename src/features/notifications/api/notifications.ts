import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { NotificationView as NotificationItem } from "../../../../shared/views/queue";
export type { NotificationItem };

export const notificationPaths = {
  list: "/api/notifications",
  read: (id: string) => `/api/notifications/${encodeURIComponent(id)}/read`,
  readAll: "/api/notifications/read-all",
};
export const notificationKeys = { list: ["notifications"] as const };


export const listNotifications = () => api.get<{ unread: number; items: NotificationItem[] }>(`${notificationPaths.list}?limit=30`);
export const notificationsQuery = queryOptions({ queryKey: notificationKeys.list, queryFn: listNotifications });

/** Polled every 30 s and on focus. */
export const useNotifications = (enabled: boolean) => useQuery({ ...notificationsQuery, enabled, refetchInterval: 30_000, refetchOnWindowFocus: true });

export function useMarkRead() {
  const qc = useQueryClient();
  const settle = () => qc.invalidateQueries({ queryKey: notificationKeys.list });
  return {
    one: useMutation({ mutationFn: (id: string) => api.post<void>(notificationPaths.read(id)), onSettled: settle }),
    all: useMutation({ mutationFn: () => api.post<{ marked: number }>(notificationPaths.readAll), onSettled: settle }),
  };
}
