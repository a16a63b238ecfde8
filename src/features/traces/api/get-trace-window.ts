import { queryOptions, useQueries, useQuery } from "@tanstack/react-query";
import { ApiError } from "../../../lib/api-client";
import type { TraceWindowData } from "../types";

export interface TraceWindowParams {
  traceId: string;
  t0: number;
  t1: number;
  /** number of min/max buckets */
  width: number;
}

export const traceWindowUrl = ({ traceId, t0, t1, width }: TraceWindowParams) =>
  `/api/traces/${encodeURIComponent(traceId)}/window?t0=${encodeURIComponent(String(t0))}&t1=${encodeURIComponent(String(t1))}&width=${Math.round(width)}`;

interface ErrorBody {
  error?: { code?: string; message?: string; details?: ConstructorParameters<typeof ApiError>[3] };
}

function parseBody(text: string): unknown {
  try {
    return text ? JSON.parse(text) : null;
  } catch {
    return null;
  }
}

/** Fetches one window; a superseded request is cancelled through `signal`. Errors carry the server's `{ error }`. */
export async function getTraceWindow(p: TraceWindowParams, signal?: AbortSignal): Promise<TraceWindowData> {
  const r = await fetch(traceWindowUrl(p), { credentials: "same-origin", signal });
  const body = parseBody(await r.text());
  if (!r.ok || !body) {
    const e = (body as ErrorBody | null)?.error;
    throw new ApiError(
      r.status,
      e?.code ?? "http_" + r.status,
      e?.message ?? "This part of the trace could not be loaded.",
      e?.details,
    );
  }
  return body as TraceWindowData;
}

const traceIdOf = (key: readonly unknown[] | undefined) => (key ? key[1] : undefined);

/**
 * Query options; the key holds the trace, the window and the bucket count. While the next window of
 * the same trace loads, the last one stays on screen (never another trace's).
 */
export const traceWindowQuery = (p: TraceWindowParams | null, slot = 0) =>
  queryOptions({
    // a disabled slot gets its own key so that several idle slots are not duplicates
    queryKey: (p
      ? ["traces", p.traceId, "window", p.t0, p.t1, p.width]
      : ["traces", "", "window", "idle", slot]) as readonly unknown[],
    queryFn: ({ signal }) => getTraceWindow(p!, signal),
    enabled: p != null,
    staleTime: Infinity,
    gcTime: 60_000,
    placeholderData: (prev: TraceWindowData | undefined, prevQuery) =>
      p && traceIdOf(prevQuery?.queryKey) === p.traceId ? prev : undefined,
  });

export const useTraceWindow = (p: TraceWindowParams | null) => useQuery(traceWindowQuery(p));

/** Several windows at once (overlay mode), each keeping its previous data while the next loads. */
export const useTraceWindows = (ps: (TraceWindowParams | null)[]) =>
  useQueries({ queries: ps.map((p, i) => traceWindowQuery(p, i)) });

export interface WindowResult {
  data: TraceWindowData | undefined;
  loading: boolean;
  error: Error | null;
}

const combineWindows = (
  results: { data?: TraceWindowData; isFetching: boolean; error: Error | null }[],
): WindowResult[] => results.map((r) => ({ data: r.data, loading: r.isFetching, error: r.error }));

/** Several windows, combined into one stable array (it changes only when a result does). */
export const useTraceWindowResults = (ps: (TraceWindowParams | null)[]): WindowResult[] =>
  useQueries({ queries: ps.map((p, i) => traceWindowQuery(p, i)), combine: combineWindows });
