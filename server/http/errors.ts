/** An error with an HTTP status that the error handler turns into `{ error: { code, message, details? } }`. */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
    this.name = "HttpError";
  }
}

export const badRequest = (code: string, message: string, details?: unknown) =>
  new HttpError(400, code, message, details);
export const unauthorized = (message = "Sign in to continue.") => new HttpError(401, "unauthenticated", message);
export const forbidden = (message = "Your role does not allow this.") => new HttpError(403, "forbidden", message);
/** Also used for another tenant's records: they answer 404, not 403, so their existence is not disclosed. */
export const notFound = (what = "Record") => new HttpError(404, "not_found", `${what} not found.`);
export const conflict = (code: string, message: string, details?: unknown) =>
  new HttpError(409, code, message, details);
export const tooLarge = (message: string) => new HttpError(413, "too_large", message);
export const unsupported = (message: string) => new HttpError(415, "unsupported_type", message);
