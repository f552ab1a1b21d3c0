import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import knex, { type Knex } from "knex";
import { expect, inject, vi } from "vitest";
import { knexConfig } from "../../knexfile";
import { Browserless } from "../../scripts/browserless";

// Helpers for integration tests against the running stack (see global-setup.ts).
// signIn runs the real OAuth2 authorization-code round trip with fetch, following each redirect by hand
// and keeping cookies like a browser would (Browserless, shared with the season simulation).
export { Browserless } from "../../scripts/browserless";
export const baseUrl = () => inject("baseUrl");

export async function signIn(email: string): Promise<{ client: Browserless; landedAt: string; hops: string[] }> {
  const client = new Browserless(baseUrl());
  const { url, hops } = await client.follow(`/auth/start?login_hint=${encodeURIComponent(email)}`);
  return { client, landedAt: new URL(url).pathname, hops };
}

let shared: TestDb | null = null;
/** Direct access to the stack's database (SQLite or PostgreSQL, see global-setup.ts), for asserting what the
 * server wrote. Same Knex configuration, and so the same value model, as the app. */
/**
 * The database as tests read and write it directly: rows untyped (the app's models get typed rows from
 * app/db-tables.ts; a test checks what a request wrote, so it reads rows as they are).
 */
export type TestDb = ((table: string) => UntypedQuery) & Knex;
// A table name typed as plain string takes Knex's untyped overload: the query builder of rows as they come.
const untypedQuery = (k: Knex, table: string) => k(table);
type UntypedQuery = ReturnType<typeof untypedQuery>;

/** A Knex handle on `url` with the app's own configuration (the same value model), rows untyped. */
export function testKnex(url: string): TestDb {
  return knex(knexConfig({ DATABASE_URL: url })) as TestDb;
}

export function testDb(): TestDb {
  if (!shared) shared = testKnex(inject("databaseUrl"));
  return shared;
}

export const engine = () => inject("engine");

/** Runs model code in this process against the stack's database (the models read DATABASE_URL). */
export function useStackDatabaseInProcess(): void {
  process.env.DATABASE_URL = inject("databaseUrl");
}

/** An empty database of its own on the engine under test: a temporary SQLite file or a new PostgreSQL
 * database in the test cluster. drop() removes it again. */
export async function freshDatabase(
  label: string,
  on: "sqlite" | "postgres" = engine(),
): Promise<{ url: string; knex: TestDb; drop: () => Promise<void> }> {
  if (on === "sqlite") {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), `limberly-${label}-`));
    const url = path.join(dir, `${label}.sqlite`);
    const k = testKnex(url);
    return {
      url,
      knex: k,
      drop: async () => {
        await k.destroy();
        fs.rmSync(dir, { recursive: true, force: true });
      },
    };
  }
  const admin = knex(knexConfig({ DATABASE_URL: inject("adminUrl") }));
  const name = `${label.replace(/[^a-z0-9_]/gi, "_").toLowerCase()}_${process.pid}_${Date.now() % 1e6}`;
  await admin.raw(`create database ${name}`);
  const url = inject("adminUrl").replace(/\/[^/]+$/, `/${name}`);
  const k = testKnex(url);
  return {
    url,
    knex: k,
    drop: async () => {
      await k.destroy();
      await admin.raw(`drop database if exists ${name}`);
      await admin.destroy();
    },
  };
}

/** Application tables of a database, sorted (either engine). */
export async function tableNames(k: Knex): Promise<string[]> {
  if (String(k.client.config.client) === "pg") {
    const r = await k.raw(
      "select tablename as name from pg_tables where schemaname = current_schema() and tablename not like 'knex_%' order by tablename",
    );
    return r.rows.map((x: { name: string }) => x.name);
  }
  const rows = await k.raw(
    "select name from sqlite_master where type='table' and name not like 'knex_%' and name not like 'sqlite_%' order by name",
  );
  return rows.map((r: { name: string }) => r.name);
}

export const PERSONA = {
  assessor: "morwenna.pike@harrowvale.example",
  assessor2: "rhea.lindqvist@harrowvale.example",
  coordinator: "tobias.renn@harrowvale.example",
  trainer: "ines.calloway@harrowvale.example",
  manager: "declan.hartley@harrowvale.example",
  worker: "amara.quist@harrowvale.example",
  admin: "sam.okafor@harrowvale.example",
} as const;

/**
 * Visible text of an HTML page: tags and React's text separators removed, entities decoded.
 * `dropScripts` also removes the hydration data React Router writes into <script> elements.
 */
