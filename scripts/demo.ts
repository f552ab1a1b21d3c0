// `npm run demo`: migrate and seed the demo database, start the identity-provider stand-in, the SMTP
// catcher and the built app, and print the URL. Ctrl-C stops everything.
import { execFileSync } from "node:child_process";
import path from "node:path";
import { startStack } from "./stack";

const appPort = Number(process.env.PORT ?? 3000);
const databaseUrl = process.env.DATABASE_URL ?? path.resolve("data/limberly.sqlite");
const env = { ...process.env, DATABASE_URL: databaseUrl };
execFileSync(process.execPath, ["--import", "tsx", "scripts/migrate.ts", "latest"], { env, stdio: "inherit" });
execFileSync(process.execPath, ["--import", "tsx", "scripts/migrate.ts", "seed"], { env, stdio: "inherit" });

const stack = await startStack({
  appPort,
  idpPort: Number(process.env.IDP_PORT ?? 9400),
  smtpPort: Number(process.env.SMTP_PORT ?? 2525),
  databaseUrl,
  outboxDir: path.resolve(process.env.OUTBOX_DIR ?? "data/outbox"),
  mode: "demo",
  dev: process.argv.includes("--dev"),
});
console.log(`\nLimberly demo is running at ${stack.appUrl}  (identity provider ${stack.issuer}; Ctrl-C to stop)\n`);
const shutdown = async () => {
  await stack.stop();
  process.exit(0);
};
process.on("SIGINT", shutdown);
process.on("SIGTERM", shutdown);
