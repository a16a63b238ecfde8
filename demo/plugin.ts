/**
 * The demo as the server takes it (server/context.ts DemoPlugin): the accounts the sign-in page
 * shows and the seed that runs before the server reports ready. The entry point (scripts/start.ts)
 * and tests that want the demo pass it to startServer; nothing under server/ imports demo/.
 */
import type { DemoPlugin } from "../server/context";
import { DEMO_PASSWORD, DEMO_SIGN_INS } from "./sign-ins";

export const demoPlugin: DemoPlugin = {
  password: DEMO_PASSWORD,
  signIns: DEMO_SIGN_INS,
  async seedIfEmpty(ctx) {
    const { seedDemoIfEmpty } = await import("./seed");
    return seedDemoIfEmpty(ctx);
  },
};
