import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { TestProject } from "vitest/node";
import { type Stack, startStack } from "../../scripts/stack";

// Starts the real stack once for the integration project: the built app server against a fresh
// temporary SQLite file (migrated and seeded with the invented demo scenario), the identity-provider
// stand-in and the SMTP catcher. Tests get the addresses through inject().
export const PORTS = {
  app: Number(process.env.IT_APP_PORT ?? 4000),
  idp: Number(process.env.IT_IDP_PORT ?? 10400),
  smtp: Number(process.env.IT_SMTP_PORT ?? 4025),
};

let stack: Stack | null = null;
let dir = "";

declare module "vitest" {
  export interface ProvidedContext {
    baseUrl: string;
    databaseFile: string;
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
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-it-"));
  const databaseFile = path.join(dir, "test.sqlite");
  const outboxDir = path.join(dir, "outbox");
  const env = { ...process.env, DATABASE_URL: databaseFile };
  for (const cmd of ["latest", "seed"]) {
    execFileSync(process.execPath, ["--import", "tsx", path.join(root, "scripts/migrate.ts"), cmd], {
      cwd: root,
      env,
      stdio: "ignore",
    });
  }
  stack = await startStack({
    appPort: PORTS.app,
    idpPort: PORTS.idp,
    smtpPort: PORTS.smtp,
    databaseUrl: databaseFile,
    outboxDir,
    mode: "test",
    quiet: true,
  });
  project.provide("baseUrl", stack.appUrl);
  project.provide("databaseFile", databaseFile);
  project.provide("outboxDir", outboxDir);
  return async () => {
    await stack?.stop();
    fs.rmSync(dir, { recursive: true, force: true });
  };
}
