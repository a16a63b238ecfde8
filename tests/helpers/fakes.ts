/**
 * Start the local Stripe fake and the SMTP catcher for a test (random ports on 127.0.0.1) and
 * stop them afterwards, plus a tiny webhook receiver for tests that have no app server.
 *
 *   const fakes = useFakes();                 // fresh fakes for every test (beforeEach/afterEach)
 *   fakes.stripe / fakes.stripeClient / fakes.mail / fakes.mailer
 *
 *   const f = await startFakes(); … await f.stop();   // manual control
 */
import { createServer, type IncomingMessage, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { afterEach, beforeEach } from "vitest";
import type Stripe from "stripe";
import { startMailCatcher, type MailCatcher } from "../../server/fakes/smtp";
import {
  randomWebhookSecret,
  startFakeStripe,
  type FakeStripe,
  type FakeStripeOptions,
} from "../../server/fakes/stripe/index";
import { createMailer, type Mailer } from "../../server/integrations/mailer";
import { createStripeClient } from "../../server/integrations/payments";

export const TEST_STRIPE_KEY = "sk_test_burnline_fake";
export const TEST_MAIL_FROM = "Burnline <desk@burnline.test>";

export interface Fakes {
  stripe: FakeStripe;
  /** The official SDK pointed at the fake. */
  stripeClient: Stripe;
  webhookSecret: string;
  mail: MailCatcher;
  /** nodemailer pointed at the catcher. */
  mailer: Mailer;
  stop(): Promise<void>;
}

export interface FakesOptions {
  webhookUrl?: string;
  /** Short by default so retry tests stay fast: 20 ms, 40 ms, 80 ms … up to 5 attempts. */
  retry?: FakeStripeOptions["retry"];
  stripe?: Partial<FakeStripeOptions>;
}

export async function startFakes(opts: FakesOptions = {}): Promise<Fakes> {
  const webhookSecret = randomWebhookSecret();
  const stripe = await startFakeStripe({
    port: 0,
    host: "127.0.0.1",
    webhookSecret,
    webhookUrl: opts.webhookUrl,
    retry: opts.retry ?? { baseMs: 20, maxAttempts: 5 },
    webhookTimeoutMs: 5000,
    ...opts.stripe,
  });
  const mail = await startMailCatcher({ port: 0, host: "127.0.0.1" });
  const stripeClient = createStripeClient({ secretKey: TEST_STRIPE_KEY, apiBase: stripe.url, maxNetworkRetries: 0 });
  const mailer = createMailer({ host: "127.0.0.1", port: mail.port, from: TEST_MAIL_FROM });
  return {
    stripe,
    stripeClient,
    webhookSecret,
    mail,
    mailer,
    async stop() {
      mailer.close();
      await stripe.close();
      await mail.close();
    },
  };
}

/** Fresh fakes for each test of the enclosing file/describe; the returned object is filled before each test. */
export function useFakes(opts: FakesOptions = {}): Fakes {
  const holder = {} as Fakes;
  let current: Fakes | null = null;
  beforeEach(async () => {
    current = await startFakes(opts);
    Object.assign(holder, current);
  });
  afterEach(async () => {
    await current?.stop();
    current = null;
  });
  return holder;
}

export interface ReceivedWebhook {
  headers: IncomingMessage["headers"];
  rawBody: Buffer;
  status: number;
}

export interface WebhookReceiver {
  url: string;
  received: ReceivedWebhook[];
  /** Status codes to answer, in order; when used up, 200. */
  respondWith(statuses: number[]): void;
  close(): Promise<void>;
}

/** A minimal HTTP endpoint that records webhook deliveries (for tests of the fake itself). */
export async function startWebhookReceiver(): Promise<WebhookReceiver> {
  const received: ReceivedWebhook[] = [];
  let script: number[] = [];
  const server: Server = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", () => {
      const status = script.length > 0 ? script.shift()! : 200;
      received.push({ headers: req.headers, rawBody: Buffer.concat(chunks), status });
      res.writeHead(status, { "content-type": "application/json" }).end(JSON.stringify({ received: status < 300 }));
    });
  });
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const { port } = server.address() as AddressInfo;
  return {
    url: `http://127.0.0.1:${port}/api/webhooks/stripe`,
    received,
    respondWith(statuses) {
      script = [...statuses];
    },
    close: () =>
      new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      }),
  };
}
