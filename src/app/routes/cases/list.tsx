import { Link, useSearchParams } from "react-router-dom";
import { caseStatuses, type CaseStatus } from "../../../../shared/domain/case-status";
import { caseSortFields, type CaseSortField } from "../../../../shared/schemas/case";
import { CaseList } from "../../../features/cases/components/case-list";
import type { CaseListParams } from "../../../features/cases/api/list-cases";
import { casePages } from "../../../features/cases/api/paths";
import { buttonClass } from "../../../features/cases/components/ui";
import { useMe } from "../../../features/auth/api/get-me";

function readParams(sp: URLSearchParams): CaseListParams {
  const int = (k: string, d: number, max: number) => {
    const n = Number(sp.get(k));
    return Number.isInteger(n) && n >= 1 ? Math.min(n, max) : d;
  };
  const status = sp.get("status");
  const sort = sp.get("sort");
  const dir = sp.get("dir");
  return {
    status: (caseStatuses as readonly string[]).includes(status ?? "") ? (status as CaseStatus) : undefined,
    q: sp.get("q") || undefined,
    vehicle: sp.get("vehicle") || undefined,
    page: int("page", 1, 1e9),
    pageSize: int("pageSize", 20, 100),
    sort: (caseSortFields as readonly string[]).includes(sort ?? "") ? (sort as CaseSortField) : undefined,
    dir: dir === "asc" || dir === "desc" ? dir : undefined,
  };
}

function writeParams(p: CaseListParams): URLSearchParams {
  const sp = new URLSearchParams();
  if (p.status) sp.set("status", p.status);
  if (p.q) sp.set("q", p.q);
  if (p.vehicle) sp.set("vehicle", p.vehicle);
  if (p.page > 1) sp.set("page", String(p.page));
  if (p.pageSize !== 20) sp.set("pageSize", String(p.pageSize));
  if (p.sort) sp.set("sort", p.sort);
  if (p.dir) sp.set("dir", p.dir);
  return sp;
}

/** /cases — the shop's cases; filters, sort and page live in the address so they survive a reload. */
export function CasesListPage() {
  const [sp, setSp] = useSearchParams();
  const params = readParams(sp);
  const role = useMe().data?.role;
  // cases are opened by a shop's technicians and owners; experts and admins only see them
  const canOpen = role === "technician" || role === "owner";
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h1 className="text-2xl font-bold">Cases</h1>
        {canOpen ? (
          <Link to={casePages.new} className={buttonClass.primary}>
            Open a case
          </Link>
        ) : null}
      </div>
      <CaseList params={params} canOpen={canOpen} onChange={(p) => setSp(writeParams(p), { replace: true })} />
    </div>
  );
}
