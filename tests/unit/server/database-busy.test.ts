/**
 * A unit the libSQL server rolled back (its lock taken back after TRANSACTION_TIMEOUT, see
 * unit-of-work.test.ts for the server's own behaviour) is a temporary condition of the server, not
 * a fault of the request: RFC 9110 §15.6.4 (503 Service Unavailable: "the server is currently
 * unable to handle the request due to a temporary overload … the server MAY send a Retry-After
 * header field"). The answer keeps the API's error shape (docs/api.md, "A busy database").
 */
import express from "express";
import request from "supertest";
import { describe, expect, it } from "vitest";
import { errorHandler } from "../../../server/http/error-handler";
import { TransactionTimeoutError } from "../../../server/db/unit-of-work";

describe("a unit rolled back by the libSQL server", () => {
  it("answers 503 database_busy with Retry-After, in the API's error shape", async () => {
    const app = express();
    app.post("/change", () => {
      throw new TransactionTimeoutError(Object.assign(new Error("stream expired"), { code: "TRANSACTION_TIMEOUT" }));
    });
    app.use(errorHandler);
    const res = await request(app).post("/change");
    expect(res.status).toBe(503);
    expect(res.headers["retry-after"]).toBe("1");
    expect(res.body).toEqual({ error: { code: "database_busy", message: expect.stringMatching(/nothing was saved/) } });
  });
});
