import request from "supertest";
import type TestAgent from "supertest/lib/agent";

/** Anything with the port of a running server (TestServer, RunningServer). */
export interface HasPort {
  port: number;
}

export type SignedInAgent = TestAgent & {
  /** the Cookie header value carrying the session, e.g. for socket.io clients */
  cookie: string;
  user: { id: string; email: string };
};

export function baseUrl(server: HasPort): string {
  return `http://127.0.0.1:${server.port}`;
}

let ipCounter = 0;
/**
 * A distinct client address per call (sent as X-Forwarded-For, which the server trusts only from
 * loopback), so helpers that sign in many users do not trip the real sign-in rate limit.
 */
export function nextTestIp(): string {
  ipCounter += 1;
  return `10.${(process.pid >> 8) & 255}.${(ipCounter >> 8) & 255}.${ipCounter & 255}`;
}

/**
 * Signs in through the real endpoint (POST /api/auth/sign-in/email) and returns a supertest agent
 * holding the session cookie. Throws when the sign-in does not succeed.
 */
export async function signIn(server: HasPort, creds: { email: string; password: string }): Promise<SignedInAgent> {
  const agent = request.agent(baseUrl(server));
  const res = await agent
    .post("/api/auth/sign-in/email")
    .set("X-Forwarded-For", nextTestIp())
    .send({ email: creds.email, password: creds.password });
  if (res.status !== 200) throw new Error(`signIn(${creds.email}) failed: ${res.status} ${JSON.stringify(res.body)}`);
  const setCookie = ([] as string[]).concat(res.headers["set-cookie"] ?? []);
  const cookie = setCookie.map((c) => c.split(";")[0]).join("; ");
  return Object.assign(agent, { cookie, user: { id: res.body.user?.id as string, email: creds.email } });
}
