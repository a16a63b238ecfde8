/**
 * The server registers the password estimator (shared/domain/password-estimator.ts) as soon as
 * this module is imported (server/auth/auth.ts imports it), so no request is ever checked without
 * it. Building its dictionaries takes a few hundred milliseconds, so the estimator is built on
 * first use or by `warmPasswordEstimator()` at start, whichever comes first; readiness waits for it.
 */
import * as core from "@zxcvbn-ts/core";
import * as common from "@zxcvbn-ts/language-common";
import * as en from "@zxcvbn-ts/language-en";
import { buildPasswordEstimator } from "../../shared/domain/password-estimator";
import { setPasswordEstimator, type PasswordEstimator } from "../../shared/domain/password-strength";

let built: PasswordEstimator | null = null;
const estimator = (): PasswordEstimator => (built ??= buildPasswordEstimator({ core, common, en }));

setPasswordEstimator((password, inputs) => estimator()(password, inputs));

/** Builds the estimator now (on the next turn, so the caller is not held up). */
export function warmPasswordEstimator(): Promise<void> {
  return new Promise((resolve, reject) =>
    setImmediate(() => {
      try {
        estimator();
        resolve();
      } catch (err) {
        reject(err);
      }
    }),
  );
}
