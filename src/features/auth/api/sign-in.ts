import { useMutation, useQueryClient } from "@tanstack/react-query";
import { api } from "../../../lib/api-client";
import { signInSchema, type SignInInput } from "../../../../shared/schemas/auth";
import { authKeys, authPages, authPaths } from "./paths";
import { getMe } from "./get-me";

export function signIn(input: SignInInput) {
  const body = signInSchema.parse({ ...input, callbackURL: `${authPages.signIn}?verified=1` });
  return api.post<{ user: { id: string; email: string } }>(authPaths.signIn, body);
}

/** Signs in; on success the cached user and everything fetched as someone else is dropped. */
export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: signIn,
    onSuccess: async () => {
      const me = await getMe();
      // keep the "me" query itself (the shell observes it); drop data fetched as someone else
      qc.removeQueries({ predicate: (q) => q.queryKey[0] !== authKeys.config[0] && q.queryKey[0] !== authKeys.me[0] });
      qc.setQueryData(authKeys.me, me);
    },
  });
}
