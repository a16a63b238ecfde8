/**
 * Rendering a piece of the client as the app does (a QueryClient, a router) and a fake of the
 * server at the fetch boundary: each request is recorded and answered by the test's own routes.
 */
import type { ReactElement } from "react";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { MemoryRouter } from "react-router-dom";
import { render } from "@testing-library/react";
import { vi } from "vitest";

export interface Sent {
  method: string;
  url: string;
  body: unknown;
}

type Handler = (req: Sent) => { status?: number; body?: unknown } | undefined;

/** Replaces fetch; answers by `routes` ("GET /api/…" → handler), 404 for anything else. */
export function fakeServer(routes: Record<string, Handler>): { sent: Sent[] } {
  const sent: Sent[] = [];
  vi.stubGlobal("fetch", async (input: RequestInfo | URL, init?: RequestInit) => {
    const url = typeof input === "string" ? input : input instanceof URL ? input.toString() : input.url;
    const method = (init?.method ?? "GET").toUpperCase();
    const req: Sent = { method, url, body: init?.body ? JSON.parse(String(init.body)) : undefined };
    sent.push(req);
    const h = routes[`${method} ${url}`];
    const out = h
      ? h(req)
      : { status: 404, body: { error: { code: "not_found", message: `No route ${method} ${url}` } } };
    const status = out?.status ?? 200;
    return new Response(out?.body === undefined ? null : JSON.stringify(out.body), {
      status,
      headers: { "Content-Type": "application/json" },
    });
  });
  return { sent };
}

export function renderWithApp(ui: ReactElement, path = "/") {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false }, mutations: { retry: false } } });
  return render(
    <QueryClientProvider client={client}>
      <MemoryRouter initialEntries={[path]}>{ui}</MemoryRouter>
    </QueryClientProvider>,
  );
}
