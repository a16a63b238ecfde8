import { useMutation } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { shopSignUpSchema, type ShopSignUpInput } from "../../../../shared/schemas/auth";
import { authPaths } from "./paths";

export const signUpShop = (input: ShopSignUpInput) =>
  api.post<{ ok: true; message: string }>(authPaths.shopSignUp, shopSignUpSchema.parse(input));

export const useSignUpShop = () => useMutation({ mutationFn: signUpShop });
