import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import {
  answerSchema,
  availabilitySchema,
  requestDataSchema,
  type AnswerInput,
} from "../../../../shared/schemas/queue";
import { queueKeys, queuePaths } from "./paths";

import type { AnsweredView, AvailabilityView, CaseStateView as CaseState } from "../../../../shared/views/workflow";

export const claimCase = (id: string) => api.post<CaseState>(queuePaths.claim(id));
export const releaseCase = (id: string) => api.post<CaseState>(queuePaths.release(id));
export const requestData = (id: string, message: string) =>
  api.post<CaseState>(queuePaths.requestData(id), requestDataSchema.parse({ message }));
export const answerCase = (id: string, input: AnswerInput) =>
  api.post<AnsweredView>(queuePaths.answer(id), answerSchema.parse(input));
export const setAvailability = (available: boolean) =>
  api.put<AvailabilityView>(queuePaths.availability, availabilitySchema.parse({ available }));

/** Every queue mutation refreshes the queue and everything under ["cases"]. */
function useSettle() {
  const qc = useQueryClient();
  return () =>
    Promise.all([qc.invalidateQueries({ queryKey: queueKeys.queue }), qc.invalidateQueries({ queryKey: ["cases"] })]);
}

export function useClaimCase() {
  const settle = useSettle();
  return useMutation({ mutationFn: (id: string) => claimCase(id), onSettled: settle });
}

export function useExpertCaseActions(id: string) {
  const settle = useSettle();
  return {
    release: useMutation({ mutationFn: () => releaseCase(id), onSettled: settle }),
    requestData: useMutation({ mutationFn: (message: string) => requestData(id, message), onSettled: settle }),
    answer: useMutation({ mutationFn: (input: AnswerInput) => answerCase(id, input), onSettled: settle }),
  };
}

export function useSetAvailability() {
  const settle = useSettle();
  return useMutation({ mutationFn: (available: boolean) => setAvailability(available), onSettled: settle });
}
