import { useMutation } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { resetPasswordSchema, type ResetPasswordInput } from "../../../../shared/schemas/auth";
import { authPaths } from "./paths";

export const resetPassword = (input: ResetPasswordInput) =>
  api.post<{ status: boolean }>(authPaths.resetPassword, resetPasswordSchema.parse(input));

export const useResetPassword = () => useMutation({ mutationFn: resetPassword });
