import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { type AppServer, startApp } from "../../scripts/stack";
import { PORTS } from "./global-setup";
import { Browserless, engine, PERSONA, signIn, testDb, useStackDatabaseInProcess } from "./helpers";

// Rate limits, on an app instance of its own with small limits (the shared test stack has roomy ones) and
// TRUST_PROXY=loopback, so each request can name its client address in X-Forwarded-For. Same database as
// the stack: the alerts the limits write show on the admin home of the stack's own instance.
const LIMITS = { apiAddress: 20, apiPrefix: 10, signIn: 5, uploads: 3 };
const port = PORTS.app + 12;
const base = `http://localhost:${port}`;
let app: AppServer;

async function newKey(name: string): Promise<{ key: string; prefix: string }> {
  const { createApiKey } = await import("~/auth/api-keys.server");
  const admin = await testDb()("users").where({ email: PERSONA.admin }).first();
  const site = await testDb()("sites").orderBy("id").first();
  // A coordinator key is not clinical, so it works at once (no second admin's approval).
  const { db } = await import("~/db.server");
  const { key } = await db().transaction((trx) =>
    createApiKey(trx, { name, role: "coordinator", siteIds: [site.id], createdBy: admin.id, awaitingApproval: false }),
  );
  return { key, prefix: key.split("_")[1] };
}

const call = (key: string, from: string) =>
  fetch(`${base}/api/v1/me`, { headers: { Authorization: `Bearer ${key}`, "X-Forwarded-For": from } });
const badKey = (i: number) => `lbk_${i.toString(16).padStart(12, "0")}_${"x".repeat(43)}`;
const events = (kind: string, subject: string) => testDb()("security_events").where({ kind, subject }).select("*");

