/** The team API's URL paths, the page and the query keys, defined once. */
export const teamPaths = {
  team: (shopId: string) => `/api/shops/${encodeURIComponent(shopId)}/team`,
  invites: (shopId: string) => `/api/shops/${encodeURIComponent(shopId)}/invites`,
  invite: (shopId: string, inviteId: string) =>
    `/api/shops/${encodeURIComponent(shopId)}/invites/${encodeURIComponent(inviteId)}`,
  member: (shopId: string, userId: string) =>
    `/api/shops/${encodeURIComponent(shopId)}/members/${encodeURIComponent(userId)}`,
};

export const teamPages = { team: "/team", billing: "/billing" };

export const teamKeys = {
  all: ["team"] as const,
  team: (shopId: string) => ["team", shopId] as const,
};
