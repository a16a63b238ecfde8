/** URL paths of the paid workflow of a case, defined once. */
export const submitPaths = {
  pricing: "/api/pricing",
  submit: (id: string) => `/api/cases/${encodeURIComponent(id)}/submit`,
  payment: (id: string, sync = false) => `/api/cases/${encodeURIComponent(id)}/payment${sync ? "?sync=1" : ""}`,
  withdraw: (id: string) => `/api/cases/${encodeURIComponent(id)}/withdraw`,
  workflow: (id: string) => `/api/cases/${encodeURIComponent(id)}/workflow`,
  history: (id: string) => `/api/cases/${encodeURIComponent(id)}/history`,
  confirm: (id: string) => `/api/cases/${encodeURIComponent(id)}/confirm`,
  dataSent: (id: string) => `/api/cases/${encodeURIComponent(id)}/data-sent`,
  /** DELETE: a draft */
  one: (id: string) => `/api/cases/${encodeURIComponent(id)}`,
};

/** Under ["cases"], so anything that refreshes the cases also refreshes these. */
export const submitKeys = {
  pricing: ["pricing", "public"] as const,
  workflow: (id: string) => ["cases", "workflow", id] as const,
  history: (id: string) => ["cases", "history", id] as const,
};
