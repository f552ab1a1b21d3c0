import { spawnSync } from "node:child_process";
import path from "node:path";
import { describe, expect, it } from "vitest";

// In production the server refuses to start without a proper session secret.
const root = path.resolve(__dirname, "../..");
function load(env: Record<string, string>) {
  return spawnSync(
    process.execPath,
    ["--import", "tsx", "-e", "await import('./app/config.server.ts'); console.log('loaded')"],
    {
      cwd: root,
      env: { PATH: process.env.PATH ?? "", ...env },
      encoding: "utf8",
    },
  );
}

describe("configuration", () => {
  it("refuses production without SESSION_SECRET", () => {
    const r = load({ LIMBERLY_MODE: "production" });
    expect(r.status).not.toBe(0);
    expect(r.stderr).toContain("SESSION_SECRET must be set");
  });
  it("accepts production with a long secret, and demo without one", () => {
    expect(load({ LIMBERLY_MODE: "production", SESSION_SECRET: "x".repeat(40) }).stdout).toContain("loaded");
    expect(load({ LIMBERLY_MODE: "demo" }).stdout).toContain("loaded");
  });
  it("refuses a stale limit shorter than three heartbeats (a live run would be taken back)", () => {
    const r = load({ LIMBERLY_MODE: "demo", LIMBERLY_JOB_HEARTBEAT_MS: "5000", LIMBERLY_JOB_STALE_MS: "10000" });
    expect(r.status).not.toBe(0);
    expect(r.stderr).toContain("LIMBERLY_JOB_STALE_MS must be at least three heartbeats");
    expect(load({ LIMBERLY_MODE: "demo", LIMBERLY_JOB_STALE_MS: "15000" }).stdout).toContain("loaded");
  });
  it("refuses a rate limit not written as attempts/seconds, naming the variable", () => {
    for (const bad of ["20", "0/900", "20/0", "twenty/900", "20/900/1"]) {
      const r = load({ LIMBERLY_MODE: "demo", LIMBERLY_LIMIT_API_KEY_FAILURES: bad });
      expect(r.status, bad).not.toBe(0);
      expect(r.stderr).toContain(`LIMBERLY_LIMIT_API_KEY_FAILURES must read "attempts/seconds"`);
    }
    expect(load({ LIMBERLY_MODE: "demo", LIMBERLY_LIMIT_API_KEY_FAILURES: "5/60" }).stdout).toContain("loaded");
  });
});
