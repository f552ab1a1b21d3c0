import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/db.server";
import { upsertForecast } from "../../app/models/forecast.server";
import { readOutbox } from "../../scripts/smtp-catcher";
import type { Browserless } from "../integration/helpers";
import { PERSONA } from "../integration/helpers";
import { type Cluster, signInAt, startCluster } from "./cluster";

// Check-then-write actions fired in parallel at the built server on PostgreSQL (a real connection pool, so
// the requests' transactions really overlap): the same roster upload imported twice, two uploads of one file
// imported at once, more review requests than the cap allows, two assessors answering one request.
// Every answer is a 200 or a 409 with a message, never a 500, and the database ends consistent.
describe("concurrent writes on PostgreSQL", () => {
  let c: Cluster;
  let assessor: Browserless;
  let assessor2: Browserless;
  let worker: Browserless;
  beforeAll(async () => {
    c = await startCluster(1);
    const url = c.apps[0].appUrl;
    assessor = await signInAt(url, PERSONA.assessor);
    assessor2 = await signInAt(url, PERSONA.assessor2);
    worker = await signInAt(url, PERSONA.worker);
  }, 300_000);
  afterAll(async () => {
    if (process.env.DATABASE_URL === c?.pg.url) await db().destroy();
    await c?.stop();
  });

  const roster = (prefix: string, n: number) =>
    [
      "Employee number,First name,Last name,E-mail,Site,Department",
      ...Array.from({ length: n }, (_, i) => `${prefix}-${String(i).padStart(4, "0")},Test,Twin ${i},,NY,CH`),
    ].join("\n");
  async function upload(client: Browserless, name: string, csv: string): Promise<string> {
    const fd = new FormData();
    fd.append("roster", new Blob([csv], { type: "text/csv" }), name);
    const res = await client.request("/assess/roster", { method: "POST", body: fd });
    expect(res.status).toBe(302);
    return res.headers.get("Location")!;
  }
  const signedInWorker = () =>
    c.db("workers as w").join("users as u", "u.id", "w.user_id").where("u.email", PERSONA.worker).first("w.id");
  const importAt = (client: Browserless, url: string) => client.postForm(url, { intent: "import" });
  const countLike = async (prefix: string) =>
    Number((await c.db("workers").where("employee_number", "like", `${prefix}-%`).count({ n: "*" }).first())?.n ?? 0);

  it("imports one upload once when it is imported twice at the same moment (200 + 409)", async () => {
    const url = await upload(assessor, "same-upload.csv", roster("PGA", 300));
    const results = await Promise.all([importAt(assessor, url), importAt(assessor, url)]);
    const statuses = results.map((r) => r.status).sort();
    expect(statuses).toEqual([200, 409]);
    const refused = results.find((r) => r.status === 409)!;
    expect(await refused.text()).toContain("This import was already completed on");
    expect(await countLike("PGA")).toBe(300);
  });

  it("two uploads of the same roster imported at once: one imports, the other is refused or finds them on file", async () => {
    const csv = roster("PGB", 300);
    const [u1, u2] = [await upload(assessor, "twin-1.csv", csv), await upload(assessor, "twin-2.csv", csv)];
    const results = await Promise.all([importAt(assessor, u1), importAt(assessor, u2)]);
    const statuses = results.map((r) => r.status);
    expect(
      statuses.every((s) => s === 200 || s === 409),
      String(statuses),
    ).toBe(true);
    expect(statuses).toContain(200);
    for (const r of results.filter((x) => x.status === 409))
      expect(await r.text()).toContain("Another import added some of these employee numbers at the same moment");
    // Each employee number exactly once; the refused import wrote nothing (its upload is still open).
    expect(await countLike("PGB")).toBe(300);
    const batches = await c.db("roster_imports").whereIn("filename", ["twin-1.csv", "twin-2.csv"]).select("status");
    const imported = batches.filter((b) => b.status === "imported").length;
    expect(imported).toBe(statuses.filter((s) => s === 200).length);
  });

  it("holds the open-review cap of 5 when 8 requests arrive at once", async () => {
    const me = await signedInWorker();
    await c.db("review_requests").where({ worker_id: me.id }).del();
    const results = await Promise.all(
      Array.from({ length: 8 }, (_, i) =>
        worker.postForm("/me/review", {
          // About a figure: the assessors own these (the next test has two of them answer one at once).
          subject: "forecast",
          message: `Parallel request number ${i}: please look at my forecast.`,
        }),
      ),
    );
    const statuses = results.map((r) => r.status).sort();
    expect(statuses).toEqual([200, 200, 200, 200, 200, 409, 409, 409]);
    for (const r of results.filter((x) => x.status === 409))
      expect(await r.text()).toContain("You already have 5 open requests");
    const open = await c.db("review_requests").where({ worker_id: me.id, status: "open" }).count({ n: "*" }).first();
    expect(Number(open?.n)).toBe(5);
  });

  it("lets one of two assessors answer a request answered by both at the same moment", async () => {
    const me = await signedInWorker();
    const row = await c.db("review_requests").where({ worker_id: me.id, status: "open" }).orderBy("id").first("id");
    const answers = [
      "First assessor's answer to the parallel request.",
      "Second assessor's answer to the parallel request.",
    ];
    const results = await Promise.all(
      [assessor, assessor2].map((a, i) =>
        a.postForm("/assess/reviews", { reviewId: String(row.id), answer: answers[i] }),
      ),
    );
    const statuses = results.map((r) => r.status);
    expect([...statuses].sort()).toEqual([200, 409]);
    expect(await results[statuses.indexOf(409)].text()).toContain("This request has already been answered.");
    const stored = await c.db("review_requests").where({ id: row.id }).first("status", "answer");
    expect(stored.status).toBe("answered");
    expect(stored.answer).toBe(answers[statuses.indexOf(200)]); // the winner's answer, not overwritten
    const mails = readOutbox(c.outboxDir).filter(
      (m) => m.subject === "Your review request has been answered" && answers.some((a) => m.text.includes(a)),
    );
    expect(mails).toHaveLength(1);
  });

  it("keeps one forecast row when a worker's forecast is recomputed by four requests at once", async () => {
    // The app's own model code, in this process, on the cluster's database (its pool: real parallel
    // transactions). Each recompute checks for the worker's forecast row, then inserts or updates it (and the
    // open review flags the same way) while holding the worker's row lock.
    process.env.DATABASE_URL = c.pg.url;
    const { worker_id, device_type_id } = await c.db("forecasts").orderBy("id").first("worker_id", "device_type_id");
    await c.db("forecasts").where({ worker_id, device_type_id }).del();
    const results = await Promise.all(
      Array.from({ length: 4 }, () =>
        db().transaction((trx) => upsertForecast(trx, worker_id, device_type_id, { actor: null })),
      ),
    );
    expect(results.map((r) => r.status)).toEqual(["ready", "ready", "ready", "ready"]);
    expect(await c.db("forecasts").where({ worker_id, device_type_id }).select("id")).toHaveLength(1);
  });
});
