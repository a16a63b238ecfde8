import { useEffect, useRef } from "react";
import { useQueryClient } from "@tanstack/react-query";
import { createLiveSocket } from "../../../lib/socket";
import { notificationKeys } from "../api/notifications";

export interface PushedNotice {
  id: string | number;
  kind: string;
  caseId: string | null;
  title: string;
}

/**
 * Notices pushed by the server to the signed-in user's own room (socket.io, the same origin and
 * session cookie as the pages): the notice list refreshes at once, and `onNotice` hears of each so
 * the page can refresh what it shows (the case lists' unread counts). One socket while signed in.
 */
export function useLiveNotices(signedIn: boolean, onNotice?: (n: PushedNotice) => void) {
  const qc = useQueryClient();
  const hear = useRef(onNotice);
  useEffect(() => {
    hear.current = onNotice;
  }, [onNotice]);
  useEffect(() => {
    if (!signedIn) return;
    const socket = createLiveSocket();
    socket.on("notification", (n) => {
      void qc.invalidateQueries({ queryKey: notificationKeys.list });
      hear.current?.(n);
    });
    // a notice pushed while the socket was down is fetched on reconnecting
    socket.io.on("reconnect", () => void qc.invalidateQueries({ queryKey: notificationKeys.list }));
    socket.connect();
    return () => {
      socket.removeAllListeners();
      socket.io.removeAllListeners("reconnect");
      socket.disconnect();
    };
  }, [signedIn, qc]);
}
