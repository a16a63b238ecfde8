import { useMe } from "../../../features/auth/api/get-me";
import { TeamPanel } from "../../../features/team/components/team-panel";

/** /team — the shop's members and invitations (owner manages, technicians see). */
export function TeamPage() {
  const me = useMe();
  if (!me.data?.shopId) return null;
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Team</h1>
      <TeamPanel shopId={me.data.shopId} />
    </div>
  );
}
