/** URL paths of the expert's queue, defined once. */
export const queuePaths = {
  queue: "/api/queue",
  availability: "/api/queue/availability",
  claim: (id: string) => `/api/cases/${encodeURIComponent(id)}/claim`,
  release: (id: string) => `/api/cases/${encodeURIComponent(id)}/release`,
  requestData: (id: string) => `/api/cases/${encodeURIComponent(id)}/request-data`,
  answer: (id: string) => `/api/cases/${encodeURIComponent(id)}/answer`,
  workflow: (id: string) => `/api/cases/${encodeURIComponent(id)}/workflow`,
};

export const queuePages = { queue: "/queue", caseOf: (id: string) => `/cases/${encodeURIComponent(id)}` };

export const queueKeys = {
  queue: ["queue"] as const,
  /** the same key as the submit feature's workflow query (both fetch GET …/workflow) */
  workflow: (id: string) => ["cases", "workflow", id] as const,
};
