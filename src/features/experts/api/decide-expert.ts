import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { expertDecisionSchema } from "../../../../shared/schemas/auth";
import { expertKeys, expertPaths } from "./paths";
import type { ExpertProfile } from "./types";

export const decideExpert = (userId: string, verb: "approve" | "reject", note?: string) =>
  api.post<{ profile: ExpertProfile }>(
    expertPaths.decide(userId, verb),
    expertDecisionSchema.parse({ note: note || undefined }),
  );

export function useDecideExpert() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { userId: string; verb: "approve" | "reject"; note?: string }) =>
      decideExpert(v.userId, v.verb, v.note),
    onSuccess: () => qc.invalidateQueries({ queryKey: expertKeys.all }),
  });
}
