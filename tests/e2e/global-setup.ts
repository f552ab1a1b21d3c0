// Global setup of the e2e suite: a fresh, migrated and seeded SQLite database in a temp folder, then the
// real stack (built app in "test" mode, identity-provider stand-in, SMTP catcher) via scripts/stack.ts.
// Tests find it through process.env (see ./state.ts); the function returned here is the teardown.
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { type Stack, startStack } from "../../scripts/stack";
import { e2ePorts } from "./ports";
import { type E2eState, STATE_ENV } from "./state";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");

function portInUse(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ port, host: "127.0.0.1" });
    socket.once("connect", () => {
      socket.destroy();
      resolve(true);
    });
    socket.once("error", () => resolve(false));
  });
}

/** Our own children running the built app server (found through /proc: Linux only). */
function appServerChildren(): number[] {
  const pids: number[] = [];
  for (const entry of fs.readdirSync("/proc")) {
    if (!/^\d+$/.test(entry)) continue;
    try {
      const status = fs.readFileSync(`/proc/${entry}/status`, "utf8");
      if (Number(/^PPid:\s+(\d+)/m.exec(status)?.[1]) !== process.pid) continue;
      const cmdline = fs.readFileSync(`/proc/${entry}/cmdline`, "utf8").split("\0");
      if (cmdline.some((a) => a.endsWith(path.join("build", "server", "index.js")))) pids.push(Number(entry));
    } catch {
      // the process ended while we looked
    }
  }
  return pids;
}

/**
 * stack.stop() sends SIGTERM to the app server, which then closes its HTTP server but keeps running while
 * its database pool is open. After a grace period, end our own app-server child by its pid so that
 * stop() can go on to stop the SMTP catcher and the identity provider.
 */
async function stopStack(stack: Stack): Promise<void> {
  const stopping = stack.stop();
  const graceMs = 3_000;
  const inTime = await Promise.race([
    stopping.then(() => true),
    new Promise<boolean>((r) => setTimeout(() => r(false), graceMs)),
  ]);
  if (!inTime) {
    for (const pid of appServerChildren()) {
      try {
        process.kill(pid, "SIGKILL");
      } catch {
        /* already gone */
      }
    }
    await stopping;
  }
}

export default async function globalSetup(): Promise<() => Promise<void>> {
  const serverEntry = path.join(root, "build/server/index.js");
  if (!fs.existsSync(serverEntry)) {
    throw new Error(
      `The e2e tests run the built app, but ${path.relative(root, serverEntry)} is missing. Run \`npm run build\` (or \`npx react-router build\`) first.`,
    );
  }
  for (const [name, port] of Object.entries(e2ePorts)) {
    if (await portInUse(port)) {
      throw new Error(
        `Port ${port} (${name}) is already in use; stop whatever listens there or set E2E_${name.toUpperCase()}_PORT.`,
      );
    }
  }

  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-e2e-"));
  const databaseUrl = path.join(dir, "e2e.sqlite");
  const outboxDir = path.join(dir, "outbox");
  fs.mkdirSync(outboxDir, { recursive: true });

  // Children get a plain environment: no loader options of the test runner.
  const childEnv: NodeJS.ProcessEnv = { ...process.env, DATABASE_URL: databaseUrl };
  delete childEnv.NODE_OPTIONS;
  for (const command of ["latest", "seed"]) {
    try {
      execFileSync(process.execPath, ["--import", "tsx", "scripts/migrate.ts", command], {
        cwd: root,
        env: childEnv,
        stdio: ["ignore", "pipe", "pipe"],
      });
    } catch (e) {
      const err = e as { stdout?: Buffer; stderr?: Buffer };
      throw new Error(
        `scripts/migrate.ts ${command} failed against ${databaseUrl}:\n${err.stdout?.toString() ?? ""}${err.stderr?.toString() ?? ""}`,
      );
    }
  }

  const savedNodeOptions = process.env.NODE_OPTIONS;
  delete process.env.NODE_OPTIONS; // startStack passes process.env on to the app server
  let stack: Stack;
  try {
    stack = await startStack({
      appPort: e2ePorts.app,
      idpPort: e2ePorts.idp,
      smtpPort: e2ePorts.smtp,
      databaseUrl,
      outboxDir,
      mode: "test",
      quiet: true,
    });
  } finally {
    if (savedNodeOptions !== undefined) process.env.NODE_OPTIONS = savedNodeOptions;
  }

  const state: E2eState = {
    baseURL: stack.appUrl,
    issuer: stack.issuer,
    smtpPort: e2ePorts.smtp,
    outboxDir,
    databaseUrl,
    tempDir: dir,
  };
  const stateFile = path.join(dir, "e2e-state.json");
  fs.writeFileSync(stateFile, JSON.stringify(state, null, 2));
  // Workers inherit the runner's environment, so this reaches every test.
  process.env[STATE_ENV] = stateFile;
  process.env.LIMBERLY_E2E_BASE_URL = state.baseURL;
  process.env.LIMBERLY_E2E_OUTBOX_DIR = outboxDir;

  return async () => {
    await stopStack(stack);
    if (!process.env.E2E_KEEP_TEMP) fs.rmSync(dir, { recursive: true, force: true });
    else console.log(`e2e temp folder kept: ${dir}`);
  };
}
