import type { ExpertStatus } from "../../../../shared/schemas/auth";

export const expertPaths = {
  me: "/api/experts/me",
  list: (status: ExpertStatus) => `/api/admin/experts?status=${status}`,
  decide: (userId: string, verb: "approve" | "reject") => `/api/admin/experts/${encodeURIComponent(userId)}/${verb}`,
};

export const expertPages = { review: "/admin/experts", queue: "/queue" };

export const expertKeys = {
  all: ["experts"] as const,
  me: ["experts", "me"] as const,
  list: (status: ExpertStatus) => ["experts", "list", status] as const,
};
