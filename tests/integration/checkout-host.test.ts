/**
 * The local payment fake's hosted checkout opens on the same host name as the app (issue 13,
 * first run: the app on `localhost`, the checkout on `127.0.0.1`). Cookies are kept per host name
 * (RFC 6265 §5.1.3, domain matching: "localhost" and "127.0.0.1" are different hosts), so a
 * checkout on the other name returns the browser to a page where it is signed out.
 */
import { afterAll, describe, expect, test } from "vitest";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createShopTeam, signIn } from "../factories/index";
import { insertDraftCase } from "../helpers/queue-flow";

const servers: TestServer[] = [];
afterAll(async () => {
  for (const s of servers) await s.close();
});

async function checkoutUrlOn(overrides: Record<string, string>): Promise<{ server: TestServer; url: URL }> {
  const server = await startTestServer(overrides);
  servers.push(server);
  const team = await createShopTeam(server, { technicians: 1 });
  const tech = await signIn(server, team.technicians[0]);
  const caseId = await insertDraftCase(server, { shopId: team.shop.id, createdBy: team.technicians[0].id });
  const res = await tech.post(`/api/cases/${caseId}/submit`).set("Origin", server.url).send({ tier: "standard" });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return { server, url: new URL(res.body.checkoutUrl) };
}

describe("the fake checkout follows the app's public address", () => {
  test("the app on localhost (the default public URL): the checkout opens on localhost", async () => {
    const { server, url } = await checkoutUrlOn({});
    expect(new URL(server.url).hostname).toBe("localhost");
    expect(url.hostname).toBe("localhost");
    expect(url.port).toBe(String(server.fakeStripe!.port));
    // and the page is really there under that name
    const page = await fetch(url);
    expect(page.status).toBe(200);
  });

  test("PUBLIC_URL on 127.0.0.1: the checkout opens on 127.0.0.1", async () => {
    const { url } = await checkoutUrlOn({ PUBLIC_URL: "http://127.0.0.1:3999" });
    expect(url.hostname).toBe("127.0.0.1");
  });
});
