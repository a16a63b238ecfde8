/** The one place the client talks HTTP to the server. Errors carry the server's `{ error }` body. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: { fields?: { path: string; message: string }[] } & Record<string, unknown>,
  ) {
    super(message);
  }
}

async function handle<T>(res: Response): Promise<T> {
  if (res.status === 204) return undefined as T;
  const text = await res.text();
  const body = text ? safeJson(text) : null;
  if (!res.ok) {
    // the server answers `{ error: { code, message, details? } }`; anything else falls back below
    const b = body as (ApiErrorFields & { error?: ApiErrorFields }) | null;
    const e = b?.error ?? b;
    throw new ApiError(
      res.status,
      e?.code ?? "http_" + res.status,
      e?.message ?? res.statusText ?? "Request failed",
      e?.details,
    );
  }
  return body as T;
}

interface ApiErrorFields {
  code?: string;
  message?: string;
  details?: ApiError["details"];
}

function safeJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return { error: { code: "bad_response", message: text.slice(0, 200) } };
  }
}

export const api = {
  get: <T>(url: string) => fetch(url, { credentials: "same-origin" }).then((r) => handle<T>(r)),
  send: <T>(method: "POST" | "PUT" | "PATCH" | "DELETE", url: string, body?: unknown) =>
    fetch(url, {
      method,
      credentials: "same-origin",
      headers: body === undefined ? undefined : { "Content-Type": "application/json" },
      body: body === undefined ? undefined : JSON.stringify(body),
    }).then((r) => handle<T>(r)),
  post: <T>(url: string, body?: unknown) => api.send<T>("POST", url, body),
  put: <T>(url: string, body?: unknown) => api.send<T>("PUT", url, body),
  patch: <T>(url: string, body?: unknown) => api.send<T>("PATCH", url, body),
  del: <T>(url: string) => api.send<T>("DELETE", url),
};

/**
 * Multipart upload with progress (fetch has no upload progress; XMLHttpRequest does).
 * Resolves with the parsed JSON, rejects with ApiError.
 */
export function upload<T>(
  url: string,
  form: FormData,
  onProgress?: (fraction: number) => void,
  signal?: AbortSignal,
): Promise<T> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open("POST", url);
    xhr.withCredentials = true;
    xhr.upload.onprogress = (e) => e.lengthComputable && onProgress?.(e.loaded / e.total);
    xhr.onload = () => {
      const res = new Response(xhr.responseText || null, { status: xhr.status });
      handle<T>(res).then(resolve, reject);
    };
    xhr.onerror = () =>
      reject(new ApiError(0, "network", "The upload was interrupted. Check the connection and try again."));
    xhr.onabort = () => reject(new ApiError(0, "aborted", "Upload cancelled."));
    signal?.addEventListener("abort", () => xhr.abort());
    xhr.send(form);
  });
}
