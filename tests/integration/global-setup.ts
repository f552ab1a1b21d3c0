import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { TestProject } from "vitest/node";
import { startPostgres, type ThrowawayPostgres } from "../../scripts/postgres";
import { type Stack, startStack } from "../../scripts/stack";

// Starts the real stack once for the integration project: the built app server against a fresh database
// (migrated and seeded with the invented demo scenario), the identity-provider stand-in and the SMTP catcher.
// The engine comes from LIMBERLY_TEST_DB: "sqlite" (default, a temporary file) or "postgres" (a throwaway
// cluster from scripts/postgres.ts, server time zone Europe/Berlin so nothing may lean on the server's zone).
// Tests get the addresses through inject().
export const PORTS = {
  app: Number(process.env.IT_APP_PORT ?? 4000),
  idp: Number(process.env.IT_IDP_PORT ?? 10400),
  smtp: Number(process.env.IT_SMTP_PORT ?? 4025),
};

export type TestEngine = "sqlite" | "postgres";
export function testEngine(env: NodeJS.ProcessEnv = process.env): TestEngine {
  const v = (env.LIMBERLY_TEST_DB ?? "sqlite").toLowerCase();
  if (v === "sqlite") return "sqlite";
  if (v === "postgres" || v === "postgresql" || v === "pg") return "postgres";
  throw new Error(`LIMBERLY_TEST_DB must be "sqlite" or "postgres", not "${env.LIMBERLY_TEST_DB}"`);
}

let stack: Stack | null = null;
let pg: ThrowawayPostgres | null = null;
let dir = "";

declare module "vitest" {
  export interface ProvidedContext {
    baseUrl: string;
    engine: TestEngine;
    /** DATABASE_URL of the stack's database: a file path (SQLite) or postgres://… */
    databaseUrl: string;
    /** PostgreSQL only: the cluster's maintenance database, for tests that create their own database. */
    adminUrl: string;
    outboxDir: string;
  }
}

export default async function setup(project: TestProject) {
  const root = path.resolve(__dirname, "../..");
  if (!fs.existsSync(path.join(root, "build/server/index.js"))) {
    execFileSync(process.execPath, [path.join(root, "node_modules/@react-router/dev/bin.js"), "build"], {
      cwd: root,
      stdio: "inherit",
    });
  }
  const engine = testEngine();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-it-"));
  let databaseUrl = path.join(dir, "test.sqlite");
  let adminUrl = "";
  if (engine === "postgres") {
    pg = await startPostgres({ timeZone: "Europe/Berlin" });
    databaseUrl = pg.url;
    adminUrl = pg.url.replace(/\/[^/]+$/, "/postgres");
  }
  const outboxDir = path.join(dir, "outbox");
  const env: NodeJS.ProcessEnv = { ...process.env, DATABASE_URL: databaseUrl };
  for (const cmd of ["latest", "seed"]) {
    try {
      execFileSync(process.execPath, ["--import", "tsx", path.join(root, "scripts/migrate.ts"), cmd], {
        cwd: root,
        env,
        stdio: ["ignore", "pipe", "pipe"],
      });
    } catch (e) {
      const err = e as { stdout?: Buffer; stderr?: Buffer };
      pg?.stop();
      throw new Error(`scripts/migrate.ts ${cmd} failed on ${engine}:\n${err.stdout ?? ""}${err.stderr ?? ""}`);
    }
  }
  stack = await startStack({
    appPort: PORTS.app,
    idpPort: PORTS.idp,
    smtpPort: PORTS.smtp,
    databaseUrl,
    outboxDir,
    mode: "test",
    quiet: true,
  });
  project.provide("baseUrl", stack.appUrl);
  project.provide("engine", engine);
  project.provide("databaseUrl", databaseUrl);
  project.provide("adminUrl", adminUrl);
  project.provide("outboxDir", outboxDir);
  return async () => {
    await stack?.stop();
    pg?.stop();
    fs.rmSync(dir, { recursive: true, force: true });
  };
}
