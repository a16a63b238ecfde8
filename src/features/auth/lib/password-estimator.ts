import { setPasswordEstimator } from "../../../../shared/domain/password-strength";

let loading: Promise<void> | null = null;

/**
 * Loads the password estimator's dictionaries (several hundred kilobytes compressed) with a
 * dynamic import, so they are fetched only when a form that sets a password is shown, never with
 * the first page. Once loaded, the forms' shared schemas apply the same strength rule as the server.
 */
export function loadPasswordEstimator(): Promise<void> {
  loading ??= import("../../../../shared/domain/password-estimator").then(
    ({ createPasswordEstimator }) => setPasswordEstimator(createPasswordEstimator()),
    (err: unknown) => {
      loading = null;
      throw err;
    },
  );
  return loading;
}
