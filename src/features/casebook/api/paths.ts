/** The casebook API's URL paths and the client's pages, defined once. */
const enc = encodeURIComponent;

export const casebookPaths = {
  search: "/api/casebook/search",
  entry: (id: string) => `/api/casebook/${enc(id)}`,
  thumbnail: (id: string) => `/api/casebook/${enc(id)}/thumbnail.svg`,
  vote: (id: string) => `/api/casebook/${enc(id)}/vote`,
  moderate: (id: string) => `/api/admin/casebook/${enc(id)}`,
  hidden: "/api/admin/casebook/hidden",
  similar: (caseId: string, limit?: number) => `/api/cases/${enc(caseId)}/similar${limit ? `?limit=${limit}` : ""}`,
  expertRecord: (expertId: string) => `/api/experts/${enc(expertId)}/record`,
};

export const casebookPages = {
  search: "/casebook",
  entry: (id: string) => `/casebook/${enc(id)}`,
};

/** Query keys: everything of the casebook under ["casebook"]. */
export const casebookKeys = {
  all: ["casebook"] as const,
  search: (params: object) => ["casebook", "search", params] as const,
  entry: (id: string) => ["casebook", "entry", id] as const,
  hidden: ["casebook", "hidden"] as const,
  similar: (caseId: string) => ["casebook", "similar", caseId] as const,
  expertRecord: (expertId: string) => ["casebook", "expert-record", expertId] as const,
};
