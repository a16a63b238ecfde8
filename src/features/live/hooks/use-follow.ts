import { useMemo, useState } from "react";
import type { ViewPayload } from "../../../../shared/realtime";
import type { Role } from "../../../../shared/domain/case-status";

export interface FollowMode {
  following: boolean;
  setFollowing(on: boolean): void;
  /** the window to show while following (feed it to the viewer's `viewWindow`), else null */
  viewWindow: { traceId: string; t0: number; t1: number } | null;
  /** whose view is followed */
  leader: { name: string; role: Role } | null;
}

/**
 * Follow mode: while on, the viewer shows the window the other side shares (`view` events). On by
 * default for the shop (the tech follows the expert), off for the desk. Views from the user's own
 * side are ignored: a tech follows the expert, the expert a shop member.
 */
export function useFollow(remoteView: ViewPayload | null, myRole: Role | undefined): FollowMode {
  const shop = myRole === "technician" || myRole === "owner";
  // the default follows the role as soon as it is known (adjusted while rendering, not in an effect)
  const [state, setState] = useState({ shop, following: shop });
  if (state.shop !== shop) setState({ shop, following: shop });
  const following = state.following;
  const setFollowing = (on: boolean) => setState((s) => ({ ...s, following: on }));
  const fromOtherSide =
    remoteView &&
    (shop
      ? remoteView.role === "expert" || remoteView.role === "admin"
      : remoteView.role === "technician" || remoteView.role === "owner");
  const viewWindow = useMemo(
    () =>
      following && fromOtherSide && remoteView
        ? { traceId: remoteView.traceId, t0: remoteView.t0, t1: remoteView.t1 }
        : null,
    [following, fromOtherSide, remoteView],
  );
  return {
    following,
    setFollowing,
    viewWindow,
    leader: fromOtherSide && remoteView ? { name: remoteView.name, role: remoteView.role } : null,
  };
}
