import { useMutation } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { expertApplicationSchema, type ExpertApplicationInput } from "../../../../shared/schemas/auth";
import { authPaths } from "./paths";

export const applyExpert = (input: ExpertApplicationInput) =>
  api.post<{ ok: true; message: string }>(authPaths.expertApply, expertApplicationSchema.parse(input));

export const useApplyExpert = () => useMutation({ mutationFn: applyExpert });