export function pageText(html: string, options: { dropScripts?: boolean } = {}): string {
  const body = options.dropScripts ? html.replace(/<script[\s\S]*?<\/script>/g, "") : html;
  return body
    .replace(/<!-- -->/g, "")
    .replace(/<[^>]+>/g, "")
    .replace(/&quot;/g, '"')
    .replace(/&#x27;|&#39;/g, "'")
    .replace(/&amp;/g, "&")
    .replace(/&lt;/g, "<")
    .replace(/&gt;/g, ">");
}

/** Checkboxes rendered ticked: consent is an affirmative act, so none may be before the person ticks it. */
export function tickedBoxes(html: string): string[] {
  return (html.match(/<input[^>]*>/g) ?? []).filter(
    (t) => t.includes('type="checkbox"') && /\schecked(=|\s|\/|>)/.test(t),
  );
}

/**
 * A worker with no consent records and no assessment data, given assessment consent by `assessor` through the
 * app (the demo assessor persona witnesses). `pick`: the first such worker by id, or the last.
 */
export async function freshConsentedWorker(assessor: Browserless, pick: "first" | "last" = "last"): Promise<number> {
  const k = testDb();
  const w = await k("workers")
    .where({ stage: "invited" })
    .whereNotExists(k("consent_records").whereRaw("consent_records.worker_id = workers.id"))
    .whereNotExists(k("assessment_sessions").whereRaw("assessment_sessions.worker_id = workers.id"))
    .orderBy("id", pick === "first" ? "asc" : "desc")
    .first("id");
  const me = await k("users").where({ email: PERSONA.assessor }).first("id");
  const res = await assessor.postForm(`/assess/workers/${w.id}`, {
    intent: "consent",
    purposes: ["assessment"],
    witnessUserId: String(me.id),
    confirmRead: "on",
  });
  expect(res.status).toBe(200);
  return w.id;
}

/** A new assessment session of a freshly consented worker, made through the app; returns its page URL. */
export async function freshAssessmentSession(assessor: Browserless, pick: "first" | "last" = "last"): Promise<string> {
  const id = await freshConsentedWorker(assessor, pick);
  const s = await assessor.postForm(`/assess/workers/${id}`, { intent: "session", assessedOn: "2026-11-28" });
  expect(s.status).toBe(302);
  return s.headers.get("Location")!;
}

/**
 * Waits until the readiness board `get` reads no longer serves earlier figures while new ones are
 * protected in the background (a condition, polled; the app marks those figures "being protected").
 */
export async function readinessSettled(get: (path: string) => Promise<Response>): Promise<void> {
  await vi.waitFor(
    async () => {
      const res = await get("/api/v1/readiness?groupBy=department");
      const body = (await res.json()) as { notes?: Record<string, string> };
      const updating = Object.values(body.notes ?? {}).filter((n) => n.includes("being protected"));
      if (updating.length > 0) throw new Error(`the board still serves earlier figures: ${updating.join(" ")}`);
    },
    { timeout: 120_000, interval: 250 },
  );
}

/** The readiness generation (bumped by database triggers on every write under the board). */
export async function readinessGenerationNow(): Promise<number> {
  return Number((await testDb()("readiness_generation").where({ id: 1 }).first("value")).value);
}

/** A scheduled session of a run, as the schedule stores it. */
export type ScheduledSessionRow = {
  id: number;
  worker_id: number;
  trainer_id: number;
  device_unit_id: number;
  device_type_id: number;
  scheduled_start: string;
  scheduled_end: string;
};

/** The scheduled sessions a run published, ordered by worker and start. */
export function scheduledSessionsOfRun(runId: number): Promise<ScheduledSessionRow[]> {
  return testDb()("training_sessions")
    .where({ allocation_run_id: runId, status: "scheduled" })
    .select("id", "worker_id", "trainer_id", "device_unit_id", "device_type_id", "scheduled_start", "scheduled_end")
    .orderBy(["worker_id", "scheduled_start"]);
}

/** Polls a run's status URL (as the run page does) until it is done or failed; every answer must be 200. */
export async function runFinished(
  client: Browserless,
  runId: number,
): Promise<{ status: string; fraction: number; phase: string }> {
  for (let i = 0; i < 900; i++) {
    const r = await client.request(`/coordinate/runs/${runId}/status`);
    if (r.status !== 200) throw new Error(`run ${runId}: status answered ${r.status}`);
    const s = await r.json();
    if (s.status === "done" || s.status === "failed") return s;
    await new Promise((res) => setTimeout(res, 100));
  }
  throw new Error(`run ${runId} did not finish`);
}
