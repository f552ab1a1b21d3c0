import fc from "fast-check";
import { UNSAFE_decodeViaTurboStream as decodeTurboStream } from "react-router";
import { beforeAll, describe, expect, it } from "vitest";
import { STAGES } from "~/domain/stages";
import { type Browserless, freshAssessmentSession, PERSONA, pageText, signIn, tableNames, testDb } from "./helpers";

// Generated crafted input (fast-check, fixed seeds so a failure replays) against every list page's query
// parameters and every upload endpoint. For each request: never a 5xx; a refused request (4xx) changes no
// table's row count; its message names the parameter, field or row.
const k = testDb();
const SEED = 20261204;

let tables: string[] = [];
// Not counted: stored readiness publications, written by the background protection worker after earlier
// tests' writes whenever it finishes (not by the request under test), and the throttle's own counters
// (`rate_limits` on PostgreSQL), which count every upload by design, refused ones included.
const BACKGROUND_TABLES = new Set(["readiness_publications", "readiness_receipts", "rate_limits"]);
/** Row counts of every application table but the background ones, in one query. */
async function counts(): Promise<Record<string, number>> {
  const rows = await k.raw(tables.map((t) => `select '${t}' as t, count(*) as n from "${t}"`).join(" union all "));
  const list = (Array.isArray(rows) ? rows : rows.rows) as { t: string; n: number | string }[];
  return Object.fromEntries(list.map((r) => [r.t, Number(r.n)]));
}

const text = (html: string) => pageText(html, { dropScripts: true });

const clients: Record<"admin" | "assessor" | "coordinator", Browserless> = {} as never;
beforeAll(async () => {
  tables = (await tableNames(k)).filter((t) => !BACKGROUND_TABLES.has(t));
  for (const who of ["admin", "assessor", "coordinator"] as const) clients[who] = (await signIn(PERSONA[who])).client;
});

// Every list page, who may open it, and its own filters with a few valid values to mix in.
const LIST_PAGES = [
  { who: "admin", path: "/admin/users", columns: ["name", "email", "lastSignIn"], filters: {} },
  {
    who: "admin",
    path: "/admin/access-log",
    columns: ["at", "worker", "resource"],
    filters: { worker: ["HV-00001"], actor: ["morwenna"], from: ["2026-11-01"], to: ["2026-12-31"] },
  },
  {
    who: "assessor",
    path: "/assess/workers",
    columns: ["employeeNumber", "name", "site", "department", "stage", "lastBaseline"],
    filters: { site: ["1", "2"], stage: [...STAGES] },
  },
  {
    who: "assessor",
    path: "/forecast",
    columns: ["worker", "device", "median", "planning", "remaining"],
    filters: { device: ["1", "2"], flagged: ["1"] },
  },
  {
    who: "coordinator",
    path: "/coordinate/trainees",
    columns: ["worker", "department", "priority", "stage"],
    filters: {},
  },
] as const;

const nasty = fc.constantFrom(
  "__proto__",
  "constructor",
  "prototype",
  "toString",
  "hasOwnProperty",
  "",
  " ",
  "0",
  "-1",
  "1.5",
  "1e309",
  "NaN",
  "Infinity",
  "-0",
  "99999999999999999999",
  "2147483648",
  "asc",
  "desc",
  "null",
  "undefined",
  "[object Object]",
  "%00",
  "' or 1=1 --",
  "<script>alert(1)</script>",
  "x".repeat(300),
);
const anyValue = fc.oneof(
  { arbitrary: nasty, weight: 4 },
  fc.string({ maxLength: 60 }),
  fc.integer().map(String),
  fc.double().map(String),
);

const capitalised = (key: string) => `${key[0].toUpperCase()}${key.slice(1)}:`;

describe("fuzz: list pages", () => {
  it("never answer 5xx to generated sort, dir, page, size, q and filter values; refusals name the parameter", async () => {
    const listCase = fc.constantFrom(...LIST_PAGES).chain((p) => {
      const keys = ["sort", "dir", "page", "size", "q", ...Object.keys(p.filters)];
      const valid = [...p.columns, ...Object.values(p.filters as Record<string, readonly string[]>).flat()];
      const value = fc.oneof(anyValue, fc.constantFrom(...valid));
      return fc.record({
        page: fc.constant(p),
        params: fc.array(fc.tuple(fc.constantFrom(...keys), value), { minLength: 1, maxLength: 5 }),
      });
    });
    let refused = 0;
    await fc.assert(
      fc.asyncProperty(listCase, async ({ page, params }) => {
        const url = `${page.path}?${new URLSearchParams(params as [string, string][])}`;
        const before = await counts();
        const res = await clients[page.who].request(url);
        const body = text(await res.text());
        expect(res.status, url).toBeLessThan(500);
        expect([200, 400], url).toContain(res.status);
        if (res.status === 400) {
          refused++;
          expect(await counts(), url).toEqual(before);
          const named = params.map(([key]) => capitalised(key)).filter((label) => body.includes(label));
          expect(named.length, `${url}: ${body.slice(0, 300)}`).toBeGreaterThan(0);
        }
      }),
      { seed: SEED, numRuns: 400 },
    );
    expect(refused).toBeGreaterThan(50); // the generator does reach the refusals
  }, 120_000);
});

