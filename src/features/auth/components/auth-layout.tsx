import type { ReactNode } from "react";
import { LogoMark } from "../../../components/layout/logo";

/** The frame of the signed-out pages: a narrow card, readable on a phone held in one hand. */
export function AuthLayout({
  title,
  intro,
  children,
  wide,
}: {
  title: string;
  intro?: ReactNode;
  children: ReactNode;
  wide?: boolean;
}) {
  return (
    <div className={`mx-auto w-full ${wide ? "max-w-2xl" : "max-w-md"} py-2 sm:py-6`}>
      <div className="rounded-2xl border border-ink-200 bg-white p-5 shadow-sm sm:p-7">
        <div className="mb-5 flex items-center gap-3">
          <LogoMark className="h-10 w-10 shrink-0" />
          <div>
            <h1 className="text-xl font-bold leading-tight text-ink-900 sm:text-2xl">{title}</h1>
            {intro ? <p className="mt-0.5 text-sm text-ink-600">{intro}</p> : null}
          </div>
        </div>
        {children}
      </div>
    </div>
  );
}
