/**
 * `npm start` / `npm run dev`: start everything on the embedded defaults and say where it is.
 * The entry point is the one place that puts the demo (demo/) together with the server.
 */
import { startServer } from "../server/index";
import { demoPlugin } from "../demo/plugin";

async function main() {
  const server = await startServer({}, undefined, { demo: demoPlugin });
  const { env, logger } = server.ctx;
  if (env.DEMO) logger.info("preparing the demo data; the app answers as soon as it is ready");
  const stop = async () => {
    await server.close();
    process.exit(0);
  };
  process.on("SIGINT", stop);
  process.on("SIGTERM", stop);
  await server.ready;
  const lines = [``, `Burnline is running at ${server.url}`];
  if (env.DEMO && server.ctx.demo) {
    lines.push(``, `Demo sign-ins (password "${server.ctx.demo.password}"):`);
    for (const s of server.ctx.demo.signIns) lines.push(`  ${s.email.padEnd(24)} ${s.label}`);
  }
  if (server.mailCatcher) lines.push(`Caught e-mail: ${server.url}/dev/mail`);
  console.log(lines.join("\n") + "\n");
}

main().catch((err) => {
  console.error(err instanceof Error ? err.message : err);
  process.exit(1);
});
