import type { FieldValues, Path, UseFormSetError } from "react-hook-form";
import { ApiError } from "../../../lib/api-client";

/**
 * Puts the server's field errors (400 `details.fields`) on the form's fields; returns the message
 * to show above the form for everything else (or null when every error found a field).
 */
export function applyServerErrors<T extends FieldValues>(
  err: unknown,
  setError: UseFormSetError<T>,
  fields: readonly string[],
): string | null {
  if (err instanceof ApiError) {
    const list = err.details?.fields ?? [];
    let unplaced = 0;
    for (const f of list) {
      const name = f.path.split(".")[0];
      if (fields.includes(name)) setError(name as Path<T>, { type: "server", message: f.message });
      else unplaced++;
    }
    if (list.length > 0 && unplaced === 0) return null;
    return err.message;
  }
  return "Burnline could not be reached. Check the connection and try again.";
}
