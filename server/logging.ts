/**
 * Logs: one readable line per event in development (pino-pretty, a development dependency),
 * one JSON object per line elsewhere (production, tests) for log collectors. LOG_FORMAT overrides
 * the choice. Successful requests are logged at `debug` in development so that starting the app
 * (and seeding the demo, which talks to the local payment fake) does not scroll dozens of request
 * lines past; failures and server errors are always logged.
 */
import type { IncomingMessage } from "node:http";
import { pino, type DestinationStream, type Level, type Logger } from "pino";
import type { Env } from "./env";

export type LogFormat = "pretty" | "json";

export function logFormat(env: Pick<Env, "NODE_ENV" | "LOG_FORMAT">): LogFormat {
  return env.LOG_FORMAT ?? (env.NODE_ENV === "development" ? "pretty" : "json");
}

/** Builds the process logger. `destination` (tests) receives the formatted lines instead of stdout. */
export async function createLogger(
  env: Pick<Env, "NODE_ENV" | "LOG_FORMAT" | "LOG_LEVEL">,
  destination?: DestinationStream,
): Promise<Logger> {
  const options = { level: env.LOG_LEVEL };
  if (logFormat(env) === "pretty") {
    try {
      const { default: pretty } = await import("pino-pretty");
      const stream = pretty({
        colorize: destination ? false : !!process.stdout.isTTY,
        translateTime: "SYS:HH:MM:ss",
        ignore: "pid,hostname,req,res,responseTime",
        messageFormat: (log, messageKey) => requestLine(log) ?? String(log[messageKey] ?? ""),
        singleLine: true,
        sync: true,
        ...(destination ? { destination: destination as unknown as NodeJS.WritableStream } : {}),
      });
      return pino(options, stream);
    } catch {
      const fallback = pino(options, destination);
      fallback.warn("pino-pretty is not installed (it is a development dependency); logging JSON");
      return fallback;
    }
  }
  return destination ? pino(options, destination) : pino(options);
}

/** "POST /api/cases 201 12 ms" for pino-http's request lines in the pretty format. */
function requestLine(log: Record<string, unknown>): string | null {
  const req = log.req as { method?: string; url?: string } | undefined;
  const res = log.res as { statusCode?: number } | undefined;
  if (!req?.method || !res) return null;
  return `${req.method} ${req.url} ${res.statusCode ?? ""} ${log.responseTime ?? "?"} ms`;
}

/** The level of pino-http's line for one finished request. */
export function requestLogLevel(env: Pick<Env, "NODE_ENV">) {
  return (_req: IncomingMessage, res: { statusCode: number }, err?: unknown): Level => {
    if (err || res.statusCode >= 500) return "error";
    if (res.statusCode >= 400) return "info";
    return env.NODE_ENV === "development" ? "debug" : "info";
  };
}
