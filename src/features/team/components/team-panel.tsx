import { useState } from "react";
import { formatDate } from "../../../../shared/format";
import { Card, Notice, buttonClass } from "../../../components/ui/form";
import { useTeam, type TeamMember } from "../api/get-team";
import { useRemoveMember } from "../api/remove-member";
import { useRevokeInvite } from "../api/revoke-invite";
import { InviteForm } from "./invite-form";

const roleLabel: Record<string, string> = { owner: "Owner", technician: "Technician" };
const date = (iso: string) => formatDate(iso);

function MemberRow({ shopId, m }: { shopId: string; m: TeamMember }) {
  const remove = useRemoveMember(shopId);
  const [confirming, setConfirming] = useState(false);
  return (
    <li className="flex flex-col gap-2 py-3 sm:flex-row sm:items-center sm:justify-between">
      <div className="min-w-0">
        <p className="font-semibold text-ink-900">
          {m.name}{" "}
          <span className="ml-1 rounded-full bg-ink-100 px-2 py-0.5 text-xs font-semibold text-ink-700">
            {roleLabel[m.role] ?? m.role}
          </span>
        </p>
        <p className="truncate text-sm text-ink-600">{m.email}</p>
        <p className="text-xs text-ink-500">Joined {date(m.joinedAt)}</p>
      </div>
      {m.abilities.remove ? (
        confirming ? (
          <div className="flex flex-wrap items-center gap-2" role="group" aria-label={`Confirm removing ${m.name}`}>
            <span className="text-sm text-ink-700">Remove {m.name}? They are signed out at once.</span>
            <button
              type="button"
              className={buttonClass.danger}
              disabled={remove.isPending}
              onClick={() => remove.mutate(m.id)}
            >
              {remove.isPending ? "Removing…" : "Remove"}
            </button>
            <button type="button" className={buttonClass.quiet} onClick={() => setConfirming(false)}>
              Keep
            </button>
          </div>
        ) : (
          <button type="button" className={buttonClass.secondary} onClick={() => setConfirming(true)}>
            Remove…
          </button>
        )
      ) : null}
      {remove.isError ? (
        <p role="alert" className="text-sm font-semibold text-alarm-600">
          {remove.error.message}
        </p>
      ) : null}
    </li>
  );
}

/** The shop's team: members, pending invitations and (for the owner) the invite form. */
export function TeamPanel({ shopId }: { shopId: string }) {
  const team = useTeam(shopId);
  const revoke = useRevokeInvite(shopId);
  if (team.isPending) return <p className="text-ink-500">Loading the team…</p>;
  if (team.isError)
    return (
      <Notice tone="error" title="The team could not be loaded">
        {team.error.message}
      </Notice>
    );
  const t = team.data;
  return (
    <div className="space-y-4">
      {t.abilities.invite ? (
        <Card title="Invite a technician" id="invite">
          <InviteForm shopId={shopId} />
        </Card>
      ) : null}
      <Card title={`Team of ${t.shop.name}`} id="members">
        <ul className="divide-y divide-ink-100">
          {t.members.map((m) => (
            <MemberRow key={m.id} shopId={shopId} m={m} />
          ))}
        </ul>
      </Card>
      {t.abilities.invite ? (
        <Card title="Pending invitations" id="invites">
          {t.invites.length === 0 ? (
            <p className="text-sm text-ink-600">No invitations waiting.</p>
          ) : (
            <ul className="divide-y divide-ink-100">
              {t.invites.map((i) => (
                <li key={i.id} className="flex flex-col gap-2 py-3 sm:flex-row sm:items-center sm:justify-between">
                  <div className="min-w-0">
                    <p className="truncate font-semibold text-ink-900">{i.name ? `${i.name} · ${i.email}` : i.email}</p>
                    <p className="text-xs text-ink-500">Link valid until {date(i.expiresAt)}</p>
                  </div>
                  <button
                    type="button"
                    className={buttonClass.secondary}
                    disabled={revoke.isPending}
                    onClick={() => revoke.mutate(i.id)}
                    aria-label={`Withdraw the invitation to ${i.email}`}
                  >
                    Withdraw
                  </button>
                </li>
              ))}
            </ul>
          )}
        </Card>
      ) : null}
    </div>
  );
}
