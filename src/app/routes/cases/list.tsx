import { Link, useSearchParams } from "react-router-dom";
import { caseStatuses, type CaseStatus } from "../../../../shared/domain/case-status";
import { caseDeadlineFilters, caseSortFields, caseStates, type CaseSortField } from "../../../../shared/schemas/case";
import { CaseList, type ListReader } from "../../../features/cases/components/case-list";
import type { CaseListParams } from "../../../features/cases/api/list-cases";
import { casePages } from "../../../features/cases/api/paths";
import { buttonClass } from "../../../features/cases/components/ui";
import { useMe } from "../../../features/auth/api/get-me";
import { useCaseFilters } from "../../../features/desk/api/admin-actions";

const oneOf = <T extends string>(list: readonly T[], v: string | null): T | undefined =>
  (list as readonly string[]).includes(v ?? "") ? (v as T) : undefined;

function readParams(sp: URLSearchParams, defaultSort?: CaseSortField): CaseListParams {
  const int = (k: string, d: number, max: number) => {
    const n = Number(sp.get(k));
    return Number.isInteger(n) && n >= 1 ? Math.min(n, max) : d;
  };
  const dir = sp.get("dir");
  return {
    status: oneOf<CaseStatus>(caseStatuses, sp.get("status")),
    q: sp.get("q") || undefined,
    vehicle: sp.get("vehicle") || undefined,
    page: int("page", 1, 1e9),
    pageSize: int("pageSize", 20, 100),
    sort: oneOf(caseSortFields, sp.get("sort")) ?? defaultSort,
    dir: dir === "asc" || dir === "desc" ? dir : undefined,
    state: oneOf(caseStates, sp.get("state")),
    deadline: oneOf(caseDeadlineFilters, sp.get("deadline")),
    expertId: sp.get("expertId") || undefined,
    shopId: sp.get("shopId") || undefined,
  };
}

function writeParams(p: CaseListParams, defaultSort?: CaseSortField): URLSearchParams {
  const sp = new URLSearchParams();
  for (const k of ["status", "q", "vehicle", "state", "deadline", "expertId", "shopId", "dir"] as const) {
    const v = p[k];
    if (v) sp.set(k, v);
  }
  if (p.page > 1) sp.set("page", String(p.page));
  if (p.pageSize !== 20) sp.set("pageSize", String(p.pageSize));
  if (p.sort && p.sort !== defaultSort) sp.set("sort", p.sort);
  return sp;
}

/**
 * /cases — a shop's cases for its people; for the desk's admins every shop's cases, filtered by
 * stage, deadline, expert and shop, deadlines at risk first. Filters, sort and page live in the
 * address so they survive a reload.
 */
export function CasesListPage() {
  const [sp, setSp] = useSearchParams();
  const role = useMe().data?.role;
  const reader: ListReader = role === "admin" ? "admin" : role === "expert" ? "expert" : "shop";
  const defaultSort: CaseSortField | undefined = reader === "admin" ? "attention" : undefined;
  const params = readParams(sp, defaultSort);
  const filters = useCaseFilters(reader === "admin");
  // cases are opened by a shop's technicians and owners; experts and admins only see them
  const canOpen = role === "technician" || role === "owner";
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <div>
          <h1 className="text-2xl font-bold">{reader === "admin" ? "All cases" : "Cases"}</h1>
          {reader === "admin" ? (
            <p className="text-ink-600">Every shop&apos;s cases; overdue and at-risk answer deadlines come first.</p>
          ) : null}
        </div>
        {canOpen ? (
          <Link to={casePages.new} className={buttonClass.primary}>
            Open a case
          </Link>
        ) : null}
      </div>
      <CaseList
        params={params}
        canOpen={canOpen}
        reader={reader}
        options={filters.data}
        onChange={(p) => setSp(writeParams(p, defaultSort), { replace: true })}
      />
    </div>
  );
}
