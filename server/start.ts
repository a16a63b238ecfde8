import { startServer } from "./index";

/** `npm start` / `npm run dev`: start everything on the embedded defaults and say where it is. */
async function main() {
  const server = await startServer();
  const { env } = server.ctx;
  if (env.DEMO) {
    const { seedDemoIfEmpty, DEMO_SIGN_INS, DEMO_PASSWORD } = await import("../demo/seed");
    const seeded = await seedDemoIfEmpty(server.ctx);
    server.ctx.logger.info(seeded ? "demo data seeded" : "demo data already present");
    console.log(`\nBurnline is running at ${server.url}\n`);
    console.log(`Demo sign-ins (password "${DEMO_PASSWORD}"):`);
    for (const s of DEMO_SIGN_INS) console.log(`  ${s.email.padEnd(24)} ${s.label}`);
  } else {
    console.log(`\nBurnline is running at ${server.url}`);
  }
  if (server.mailCatcher) console.log(`Caught e-mail: ${server.url}/dev/mail`);
  const stop = async () => {
    await server.close();
    process.exit(0);
  };
  process.on("SIGINT", stop);
  process.on("SIGTERM", stop);
}

main().catch((err) => {
  console.error(err instanceof Error ? err.message : err);
  process.exit(1);
});
