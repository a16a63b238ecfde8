import { useMutation } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { requestPasswordResetSchema, type RequestPasswordResetInput } from "../../../../shared/schemas/auth";
import { authPaths } from "./paths";

export const requestPasswordReset = (input: RequestPasswordResetInput) =>
  api.post<{ status: boolean; message: string }>(
    authPaths.requestPasswordReset,
    requestPasswordResetSchema.parse(input),
  );

export const useRequestPasswordReset = () => useMutation({ mutationFn: requestPasswordReset });
