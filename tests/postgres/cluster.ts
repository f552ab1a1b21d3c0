import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import knex from "knex";
import { startIdp } from "../../scripts/idp";
import { freePort, startPostgres, type ThrowawayPostgres } from "../../scripts/postgres";
import { startSmtpCatcher } from "../../scripts/smtp-catcher";
import { type AppServer, type StackOptions, startApp } from "../../scripts/stack";
import { Browserless, type TestDb } from "../integration/helpers";

// Several real app processes (the built server) on one throwaway PostgreSQL database, with the shared
// identity-provider stand-in and SMTP catcher: what a deployment with more than one instance looks like.
const root = path.resolve(__dirname, "../..");

export interface Cluster {
  pg: ThrowawayPostgres;
  db: TestDb;
  outboxDir: string;
  apps: AppServer[];
  /** Starts one more app instance on the same database. */
  addApp(extraEnv?: NodeJS.ProcessEnv): Promise<AppServer>;
  stop(): Promise<void>;
}

export async function startCluster(instances: number, extraEnv: NodeJS.ProcessEnv = {}): Promise<Cluster> {
  if (!fs.existsSync(path.join(root, "build/server/index.js")))
    execFileSync(process.execPath, [path.join(root, "node_modules/@react-router/dev/bin.js"), "build"], {
      cwd: root,
      stdio: "inherit",
    });
  const pg = await startPostgres();
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-cluster-"));
  const outboxDir = path.join(dir, "outbox");
  for (const cmd of ["latest", "seed"])
    execFileSync(process.execPath, ["--import", "tsx", path.join(root, "scripts/migrate.ts"), cmd], {
      cwd: root,
      env: { ...process.env, DATABASE_URL: pg.url },
      stdio: "ignore",
    });
  const idpPort = await freePort();
  const smtpPort = await freePort();
  const idp = await startIdp(idpPort);
  const smtp = await startSmtpCatcher(smtpPort, outboxDir);
  const apps: AppServer[] = [];
  const addApp = async (more: NodeJS.ProcessEnv = {}) => {
    const o: StackOptions = {
      appPort: await freePort(),
      idpPort,
      smtpPort,
      databaseUrl: pg.url,
      outboxDir,
      mode: "test",
      quiet: true,
    };
    const app = await startApp(o, {
      SESSION_SECRET: "a-shared-session-secret-of-the-test-cluster",
      ...extraEnv,
      ...more,
    });
    apps.push(app);
    return app;
  };
  const db = knex({ client: "pg", connection: pg.url, pool: { min: 0, max: 10 } }) as TestDb;
  try {
    for (let i = 0; i < instances; i++) await addApp();
  } catch (e) {
    await Promise.all(apps.map((a) => a.stop()));
    await db.destroy();
    pg.stop();
    throw e;
  }
  return {
    pg,
    db,
    outboxDir,
    apps,
    addApp,
    stop: async () => {
      await Promise.all(apps.map((a) => a.stop()));
      await db.destroy();
      await smtp.stop();
      await idp.stop();
      pg.stop();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** Signs in on one instance through the real authorization-code round trip. */
export async function signInAt(appUrl: string, email: string): Promise<Browserless> {
  const client = new Browserless(appUrl);
  const { url } = await client.follow(`/auth/start?login_hint=${encodeURIComponent(email)}`);
  if (new URL(url).pathname.startsWith("/sign-in")) throw new Error(`${email} could not sign in at ${appUrl}`);
  return client;
}

/** Polls until `check` returns a value (not a fixed sleep: it stops as soon as the condition holds). */
export async function waitFor<T>(what: string, check: () => Promise<T | null | undefined>, timeoutMs = 90_000) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = await check();
    if (v != null) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}
