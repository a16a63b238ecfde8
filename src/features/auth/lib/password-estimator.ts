import { setPasswordEstimator } from "../../../../shared/domain/password-strength";
import { buildPasswordEstimator, loadEstimatorLibraries } from "../../../../shared/domain/password-estimator";

let loading: Promise<void> | null = null;

/**
 * Loads the password estimator's dictionaries (several hundred kilobytes compressed) with a
 * dynamic import, so they are fetched only when a form that sets a password is shown, never with
 * the first page. Once loaded, the forms' shared schemas apply the same strength rule as the server.
 */
export function loadPasswordEstimator(): Promise<void> {
  loading ??= loadEstimatorLibraries().then(
    (libs) => setPasswordEstimator(buildPasswordEstimator(libs)),
    (err: unknown) => {
      loading = null;
      throw err;
    },
  );
  return loading;
}
