// The season's own stack: a database migrated and seeded with the invented demo organisation (its staff,
// fleet, trainers and the cohort of past trainees its models were fitted on), the identity-provider stand-in,
// an SMTP catcher of its own (so every message caught is the season's) and the built app on the settable
// clock (app/clock.server.ts), all on free ports.
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { startStack } from "../stack";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");

export interface SeasonStack {
  appUrl: string;
  databaseUrl: string;
  outboxDir: string;
  /** moves the server's clock to an instant (ISO UTC); it runs on from there */
  setClock: (instant: string) => void;
  stop: () => Promise<void>;
}

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once("error", reject);
    s.listen(0, "127.0.0.1", () => {
      const port = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(port));
    });
  });
}

/** `dir` holds the outbox and the clock file; `databaseUrl` is an empty database (SQLite file or PostgreSQL). */
export async function startSeasonStack(o: { dir: string; databaseUrl: string; start: string }): Promise<SeasonStack> {
  const env = { ...process.env, DATABASE_URL: o.databaseUrl };
  for (const cmd of ["latest", "seed"])
    execFileSync(process.execPath, ["--import", "tsx", path.join(root, "scripts/migrate.ts"), cmd], {
      cwd: root,
      env,
      stdio: ["ignore", "pipe", "inherit"],
    });
  const clockFile = path.join(o.dir, "clock.txt");
  // Written beside and renamed, so the server never reads half a file and always sees a change.
  const setClock = (instant: string) => {
    const tmp = `${clockFile}.tmp`;
    fs.writeFileSync(tmp, instant);
    fs.renameSync(tmp, clockFile);
  };
  setClock(o.start);
  const outboxDir = path.join(o.dir, "outbox");
  const stack = await startStack({
    appPort: await freePort(),
    idpPort: await freePort(),
    smtpPort: await freePort(),
    databaseUrl: o.databaseUrl,
    outboxDir,
    mode: "test",
    quiet: true,
    appEnv: { LIMBERLY_CLOCK_FILE: clockFile },
  });
  return { appUrl: stack.appUrl, databaseUrl: o.databaseUrl, outboxDir, setClock, stop: stack.stop };
}
