import { queryOptions, useQuery } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import type { TraceChannelMeta } from "../../../../shared/trace/types";

/** What the report needs of a case (GET /api/cases/:id). */
export interface ReportCase {
  id: string;
  status: string;
  title?: string;
  vehicle: {
    vin: string | null;
    year: number | null;
    make: string | null;
    model: string | null;
    engine: string | null;
    fuel: string | null;
    mileage: number | null;
    mileageUnit: string | null;
    transmission: string | null;
  };
  complaint: string | null;
  codes: (string | { code: string; description: string | null })[];
  symptoms: string[];
  testsDone: string | null;
  partsReplaced: string | null;
  traces: ReportTrace[];
  createdAt?: string;
}

export interface ReportTrace {
  id: string;
  name: string;
  kind: string;
  t0?: number;
  durationS: number;
  samples: number;
  sampleRateHz: number;
  channels: TraceChannelMeta[];
  settings: Record<string, unknown>;
  analysis: { kind?: string; unit?: string; events?: { timeS: number }[] } | null;
}

export interface ReportAnswer {
  round: number;
  diagnosis: string;
  rootCause: string;
  recommendedFix: string;
  testsToConfirm: string;
  safetyNote: string;
  createdAt: string;
}

export interface ReportAnnotation {
  id: string;
  traceId: string;
  kind: "pin" | "span" | "level" | "note";
  t0: number;
  t1: number | null;
  level: number | null;
  label: string | null;
  color: string;
  deletedAt?: string | null;
}

const enc = encodeURIComponent;
export const reportPaths = {
  case: (id: string) => `/api/cases/${enc(id)}`,
  answers: (id: string) => `/api/cases/${enc(id)}/answers`,
  annotations: (id: string) => `/api/cases/${enc(id)}/annotations`,
};

/** Under ["cases"], so the case's own refreshes refresh the report too. */
export const reportKeys = {
  case: (id: string) => ["cases", "detail", id] as const,
  answers: (id: string) => ["cases", "report-answers", id] as const,
  annotations: (id: string) => ["cases", "report-annotations", id] as const,
};

export const caseReportQuery = (id: string) =>
  queryOptions({ queryKey: reportKeys.case(id), queryFn: () => api.get<ReportCase>(reportPaths.case(id)) });
export const answersReportQuery = (id: string) =>
  queryOptions({
    queryKey: reportKeys.answers(id),
    queryFn: () => api.get<{ answers: ReportAnswer[] }>(reportPaths.answers(id)),
  });
/** The marks (an empty list when the case never had a live review, or the reader may not join it). */
export const annotationsReportQuery = (id: string) =>
  queryOptions({
    queryKey: reportKeys.annotations(id),
    queryFn: () =>
      api
        .get<{ annotations: ReportAnnotation[] }>(reportPaths.annotations(id))
        .catch(() => ({ annotations: [] as ReportAnnotation[] })),
  });

/** The case, its answers and its marks, for the printable report. */
export function useReport(id: string) {
  return {
    c: useQuery(caseReportQuery(id)),
    a: useQuery(answersReportQuery(id)),
    n: useQuery(annotationsReportQuery(id)),
  };
}
