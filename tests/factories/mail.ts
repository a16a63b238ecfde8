import type { CaughtMail } from "../../server/fakes/smtp";

/** A server that runs the local SMTP catcher (TestServer, RunningServer). */
export interface HasCatcher {
  mailCatcher: {
    waitFor(p: (m: CaughtMail) => boolean, timeoutMs?: number): Promise<CaughtMail>;
    messages(): CaughtMail[];
  } | null;
}

/** Waits for the next mail to `to` whose subject contains `subject` (case-insensitive), caught after `since`. */
export async function waitForMail(server: HasCatcher, to: string, subject = "", since?: Date): Promise<CaughtMail> {
  if (!server.mailCatcher) throw new Error("waitForMail: this server has no mail catcher (SMTP_HOST is set)");
  const addr = to.toLowerCase();
  const after = since?.toISOString() ?? "";
  return server.mailCatcher.waitFor(
    (m) => m.to.includes(addr) && m.subject.toLowerCase().includes(subject.toLowerCase()) && m.date >= after,
  );
}

/** The first link of a mail whose path starts with `pathPrefix`, as a path + query to request from the test server. */
export function linkPath(mail: CaughtMail, pathPrefix: string): string {
  const link = mail.links.map((l) => new URL(l)).find((u) => u.pathname.startsWith(pathPrefix));
  if (!link) throw new Error(`no link to ${pathPrefix} in mail "${mail.subject}": ${mail.links.join(", ")}`);
  return link.pathname + link.search;
}

/** The value of query parameter `name` in the first link to `pathPrefix`. */
export function linkParam(mail: CaughtMail, pathPrefix: string, name: string): string {
  const value = new URL(linkPath(mail, pathPrefix), "http://x").searchParams.get(name);
  if (!value) throw new Error(`link to ${pathPrefix} has no ${name}`);
  return value;
}