describe("throttling", () => {
  beforeAll(async () => {
    useStackDatabaseInProcess();
    app = await startApp(
      {
        appPort: port,
        idpPort: PORTS.idp,
        smtpPort: PORTS.smtp,
        databaseUrl: inject("databaseUrl"),
        outboxDir: fs.mkdtempSync(path.join(os.tmpdir(), "limberly-throttle-")),
        mode: "test",
        quiet: true,
      },
      {
        TRUST_PROXY: "loopback",
        LIMBERLY_LIMIT_API_KEY_FAILURES: `${LIMITS.apiAddress}/600`,
        LIMBERLY_LIMIT_API_KEY_PREFIX_FAILURES: `${LIMITS.apiPrefix}/600`,
        LIMBERLY_LIMIT_SIGNIN_FAILURES: `${LIMITS.signIn}/600`,
        LIMBERLY_LIMIT_UPLOADS: `${LIMITS.uploads}/600`,
      },
    );
  });
  afterAll(async () => {
    await app?.stop();
  });

  it("2,000 bad API keys from one address: 401 up to the limit, then 429 with Retry-After; one alert", async () => {
    const attacker = "203.0.113.7";
    const statuses: number[] = [];
    const retryAfter: number[] = [];
    for (let batch = 0; batch < 40; batch++) {
      const answers = await Promise.all(Array.from({ length: 50 }, (_, i) => call(badKey(batch * 50 + i), attacker)));
      for (const res of answers) {
        statuses.push(res.status);
        if (res.status === 429) {
          retryAfter.push(Number(res.headers.get("Retry-After")));
          const body = await res.json();
          expect(body.error).toMatch(/^Too many refused API keys .* Try again in \d+ (seconds|minutes)\.$/);
        } else await res.body?.cancel();
      }
    }
    expect(statuses.length).toBe(2000);
    expect(statuses.filter((s) => s === 401).length).toBe(LIMITS.apiAddress);
    expect(statuses.filter((s) => s === 429).length).toBe(2000 - LIMITS.apiAddress);
    // The window is 600 s: every refusal says to wait for (nearly all of) it.
    expect(Math.min(...retryAfter)).toBeGreaterThan(500);
    expect(Math.max(...retryAfter)).toBeLessThanOrEqual(600);
    // On PostgreSQL the counter is a row every instance shares (on SQLite it lives in the one process).
    if (engine() === "postgres") {
      const counter = await testDb()("rate_limits")
        .where({ key: `apiKeyFailuresPerAddress:${attacker}` })
        .first();
      expect(counter?.points).toBeGreaterThan(LIMITS.apiAddress);
    }
    const rows = await events("api-key-failures", attacker);
    expect(rows.length).toBe(1);
    expect(rows[0].detail).toContain(`More than ${LIMITS.apiAddress} in 10 min`);

    // A good key from another address still works; from the blocked address even a good key waits.
    const good = await newKey("Throttle test: good key");
    expect((await call(good.key, "203.0.113.8")).status).toBe(200);
    const fromAttacker = await call(good.key, attacker);
    expect(fromAttacker.status).toBe(429);
    expect(Number(fromAttacker.headers.get("Retry-After"))).toBeGreaterThan(0);
  });

  it("wrong secrets for one key from many addresses lock that key only", async () => {
    const target = await newKey("Throttle test: guessed key");
    const other = await newKey("Throttle test: other key");
    const guess = `lbk_${target.prefix}_${"y".repeat(43)}`;
    const statuses: number[] = [];
    for (let i = 0; i < LIMITS.apiPrefix + 5; i++) statuses.push((await call(guess, `198.51.100.${10 + i}`)).status);
    expect(statuses.slice(0, LIMITS.apiPrefix)).toEqual(Array(LIMITS.apiPrefix).fill(401));
    expect(statuses.slice(LIMITS.apiPrefix)).toEqual(Array(5).fill(429));
    // The right secret for that key is refused for now (from a fresh address); another key is not.
    expect((await call(target.key, "198.51.100.99")).status).toBe(429);
    expect((await call(other.key, "198.51.100.99")).status).toBe(200);
    expect((await events("api-key-prefix-failures", target.prefix)).length).toBe(1);
  });

  it("failed sign-in callbacks from one address: refused with 429 and Retry-After after the limit", async () => {
    const from = "203.0.113.50";
    const statuses: number[] = [];
    let last: Response | null = null;
    for (let i = 0; i < LIMITS.signIn + 2; i++) {
      last = await fetch(`${base}/auth/callback?code=forged&state=forged`, {
        redirect: "manual",
        headers: { "X-Forwarded-For": from },
      });
      statuses.push(last.status);
      if (i < LIMITS.signIn) await last.body?.cancel();
    }
    expect(statuses.slice(0, LIMITS.signIn)).toEqual(Array(LIMITS.signIn).fill(302));
    expect(statuses.slice(LIMITS.signIn)).toEqual([429, 429]);
    expect(last!.headers.get("Content-Type")).toContain("text/plain");
    expect(Number(last!.headers.get("Retry-After"))).toBeGreaterThan(500);
    expect(await last!.text()).toMatch(/^Too many failed sign-in attempts from your network address\. Try again in/);
    expect((await events("sign-in-failures", from)).length).toBe(1);
    // Another address is not affected.
    const other = await fetch(`${base}/auth/callback?code=forged&state=forged`, {
      redirect: "manual",
      headers: { "X-Forwarded-For": "203.0.113.51" },
    });
    expect(other.status).toBe(302);
  });

  it("uploads per user: over the limit → 429 with Retry-After, nothing written", async () => {
    // On PostgreSQL every instance counts in one table, the suite's main app included: start this user's
    // upload count from zero so the limit of this instance is what is tested.
    if (await testDb().schema.hasTable("rate_limits"))
      await testDb()("rate_limits").where("key", "like", "uploadsPerUser:%").delete();
    const { client: main } = await signIn(PERSONA.assessor);
    const client = new Browserless(base);
    client.cookies = main.cookies;
    const uploads = () => testDb()("roster_imports").count({ n: "*" }).first();
    const before = await uploads();
    const statuses: number[] = [];
    let last: Response | null = null;
    for (let i = 0; i < LIMITS.uploads + 1; i++) {
      const form = new FormData();
      form.append("roster", new Blob([""], { type: "text/csv" }), "empty.csv");
      last = await client.request("/assess/roster", { method: "POST", body: form });
      statuses.push(last.status);
      if (i < LIMITS.uploads) await last.body?.cancel();
    }
    // An empty file is refused (400) while under the limit; then the limit answers first.
    expect(statuses).toEqual([...Array(LIMITS.uploads).fill(400), 429]);
    expect(Number(last!.headers.get("Retry-After"))).toBeGreaterThan(500);
    expect(await last!.text()).toContain("Too many uploads in a short time.");
    // The same through the `.data` URL a browser with JavaScript posts to.
    const form = new FormData();
    form.append("roster", new Blob(["a,b\n"], { type: "text/csv" }), "roster.csv");
    const viaData = await client.request("/assess/roster.data", { method: "POST", body: form });
    expect(viaData.status).toBe(429);
    expect(Number(viaData.headers.get("Retry-After"))).toBeGreaterThan(500);
    expect(await viaData.text()).toContain("Too many uploads in a short time.");
    expect(await uploads()).toEqual(before);
  });

  it("an admin sees the alerts on the admin home", async () => {
    const { client } = await signIn(PERSONA.admin);
    const res = await client.request("/admin");
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain("Security alerts (last 7 days)");
    expect(html).toContain("refused API keys from 203.0.113.7");
    expect(html).toContain("failed sign-ins from 203.0.113.50");
  });
});
