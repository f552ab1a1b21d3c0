// Starts what Limberly needs on one machine: the identity-provider stand-in, the SMTP catcher and the
// app server (built, or Vite dev), against one database. Used by `npm run demo`, `npm run dev` and the tests.
import { type ChildProcess, spawn } from "node:child_process";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { startIdp } from "./idp";
import { startSmtpCatcher } from "./smtp-catcher";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");

export interface StackOptions {
  appPort: number;
  idpPort: number;
  smtpPort: number;
  databaseUrl: string;
  outboxDir: string;
  mode: "demo" | "test" | "development";
  dev?: boolean;
  quiet?: boolean;
  /** further variables for the app process only (e.g. the settable clock of app/clock.server.ts) */
  appEnv?: NodeJS.ProcessEnv;
}

export interface Stack {
  appUrl: string;
  issuer: string;
  /** The app server's process id (benches read its CPU time). */
  appPid: number | undefined;
  env: NodeJS.ProcessEnv;
  stop: () => Promise<void>;
}

// The test suites sign in, present keys and upload many times from one address: their stacks get roomy limits
// (tests of the limits start an app of their own with small ones).
const TEST_LIMITS = {
  LIMBERLY_LIMIT_SIGNIN_FAILURES: "100000/60",
  LIMBERLY_LIMIT_API_KEY_FAILURES: "100000/60",
  LIMBERLY_LIMIT_API_KEY_PREFIX_FAILURES: "100000/60",
  LIMBERLY_LIMIT_UPLOADS: "100000/60",
};

export function stackEnv(o: StackOptions): NodeJS.ProcessEnv {
  return {
    ...(o.mode === "test" ? TEST_LIMITS : {}),
    ...process.env,
    PORT: String(o.appPort),
    APP_URL: `http://localhost:${o.appPort}`,
    DATABASE_URL: o.databaseUrl,
    LIMBERLY_MODE: o.mode,
    OIDC_ISSUER: `http://127.0.0.1:${o.idpPort}`,
    SMTP_HOST: "127.0.0.1",
    SMTP_PORT: String(o.smtpPort),
    OUTBOX_DIR: o.outboxDir,
  };
}

export async function waitForHttp(url: string, timeoutMs = 60_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  let last: unknown = null;
  while (Date.now() < deadline) {
    try {
      const res = await fetch(url, { redirect: "manual" });
      if (res.status < 500) return;
      last = `HTTP ${res.status}`;
    } catch (e) {
      last = e;
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`${url} did not answer within ${timeoutMs} ms: ${String(last)}`);
}

export interface AppServer {
  appUrl: string;
  child: ChildProcess;
  /** SIGTERM, then SIGKILL after a grace period. */
  stop: () => Promise<void>;
}

/** Starts one app server process (built, or Vite dev) and waits until it answers. */
export async function startApp(o: StackOptions, extraEnv: NodeJS.ProcessEnv = {}): Promise<AppServer> {
  const env = { ...stackEnv(o), ...extraEnv };
  const watch = ["--require", path.join(root, "scripts/exit-with-parent.cjs")];
  const args = o.dev
    ? [
        ...watch,
        path.join(root, "node_modules/@react-router/dev/bin.js"),
        "dev",
        "--port",
        String(o.appPort),
        "--strictPort",
      ]
    : [...watch, "--import", "tsx", path.join(root, "scripts/serve.ts"), path.join(root, "build/server/index.js")];
  const child: ChildProcess = spawn(process.execPath, args, {
    cwd: root,
    env: o.dev ? env : { ...env, NODE_ENV: "production" },
    stdio: o.quiet ? ["ignore", "ignore", "inherit"] : "inherit",
  });
  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  const appUrl = `http://localhost:${o.appPort}`;
  await Promise.race([
    waitForHttp(`${appUrl}/api/v1/health`),
    exited.then(() => {
      throw new Error("The app server exited during start-up (see its output above).");
    }),
  ]);
  return {
    appUrl,
    child,
    stop: async () => {
      if (child.exitCode !== null || child.signalCode !== null) return;
      child.kill("SIGTERM");
      // The server may keep its database pool open after SIGTERM; give it a moment, then end it.
      const grace = new Promise<"late">((r) => setTimeout(() => r("late"), 3000).unref());
      if ((await Promise.race([exited.then(() => "done" as const), grace])) === "late") {
        child.kill("SIGKILL");
        await exited;
      }
    },
  };
}

export async function startStack(o: StackOptions): Promise<Stack> {
  const idp = await startIdp(o.idpPort);
  const smtp = await startSmtpCatcher(o.smtpPort, o.outboxDir);
  const app = await startApp(o, o.appEnv);
  return {
    appUrl: app.appUrl,
    issuer: idp.issuer,
    appPid: app.child.pid,
    env: stackEnv(o),
    stop: async () => {
      await app.stop();
      await smtp.stop();
      await idp.stop();
    },
  };
}
