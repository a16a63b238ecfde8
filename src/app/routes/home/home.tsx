import { Link } from "react-router-dom";
import { useMe, type Me } from "../../../features/auth/api/get-me";
import { roleLabels } from "../../../features/auth/lib/labels";
import { Card, buttonClass } from "../../../components/ui/form";
import { ExpertStatusCard } from "../../../features/experts/components/expert-status";
import { ExpertCasebookRecordCard } from "../../../features/casebook/components/expert-record";
import { ApplicationsList } from "../../../features/experts/components/applications-list";
import { expertPages } from "../../../features/experts/api/paths";
import { teamPages } from "../../../features/team/api/paths";
import { useTeam } from "../../../features/team/api/get-team";
import { OpenCases } from "../../../features/cases/components/open-cases";

function CasesCard({ me }: { me: Me }) {
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap gap-2">
        <Link to="/cases/new" className={buttonClass.primary}>
          Open a new case
        </Link>
        <Link to="/cases" className={buttonClass.secondary}>
          All {me.role === "owner" ? "the shop's" : "your shop's"} cases
        </Link>
      </div>
      <OpenCases
        title="Open and live cases"
        params={{ state: "open", sort: "attention" }}
        empty={
          "No open cases. Open a case with the vehicle, the codes and your scope captures; " +
          "an expert who knows the system answers it."
        }
        more={{ to: "/cases?state=open", label: "See them all" }}
      />
    </div>
  );
}

function TeamSummary({ shopId }: { shopId: string }) {
  const team = useTeam(shopId);
  const members = team.data?.members.length;
  const waiting = team.data?.invites.length;
  return (
    <Card title="Team" id="team-summary">
      <p className="text-sm text-ink-600" aria-live="polite">
        {team.isPending
          ? "Loading…"
          : team.isError
            ? team.error.message
            : `${members} ${members === 1 ? "person" : "people"} in ${team.data!.shop.name}${waiting ? `, ${waiting} invitation${waiting === 1 ? "" : "s"} waiting` : ""}.`}
      </p>
      <p className="mt-3">
        <Link to={teamPages.team} className={buttonClass.secondary}>
          Manage the team
        </Link>
      </p>
    </Card>
  );
}

function BillingCard() {
  return (
    <Card title="Billing" id="billing">
      <p className="text-sm text-ink-600">Payments per case, receipts and refunds.</p>
      <p className="mt-3">
        <Link to={teamPages.billing} className={buttonClass.secondary}>
          Open billing
        </Link>
      </p>
    </Card>
  );
}

/** The signed-in home, by role. */
export function HomePage() {
  const me = useMe();
  if (!me.data) return null;
  const m = me.data;
  return (
    <div className="space-y-5">
      <header>
        <h1 className="text-2xl font-bold">Hello, {m.name.split(" ")[0]}</h1>
        <p className="text-ink-600">
          Signed in as {m.email} · {roleLabels[m.role]} ·{" "}
          <Link to="/settings/notices" className="underline">
            notice settings
          </Link>
        </p>
      </header>
      {m.role === "technician" ? <CasesCard me={m} /> : null}
      {m.role === "owner" && m.shopId ? (
        <div className="grid gap-4 md:grid-cols-2">
          <div className="md:col-span-2">
            <CasesCard me={m} />
          </div>
          <TeamSummary shopId={m.shopId} />
          <BillingCard />
        </div>
      ) : null}
      {m.role === "expert" ? <ExpertStatusCard /> : null}
      {m.role === "expert" ? <ExpertCasebookRecordCard expertId={m.id} /> : null}
      {m.role === "admin" ? (
        <OpenCases
          title="Answer deadlines at risk"
          params={{ deadline: "at_risk", sort: "attention" }}
          showShop
          empty="No answer deadline is at risk right now."
          more={{ to: "/cases", label: "All cases" }}
        />
      ) : null}
      {m.role === "admin" ? (
        <section aria-labelledby="awaiting-title" className="space-y-3">
          <div className="flex flex-wrap items-center justify-between gap-2">
            <h2 id="awaiting-title" className="text-xl font-bold">
              Experts awaiting approval
            </h2>
            <Link to={expertPages.review} className={buttonClass.quiet}>
              All applications
            </Link>
          </div>
          <ApplicationsList status="pending" />
        </section>
      ) : null}
    </div>
  );
}
