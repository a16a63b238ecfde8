import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { expertAvailabilitySchema } from "../../../../shared/schemas/auth";
import { expertKeys, expertPaths } from "./paths";
import type { ExpertAbilities, ExpertProfile } from "./types";

export const setAvailability = (available: boolean) =>
  api.patch<{ profile: ExpertProfile; abilities: ExpertAbilities }>(
    expertPaths.me,
    expertAvailabilitySchema.parse({ available }),
  );

export function useSetAvailability() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: setAvailability,
    onSuccess: (data) => qc.setQueryData(expertKeys.me, data),
  });
}
