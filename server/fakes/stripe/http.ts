/** The fake's HTTP plumbing: request bodies and the JSON / HTML answers. */
import type { IncomingMessage, ServerResponse } from "node:http";
import { FakeStripeError } from "./errors";

const MAX_BODY_BYTES = 1024 * 1024;

export function readBody(req: IncomingMessage): Promise<string> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    req.on("data", (c: Buffer) => {
      size += c.length;
      if (size > MAX_BODY_BYTES) {
        reject(new FakeStripeError(413, { type: "invalid_request_error", message: "Request body too large." }));
        req.destroy();
        return;
      }
      chunks.push(c);
    });
    req.on("end", () => resolve(Buffer.concat(chunks).toString("utf8")));
    req.on("error", reject);
  });
}

export function send(res: ServerResponse, status: number, body: string, headers: Record<string, string> = {}): void {
  res.writeHead(status, { "content-type": "application/json", "content-length": Buffer.byteLength(body), ...headers });
  res.end(body);
}

export function sendHtml(res: ServerResponse, status: number, html: string): void {
  res.writeHead(status, {
    "content-type": "text/html; charset=utf-8",
    "cache-control": "no-store",
    "content-security-policy": "default-src 'none'; style-src 'unsafe-inline'; base-uri 'none'; frame-ancestors 'none'",
    "x-content-type-options": "nosniff",
    "referrer-policy": "no-referrer",
  });
  res.end(html);
}

export function errorJson(err: FakeStripeError, requestId: string): string {
  return JSON.stringify(
    { error: { ...err.body, request_log_url: `https://dashboard.stripe.com/test/logs/${requestId}` } },
    null,
    2,
  );
}
