import { useNavigate } from "react-router-dom";
import { useSignOut } from "../api/sign-out";
import { authPages } from "../api/paths";

export function SignOutButton({ className }: { className?: string }) {
  const signOut = useSignOut();
  const navigate = useNavigate();
  return (
    <button
      type="button"
      className={className ?? "min-h-11 rounded-md px-3 py-2 text-ink-200 hover:bg-ink-800"}
      disabled={signOut.isPending}
      onClick={() => signOut.mutate(undefined, { onSettled: () => navigate(authPages.signIn, { replace: true }) })}
    >
      Sign out
    </button>
  );
}
