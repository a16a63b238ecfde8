/** URL paths and query keys of the desk's own tools (the admin's actions on a case, its filters). */
export const deskPaths = {
  refund: (id: string) => `/api/admin/cases/${encodeURIComponent(id)}/refund`,
  reassign: (id: string) => `/api/admin/cases/${encodeURIComponent(id)}/reassign`,
  release: (id: string) => `/api/cases/${encodeURIComponent(id)}/release`,
  filters: "/api/admin/case-filters",
  approvedExperts: "/api/admin/experts?status=approved",
};

export const deskKeys = {
  filters: ["desk", "filters"] as const,
  approvedExperts: ["desk", "approved-experts"] as const,
};

/** Client pages the desk links to. */
export const deskPages = {
  billingOf: (shopId: string) => `/billing?shopId=${encodeURIComponent(shopId)}`,
  caseOf: (id: string) => `/cases/${encodeURIComponent(id)}`,
};
