import { useConfig } from "../api/get-config";
import { authPages } from "../api/paths";

/** In development the mail goes to a local catcher: say where to read it. */
export function DevMailHint() {
  const config = useConfig();
  if (!config.data?.devMail) return null;
  return (
    <p className="mt-2 text-sm text-ink-600">
      Development: mail does not leave this machine. Read it in the{" "}
      <a className="font-semibold text-kiln-700 underline" href={authPages.devMail} target="_blank" rel="noreferrer">
        caught-mail inbox
      </a>
      .
    </p>
  );
}
