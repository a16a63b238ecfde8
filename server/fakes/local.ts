/**
 * The local fakes started once for several app nodes (`npm run cluster`): one SMTP catcher and one
 * Stripe-compatible server, both on loopback, keeping their files under the shared data folder
 * exactly where a single `npm start` keeps them (DATA_DIR/mail, DATA_DIR/fake-stripe.json). The
 * nodes are pointed at them through the ordinary variables (`nodeEnv`), so no node starts its own.
 */
import path from "node:path";
import { startMailCatcher, type MailCatcher } from "./smtp";
import { startFakeStripe, type FakeStripe } from "./stripe/index";

export interface LocalFakesOptions {
  /** the shared data folder (DATA_DIR) */
  dataDir: string;
  /** 0 picks a free port */
  mailPort: number;
  /** 0 picks a free port */
  stripePort: number;
  /** where the Stripe fake delivers webhooks: the balancer's address, so any live node takes them */
  webhookUrl: string;
  webhookSecret: string;
  /** keep the Stripe fake's state in DATA_DIR/fake-stripe.json (default true) */
  persist?: boolean;
  log?: (line: string) => void;
}

export interface LocalFakes {
  mail: MailCatcher;
  stripe: FakeStripe;
  /** the variables that point an app node at these fakes instead of starting its own */
  nodeEnv: { SMTP_HOST: string; SMTP_PORT: string; STRIPE_API_BASE: string; STRIPE_WEBHOOK_SECRET: string };
  close(): Promise<void>;
}

export async function startLocalFakes(opts: LocalFakesOptions): Promise<LocalFakes> {
  const host = "127.0.0.1";
  const mail = await startMailCatcher({ port: opts.mailPort, host, storeDir: path.join(opts.dataDir, "mail") });
  let stripe: FakeStripe;
  try {
    stripe = await startFakeStripe({
      port: opts.stripePort,
      host,
      webhookSecret: opts.webhookSecret,
      webhookUrl: opts.webhookUrl,
      stateFile: opts.persist === false ? undefined : path.join(opts.dataDir, "fake-stripe.json"),
      log: opts.log,
    });
  } catch (err) {
    await mail.close();
    throw err;
  }
  return {
    mail,
    stripe,
    nodeEnv: {
      SMTP_HOST: host,
      SMTP_PORT: String(mail.port),
      STRIPE_API_BASE: stripe.url,
      STRIPE_WEBHOOK_SECRET: opts.webhookSecret,
    },
    async close() {
      await stripe.close();
      await mail.close();
    },
  };
}
