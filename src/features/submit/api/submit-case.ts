import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { submitCaseSchema, type SubmitCaseInput } from "../../../../shared/schemas/queue";
import { submitPaths } from "./paths";

import type { CheckoutView as CheckoutStarted } from "../../../../shared/views/workflow";
export type { CheckoutStarted };

export const submitCase = (id: string, input: SubmitCaseInput) =>
  api.post<CheckoutStarted>(submitPaths.submit(id), submitCaseSchema.parse(input));

export function useSubmitCase(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SubmitCaseInput) => submitCase(id, input),
    onSettled: () => qc.invalidateQueries({ queryKey: ["cases"] }),
  });
}
