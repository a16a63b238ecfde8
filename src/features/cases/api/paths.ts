/** The cases API's URL paths, defined once. */
export const casePaths = {
  list: "/api/cases",
  one: (id: string) => `/api/cases/${encodeURIComponent(id)}`,
  photos: (id: string) => `/api/cases/${encodeURIComponent(id)}/photos`,
};

/** The client pages of the cases area. */
export const casePages = {
  list: "/cases",
  new: "/cases/new",
  one: (id: string) => `/cases/${encodeURIComponent(id)}`,
  edit: (id: string) => `/cases/${encodeURIComponent(id)}/edit`,
};

/** Query keys: everything about cases lives under ["cases"], so one invalidation refreshes it all. */
export const caseKeys = {
  all: ["cases"] as const,
  lists: () => ["cases", "list"] as const,
  list: (params: object) => ["cases", "list", params] as const,
  detail: (id: string) => ["cases", "detail", id] as const,
};
