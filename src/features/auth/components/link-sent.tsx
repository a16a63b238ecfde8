import type { ReactNode } from "react";
import { Link } from "react-router-dom";
import { Notice, buttonClass } from "../../../components/ui/form";
import { authPages } from "../api/paths";
import { AuthLayout } from "./auth-layout";
import { DevMailHint } from "./dev-mail-hint";

/** The page shown after a sign-up or an application: a confirmation link went to `email`. */
export function LinkSent({
  title,
  noticeTitle,
  email,
  children,
}: {
  title: string;
  noticeTitle: string;
  email: string;
  children: ReactNode;
}) {
  return (
    <AuthLayout title={title}>
      <Notice tone="success" title={noticeTitle}>
        We have sent a confirmation link to <strong>{email}</strong>. {children}
        <DevMailHint />
      </Notice>
      <p className="mt-4">
        <Link className={buttonClass.secondary} to={authPages.signIn}>
          Go to sign-in
        </Link>
      </p>
    </AuthLayout>
  );
}
