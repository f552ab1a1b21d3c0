import { spawn } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";

// The settable clock (app/clock.server.ts) is for test and demo modes only: a production server refuses to
// start with either of its variables set, so a stray one can never move a real programme's dates. (Test mode
// honouring it is shown by the season simulation, tests/integration/programme-season.test.ts.)
const root = path.resolve(__dirname, "../..");

function startServer(env: NodeJS.ProcessEnv): Promise<{ code: number | null; stderr: string }> {
  return new Promise((resolve) => {
    const child = spawn(
      process.execPath,
      ["--import", "tsx", path.join(root, "scripts/serve.ts"), path.join(root, "build/server/index.js")],
      { cwd: root, env: { ...process.env, ...env }, stdio: ["ignore", "ignore", "pipe"] },
    );
    let stderr = "";
    child.stderr.on("data", (b) => {
      stderr += String(b);
    });
    child.on("exit", (code) => resolve({ code, stderr }));
  });
}

describe("the settable clock in production", () => {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-clock-"));
  const file = path.join(dir, "clock.txt");
  fs.writeFileSync(file, "2031-01-06T06:00:00Z");
  const production = {
    NODE_ENV: "production",
    LIMBERLY_MODE: "production",
    SESSION_SECRET: "a-production-secret-of-at-least-32-characters",
    PORT: "0",
    DATABASE_URL: path.join(dir, "never-opened.sqlite"),
    LIMBERLY_CLOCK_FILE: "",
    LIMBERLY_CLOCK_START: "",
  };

  it.each([
    ["LIMBERLY_CLOCK_FILE", file],
    ["LIMBERLY_CLOCK_START", "2031-01-06T06:00:00Z"],
  ])("refuses to start with %s set", async (name, value) => {
    const r = await startServer({ ...production, [name]: value });
    expect(r.code).not.toBe(0);
    expect(r.stderr).toContain(
      "LIMBERLY_CLOCK_START and LIMBERLY_CLOCK_FILE set the clock in test and demo modes only; unset them (LIMBERLY_MODE is production).",
    );
    expect(fs.existsSync(production.DATABASE_URL)).toBe(false);
  });
});