const cell = fc.oneof(
  fc.double().map(String),
  fc.integer().map(String),
  fc.constantFrom("1e200", "-1e300", "1e309", "NaN", "", "1,5", "t", "target", "produced", "cue_ms", "x"),
  fc.string({ maxLength: 12 }),
);
const csv = fc
  .array(fc.array(cell, { minLength: 1, maxLength: 4 }), { minLength: 0, maxLength: 30 })
  .map((rows) => rows.map((r) => r.join(",")).join("\n"));
const header = fc.constantFrom(
  "target,produced",
  "t,x,y",
  "t,target,cursor",
  "cue_ms,onset_ms",
  "t,thumb,index",
  "employee_number,given_name,family_name,site,department",
  "",
);

// A body: a well-formed multipart form with generated fields and file, or raw bytes under a generated type.
const uploadBody = fc.oneof(
  fc.record({
    kind: fc.oneof(fc.constantFrom("sway", "tracking", "glove", "timing", "force"), anyValue),
    intent: fc.oneof(fc.constant("upload"), anyValue),
    sampleRateHz: fc.option(anyValue, { nil: undefined }),
    filename: fc.oneof(
      fc.constantFrom("trace.csv", "roster.csv", "roster.xlsx", "x.pdf"),
      fc.string({ maxLength: 20 }),
    ),
    content: fc.tuple(header, csv).map(([h, b]) => `${h}\n${b}`),
  }),
  fc.record({
    type: fc.oneof(
      fc.constantFrom(
        "multipart/form-data",
        "multipart/form-data; boundary=----fuzz",
        "application/x-www-form-urlencoded",
        "text/plain",
        "application/octet-stream",
        "",
      ),
      fc.string({ maxLength: 30 }).map((b) => `multipart/form-data; boundary=${b}`),
    ),
    bytes: fc.uint8Array({ maxLength: 3000 }),
  }),
);

describe("fuzz: upload endpoints", () => {
  it("never answer 5xx to generated bodies; refusals write nothing and name the file, field or row", async () => {
    const endpoints = [
      {
        path: await freshAssessmentSession(clients.assessor),
        field: "trace",
        names: /"row":\d+|"column":"|Trace file:|Trace kind:|Sample rate:|Intent:/,
      },
      { path: "/assess/roster", field: "roster", names: /Roster file:/ },
      {
        path: `/admin/sites/${(await k("sites").orderBy("id").first("id")).id}/calendar`,
        field: "ics",
        names: /Calendar file:|this form's action is not known/i,
        who: "admin" as const,
      },
    ];
    let refused = 0;
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...endpoints), uploadBody, async (endpoint, b) => {
        let init: RequestInit;
        if ("bytes" in b) {
          init = { method: "POST", body: b.bytes, headers: b.type ? { "Content-Type": b.type } : {} };
        } else {
          const fd = new FormData();
          fd.append("intent", b.intent);
          fd.append("kind", b.kind);
          if (b.sampleRateHz !== undefined) fd.append("sampleRateHz", b.sampleRateHz);
          fd.append(endpoint.field, new Blob([b.content], { type: "text/csv" }), b.filename || "upload");
          init = { method: "POST", body: fd };
        }
        const before = await counts();
        // The single-fetch URL runs the action alone, as the app's own forms submit: a document POST also
        // renders the page, and showing a worker's session is a read the access log rightly records.
        const res = await clients[("who" in endpoint && endpoint.who) || "assessor"].request(
          `${endpoint.path}.data`,
          init,
        );
        // The single-fetch answer decoded (React Router's own decoder) and read as JSON: issues keep their row
        // and column as fields.
        const decoded = res.body ? await decodeTurboStream(res.body, globalThis) : null;
        const body = JSON.stringify(decoded?.value ?? null);
        const what = `${endpoint.path} ${JSON.stringify(b).slice(0, 200)}`;
        expect(res.status, what).toBeLessThan(500);
        if (res.status >= 400) {
          refused++;
          expect(await counts(), what).toEqual(before);
          expect(body, `${what}: ${body.slice(0, 300)}`).toMatch(endpoint.names);
        }
      }),
      { seed: SEED + 1, numRuns: 300 },
    );
    expect(refused).toBeGreaterThan(50);
  }, 120_000);
});
