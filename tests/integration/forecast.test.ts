import crypto from "node:crypto";
// @ts-expect-error -- jstat ships no type declarations; used here only as the outside binomial reference
import jStatLib from "jstat";
import { inverse, Matrix } from "ml-matrix";
import { afterAll, describe, expect, it } from "vitest";
import { addMinutesToWallClock, dateIn, todayIn, wallClockAt } from "~/dates";
import { eraseForecasts } from "~/models/forecast.server";
import { reliabilityByMeasure } from "~/models/reliability-report.server";
import { ERASURE_STEPS } from "~/models/withdrawal.server";
import { workerForecastSchema } from "~/schemas/forecast";
import { independentLogLikelihood, nelderMeadMaximise } from "../reference/censored-likelihood";
import { baseUrl, PERSONA, pageText, signIn, testDb } from "./helpers";

const jStat = jStatLib as { binomial: { cdf(x: number, n: number, p: number): number } };

// Forecast area against the running stack and the seeded demo (seeds/03_forecast_demo.ts).
const k = testDb();

async function device(code: string) {
  return (await k("device_types").where({ code }).first("id")).id as number;
}

/** Latest consent status per worker for a purpose, straight from SQL (independent of the app's helper). */
async function consentByWorker(purpose: string): Promise<Map<number, string>> {
  const rows = await k("consent_records").where({ purpose }).select("worker_id", "status").orderBy("id");
  const m = new Map<number, string>();
  for (const r of rows) m.set(r.worker_id, r.status);
  return m;
}

/**
 * z-scores per measure from baselines assessed on or before the cutoff day (latest wins), computed here
 * from the raw values and one norm set: (value − mean)/SD, sign turned so that positive = better.
 */
async function zBefore(
  workerId: number,
  measureIds: number[],
  cutoff: string | null,
  normSetId: number,
): Promise<number[] | null> {
  const norms = new Map(
    (
      await k("norm_values as v")
        .join("measures as m", "m.id", "v.measure_id")
        .where("v.norm_set_id", normSetId)
        .select("v.measure_id", "v.mean", "v.sd", "m.higher_is_better")
    ).map((r) => [r.measure_id, r]),
  );
  const rows = await k("assessment_results as r")
    .join("assessment_sessions as s", "s.id", "r.session_id")
    .where("s.worker_id", workerId)
    .whereIn("r.measure_id", measureIds)
    .select("r.measure_id", "r.value", "s.assessed_on")
    .orderBy([{ column: "s.assessed_on" }, { column: "s.id" }]);
  const m = new Map<number, number>();
  for (const r of rows) {
    const n = norms.get(r.measure_id);
    if (!n || (cutoff && String(r.assessed_on).slice(0, 10) > cutoff)) continue;
    const z = (Number(r.value) - Number(n.mean)) / Number(n.sd);
    m.set(r.measure_id, n.higher_is_better ? z : -z);
  }
  const z = measureIds.map((id) => m.get(id));
  return z.some((v) => v === undefined) ? null : (z as number[]);
}

/** Columns standardised with their mean and (n − 1) SD, as the model stores them. */
function standardiseColumns(Z: number[][]): number[][] {
  const n = Z.length;
  const p = Z[0].length;
  const means = Array.from({ length: p }, (_, j) => Z.reduce((s, r) => s + r[j], 0) / n);
  const sds = means.map((m, j) => Math.sqrt(Z.reduce((s, r) => s + (r[j] - m) ** 2, 0) / (n - 1)));
  return Z.map((r) => r.map((v, j) => (v - means[j]) / sds[j]));
}

/**
 * Reference least-squares fit by the normal equations b = (XᵀX)⁻¹Xᵀy on standardised columns (the
 * textbook definition; the app never uses it).
 */
function normalEquations(Z: number[][], y: number[]): number[] {
  const X = new Matrix(standardiseColumns(Z).map((r) => [1, ...r]));
  const Y = Matrix.columnVector(y);
  return inverse(X.transpose().mmul(X)).mmul(X.transpose()).mmul(Y).to1DArray();
}

function coefficientTable(html: string): number[] {
  const table = /data-testid="coefficients"[\s\S]*?<tbody>([\s\S]*?)<\/tbody>/.exec(html)?.[1] ?? "";
  return [...table.matchAll(/<tr>[\s\S]*?<\/th><td>(-?[\d.]+)<\/td>/g)].map((m) => Number(m[1]));
}

const text = (html: string, testId: string) =>
  new RegExp(`data-testid="${testId}"[^>]*>([^<]*)<`).exec(html)?.[1] ?? null;

describe("model workbench: cohort with censored courses", () => {
  it("fits completed, still-training and stopped courses by censored likelihood, counting every exclusion", async () => {
    const deviceTypeId = await device("SRF-FOOT");
    const approved = await k("model_versions").where({ device_type_id: deviceTypeId, status: "approved" }).first();
    const measureIds: number[] = JSON.parse(approved.measure_ids);
    const normSetId = approved.norm_set_id as number;
    expect(normSetId).toBeTruthy();
    const consent = await consentByWorker("model");
    const courses = await k("device_courses").where({ device_type_id: deviceTypeId }).orderBy("worker_id");
    const expected = { withdrawn: 0, no_model_consent: 0, not_started: 0, missing_measures: 0 };
    const cohort: { z: number[]; hours: number; event: boolean; stopped: boolean }[] = [];
    for (const c of courses) {
      const state = consent.get(c.worker_id);
      if (state === "withdrawn") {
        expected.withdrawn++;
        continue;
      }
      if (state !== "given") {
        expected.no_model_consent++;
        continue;
      }
      const event = c.status === "proficient";
      const hours = Number(event ? c.hours_to_proficiency : c.cumulative_hours);
      if (!(hours > 0)) {
        expected.not_started++;
        continue;
      }
      const z = await zBefore(
        c.worker_id,
        measureIds,
        c.started_on ? String(c.started_on).slice(0, 10) : null,
        normSetId,
      );
      if (!z) {
        expected.missing_measures++;
        continue;
      }
      cohort.push({ z, hours, event, stopped: c.status === "stopped" });
    }
    const censored = cohort.filter((r) => !r.event);
    // The demo has censored courses of both kinds and exclusions, so the check is not vacuous.
    expect(censored.filter((r) => !r.stopped).length).toBeGreaterThan(0);
    expect(censored.filter((r) => r.stopped).length).toBeGreaterThan(0);
    expect(expected.withdrawn).toBeGreaterThan(0);
    expect(expected.missing_measures).toBeGreaterThan(0);

    const { client } = await signIn(PERSONA.assessor);
    const res = await client.postForm("/models/new", {
      intent: "fit",
      deviceTypeId: String(deviceTypeId),
      measureIds: measureIds.map(String),
      normSetId: String(normSetId),
    });
    expect(res.status).toBe(200);
    const html = (await res.text()).replace(/<!-- -->/g, "");
    expect(Number(text(html, "cohort-size"))).toBe(cohort.length);
    expect(Number(text(html, "completed"))).toBe(cohort.length - censored.length);
    expect(Number(text(html, "still-training"))).toBe(censored.filter((r) => !r.stopped).length);
    expect(Number(text(html, "stopped"))).toBe(censored.filter((r) => r.stopped).length);
    for (const [reason, n] of Object.entries(expected)) {
      const shown = new RegExp(`data-reason="${reason}"><strong>(\\d+)</strong>`).exec(html)?.[1];
      expect(Number(shown ?? 0), reason).toBe(n);
    }
    expect(html).not.toContain('data-reason="still_training"');
    const total = Object.values(expected).reduce((s, n) => s + n, 0);
    expect(Number(text(html, "excluded-total"))).toBe(total);

    // The page's coefficients (4 decimals) maximise the censored log-normal likelihood of exactly these
    // courses: checked by a general optimiser (Nelder–Mead) on a likelihood written independently.
    const shown = coefficientTable(html);
    expect(shown.length).toBe(measureIds.length + 1);
    const Z = standardiseColumns(cohort.map((r) => r.z));
    const time = cohort.map((r) => r.hours);
    const event = cohort.map((r) => r.event);
    const start = normalEquations(
      cohort.map((r) => r.z),
      time.map((t) => Math.log(t)),
    );
    const direct = nelderMeadMaximise((v) => independentLogLikelihood(Z, time, event, v), [...start, Math.log(0.4)]);
    shown.forEach((b, i) => {
      expect(Math.abs(b - direct[i])).toBeLessThan(6e-5);
    });
    // …and not the old fit, least squares on the completed courses only.
    const done = cohort.filter((r) => r.event);
    const old = normalEquations(
      done.map((r) => r.z),
      done.map((r) => Math.log(r.hours)),
    );
    expect(Math.max(...old.map((b, i) => Math.abs(b - shown[i])))).toBeGreaterThan(1e-3);
    // The planning figure's check, overall, by risk group and with stopped courses as misses, is shown.
    expect(text(html, "planning-coverage")).toMatch(/^\d+ %$/);
    expect(text(html, "stopped-as-miss")).toMatch(/^\d+ %$/);
    expect([...html.matchAll(/data-testid="risk-share"/g)].length).toBe(3);
  });

  it("a course still in training counts for its hours so far, never for a stray outcome value", async () => {
    const deviceTypeId = await device("SRF-FOOT");
    const measureIds: number[] = JSON.parse(
      (await k("model_versions").where({ device_type_id: deviceTypeId, status: "approved" }).first()).measure_ids,
    );
    const { client } = await signIn(PERSONA.assessor);
    const fitModel = async () =>
      await (
        await client.postForm("/models/new", {
          intent: "fit",
          deviceTypeId: String(deviceTypeId),
          measureIds: measureIds.map(String),
        })
      ).text();
    const before = await fitModel();
    const training = await k("device_courses")
      .where({ device_type_id: deviceTypeId, status: "training" })
      .where("cumulative_hours", ">", 0)
      .orderBy("worker_id")
      .first();
    await k("device_courses").where({ id: training.id }).update({ hours_to_proficiency: 999 });
    try {
      const after = await fitModel();
      expect(text(after, "cohort-size")).toBe(text(before, "cohort-size"));
      expect(coefficientTable(after)).toEqual(coefficientTable(before));
    } finally {
      await k("device_courses").where({ id: training.id }).update({ hours_to_proficiency: null });
    }
  });

  it("warns on every chosen measure whose test–retest reliability is poor (ICC(2,1) < 0.5) or not known", async () => {
    const deviceTypeId = await device("SRF-FOOT");
    const approved = await k("model_versions").where({ device_type_id: deviceTypeId, status: "approved" }).first();
    const ids: number[] = JSON.parse(approved.measure_ids);
    const byId = new Map((await k("measures").whereIn("id", ids).select("id", "name")).map((m) => [m.id, m.name]));
    const measures = ids.map((id) => ({ id, name: byId.get(id) as string }));
    const { client } = await signIn(PERSONA.assessor);
    const res = await client.postForm("/models/new", {
      intent: "fit",
      deviceTypeId: String(deviceTypeId),
      measureIds: ids.map(String),
    });
    expect(res.status).toBe(200);
    const html = (await res.text()).replace(/<!-- -->/g, "");
    const block = /data-testid="reliability-warnings"[\s\S]*?<\/section>/.exec(html)?.[0] ?? "";
    const warned = [...block.matchAll(/<li>([^<:]+):/g)].map((m) => m[1]);
    const reliability = new Map((await reliabilityByMeasure(k)).map((r) => [r.measureId, r]));
    const expected = measures
      .filter((m) => {
        const icc = reliability.get(m.id)?.icc21 ?? null;
        return icc === null || icc < 0.5;
      })
      .map((m) => m.name);
    expect(expected.length).toBeGreaterThan(0);
    expect(warned).toEqual(expected);
  });

  it("shows completed and censored courses per device type", async () => {
    const { client } = await signIn(PERSONA.assessor);
    const html = (await (await client.request("/models/new")).text()).replace(/<!-- -->/g, "");
    const consent = await consentByWorker("model");
    for (const d of await k("device_types").select("id", "name")) {
      const courses = (await k("device_courses").where({ device_type_id: d.id })).filter(
        (c) => consent.get(c.worker_id) === "given" && Number(c.cumulative_hours) > 0,
      );
      const row = new RegExp(`data-device="${d.name}"[\\s\\S]*?</tr>`).exec(html)?.[0] ?? "";
      const count = (what: string) => Number(new RegExp(`data-count="${what}">(\\d+)<`).exec(row)?.[1]);
      const completed = courses.filter((c) => c.status === "proficient").length;
      const stopped = courses.filter((c) => c.status === "stopped").length;
      expect(count("completed"), d.name).toBe(completed);
      expect(count("stopped"), d.name).toBe(stopped);
      expect(count("still-training"), d.name).toBe(courses.length - completed - stopped);
    }
  });

  it("names the problem when the choices cannot be fitted", async () => {
    const { client } = await signIn(PERSONA.assessor);
    const res = await client.postForm("/models/new", {
      intent: "fit",
      deviceTypeId: "999999",
      measureIds: ["1"],
    });
    expect(res.status).toBe(422);
    expect(await res.text()).toContain("That device type does not exist.");
    const none = await client.postForm("/models/new", {
      intent: "fit",
      deviceTypeId: String(await device("EXO-BACK")),
    });
    expect(none.status).toBe(400);
    expect(await none.text()).toContain("Choose at least one measure.");
  });
});

describe("model versions: approval by a second assessor", () => {
  it("the assessor who fitted a version cannot approve it; another assessor can, and forecasts move to it", async () => {
    const deviceTypeId = await device("EXO-SHOULDER");
    const previous = await k("model_versions").where({ device_type_id: deviceTypeId, status: "approved" }).first();
    const measureIds: number[] = JSON.parse(previous.measure_ids);
    const fitter = (await signIn(PERSONA.assessor)).client;
    const saved = await fitter.postForm("/models/new", {
      intent: "save",
      deviceTypeId: String(deviceTypeId),
      measureIds: measureIds.slice(0, 3).map(String),
      notes: "integration test",
    });
    expect(saved.status).toBe(302);
    const id = Number(/\/models\/(\d+)/.exec(saved.headers.get("Location") ?? "")?.[1]);
    const draft = await k("model_versions").where({ id }).first();
    expect(draft.status).toBe("draft");
    expect(JSON.parse(draft.measure_ids)).toEqual(measureIds.slice(0, 3));

    const self = await fitter.postForm(`/models/${id}`, { intent: "approve", confirm: "yes" });
    expect(self.status).toBe(409);
    expect(await self.text()).toContain("approved by an assessor other than the one who fitted it");
    expect((await k("model_versions").where({ id }).first()).status).toBe("draft");

    // The reviewer is told how many forecasts approval changes, and must confirm it.
    const reviewer = (await signIn(PERSONA.assessor2)).client;
    const page = (await (await reviewer.request(`/models/${id}`)).text()).replace(/<!-- -->/g, "");
    const promised = Number(/approving changes (\d+) worker forecast/.exec(page)?.[1]);
    expect(promised).toBeGreaterThan(0);
    const snapshot = async () =>
      new Map(
        (
          await k("forecasts")
            .where({ device_type_id: deviceTypeId })
            .select("worker_id", "median_hours", "planning_hours")
        ).map((f) => [f.worker_id, `${Number(f.median_hours)} ${Number(f.planning_hours)}`]),
      );
    const before = await snapshot();
    const unconfirmed = await reviewer.postForm(`/models/${id}`, { intent: "approve" });
    expect(unconfirmed.status).toBe(400);
    expect(await unconfirmed.text()).toContain("Tick the box to confirm that these forecasts will change.");
    expect((await k("model_versions").where({ id }).first()).status).toBe("draft");
    const ok = await reviewer.postForm(`/models/${id}`, { intent: "approve", confirm: "yes" });
    expect(ok.status).toBe(200);
    const after = await snapshot();
    const changed =
      [...after].filter(([w, v]) => before.get(w) !== v).length +
      [...before.keys()].filter((w) => !after.has(w)).length;
    expect(changed).toBe(promised);
    const now = await k("model_versions").where({ id }).first();
    expect(now.status).toBe("approved");
    expect(now.approved_by).toBe((await k("users").where({ email: PERSONA.assessor2 }).first("id")).id);
    expect((await k("model_versions").where({ id: previous.id }).first()).status).toBe("retired");
    const versions = await k("forecasts").where({ device_type_id: deviceTypeId }).distinct("model_version_id");
    expect(versions.map((v) => v.model_version_id)).toEqual([id]);
  });
});

describe("worker forecast: views, API and access log", () => {
  const workerId = async () => (await k("workers").where({ employee_number: "HV-00001" }).first("id")).id as number;

  it("assessors get the explanation with z-scores; coordinators get hours and intervals only (page data and API)", async () => {
    const id = await workerId();
    const assessor = (await signIn(PERSONA.assessor)).client;
    const coordinator = (await signIn(PERSONA.coordinator)).client;
    const a = await assessor.request(`/api/v1/workers/${id}/forecast`);
    expect(a.status).toBe(200);
    const av = workerForecastSchema.parse(await a.json());
    expect(av.view).toBe("clinical");
    const ready = av.forecasts.filter((f) => f.status === "ready");
    expect(ready.length).toBeGreaterThan(0);
    for (const f of ready) {
      expect(f.explanation!.contributions.length).toBe(f.modelVersion!.measures.length);
      // median = baseline hours × every factor (the explanation adds up).
      const product = f.explanation!.contributions.reduce((s, c) => s * c.multiplier, f.explanation!.baselineHours);
      expect(product / f.medianHours!).toBeCloseTo(1, 9);
      expect(f.lowerHours!).toBeLessThan(f.medianHours!);
      expect(f.upperHours!).toBeGreaterThan(f.medianHours!);
    }

    const c = await coordinator.request(`/api/v1/workers/${id}/forecast`);
    expect(c.status).toBe(200);
    const raw = await c.text();
    expect(raw).not.toContain("zScore");
    const cv = workerForecastSchema.parse(JSON.parse(raw));
    expect(cv.view).toBe("planning");
    expect(cv.forecasts.every((f) => f.explanation === null)).toBe(true);
    expect(cv.forecasts.find((f) => f.status === "ready")!.medianHours).toBe(ready[0].medianHours);

    // The page loader's data (what the browser receives) follows the same rule.
    const pageData = await (await coordinator.request(`/forecast/${id}.data`)).text();
    expect(pageData).toContain("medianHours");
    expect(pageData).not.toContain("zScore");
    expect(await (await assessor.request(`/forecast/${id}.data`)).text()).toContain("zScore");
  });

  it("every staff read is written to the access log", async () => {
    const id = await workerId();
    const before = Number(
      (await k("access_log").where({ worker_id: id, resource: "forecast" }).count({ n: "*" }).first())?.n,
    );
    const { client } = await signIn(PERSONA.coordinator);
    expect((await client.request(`/forecast/${id}`)).status).toBe(200);
    expect((await client.request(`/api/v1/workers/${id}/forecast`)).status).toBe(200);
    const after = Number(
      (await k("access_log").where({ worker_id: id, resource: "forecast" }).count({ n: "*" }).first())?.n,
    );
    expect(after - before).toBe(2);
  });

  it("API keys: assessor/coordinator keys in scope may read; other roles 403; other sites 404", async () => {
    const id = await workerId();
    const ny = (await k("sites").where({ code: "NY" }).first("id")).id;
    const rs = (await k("sites").where({ code: "RS" }).first("id")).id;
    const makeKey = async (role: string, siteId: number) => {
      const prefix = crypto.randomBytes(6).toString("hex");
      const secret = crypto.randomBytes(32).toString("base64url");
      const [row] = await k("api_keys")
        .insert({
          name: `forecast-it-${role}-${prefix}`,
          prefix,
          secret_hash: crypto.createHash("sha256").update(secret).digest("hex"),
          role,
          created_at: new Date().toISOString(),
        })
        .returning("id");
      await k("api_key_sites").insert({ api_key_id: row.id, site_id: siteId });
      return `lbk_${prefix}_${secret}`;
    };
    const get = (key: string) =>
      fetch(`${baseUrl()}/api/v1/workers/${id}/forecast`, { headers: { Authorization: `Bearer ${key}` } });
    const coord = await get(await makeKey("coordinator", ny));
    expect(coord.status).toBe(200);
    expect(workerForecastSchema.parse(await coord.json()).view).toBe("planning");
    const assess = await get(await makeKey("assessor", ny));
    expect(workerForecastSchema.parse(await assess.json()).view).toBe("clinical");
    expect((await get(await makeKey("manager", ny))).status).toBe(403);
    expect((await get(await makeKey("trainer", ny))).status).toBe(403);
    const elsewhere = await get(await makeKey("coordinator", rs));
    expect(elsewhere.status).toBe(404);
    expect(await elsewhere.json()).toEqual({ error: "No such worker in your scope." });
  });
});

describe("a worker outside the reader's scope", () => {
  it("answers 404 with the page's own message inside the signed-in shell, keeping the navigation", async () => {
    // A coordinator given only Eastgate asks for a North Yard worker.
    const eg = await k("sites").where({ code: "EG" }).first("id");
    const email = "scoped.coordinator@harrowvale.example";
    const [u] = await k("users")
      .insert({ email, display_name: "Scoped Coordinator", active: true, created_at: new Date().toISOString() })
      .returning("id");
    await k("role_assignments").insert({
      user_id: u.id,
      role: "coordinator",
      site_id: eg.id,
      created_at: new Date().toISOString(),
    });
    const { client } = await signIn(email);
    const outside = await k("workers as w").join("sites as s", "s.id", "w.site_id").where("s.code", "NY").first("w.id");
    const res = await client.request(`/forecast/${outside.id}`);
    expect(res.status).toBe(404);
    const html = await res.text();
    expect(html).toContain("No such worker in your scope.");
    // The shell stays: navigation and who is signed in.
    expect(html).toContain('aria-label="Main"');
    expect(html).toContain('data-testid="signed-in-as"');
    const data = await client.request(`/forecast/${outside.id}.data`);
    expect(data.status).toBe(404);
  });
});

describe("logging sessions: cumulative hours, proficiency, stage and forecast in one step", () => {
  it("moves the forecast, then marks the course proficient with its date and hours once the criterion is met", async () => {
    // Logged as the trainer does it, on the session log of sessions on their schedule (the one place a
    // session is logged): a trainee in training, with a forecast, on a device the trainer is certified for.
    const trainer = await k("trainers as t")
      .join("users as u", "u.id", "t.user_id")
      .join("sites as s", "s.id", "t.site_id")
      .where("u.email", PERSONA.trainer)
      .first("t.id", "s.time_zone");
    const course = await k("device_courses as c")
      .join("forecasts as f", function () {
        this.on("f.worker_id", "c.worker_id").andOn("f.device_type_id", "c.device_type_id");
      })
      .join("trainer_certifications as tc", function () {
        this.on("tc.device_type_id", "c.device_type_id").andOn("tc.trainer_id", k.raw("?", [trainer.id]));
      })
      .join("proficiency_criteria as pc", "pc.device_type_id", "c.device_type_id")
      .join("workers as w", "w.id", "c.worker_id")
      .where({ "c.status": "training", "w.stage": "training" })
      .orderBy("c.worker_id", "desc")
      .first("c.*");
    const w = course.worker_id as number;
    const deviceTypeId = course.device_type_id as number;
    const criterion = await k("proficiency_criteria").where({ device_type_id: deviceTypeId }).first();
    const before = await k("forecasts").where({ worker_id: w, device_type_id: deviceTypeId }).first();
    const { client } = await signIn(PERSONA.trainer);
    const today = todayIn(trainer.time_zone);
    let hour = 8;
    /** A one-hour session on the trainer's schedule today, logged through the session page. */
    const logOne = async (taskScore: string, notes?: string) => {
      const start = wallClockAt(today, `${String(hour).padStart(2, "0")}:00`);
      const end = addMinutesToWallClock(start, 60);
      hour += 1;
      const [row] = await k("training_sessions")
        .insert({
          worker_id: w,
          device_type_id: deviceTypeId,
          trainer_id: trainer.id,
          status: "scheduled",
          scheduled_start: start,
          scheduled_end: end,
          created_at: new Date().toISOString(),
        })
        .returning("id");
      const id = typeof row === "object" ? row.id : row;
      const res = await client.postForm(`/train/sessions/${id}`, {
        intent: "log",
        start: start.slice(0, 16),
        end: end.slice(0, 16),
        taskScore,
        ...(notes ? { notes } : {}),
      });
      return { id: id as number, res };
    };

    const low = Number(criterion.score_threshold) - 0.3;
    const first = await logOne(String(low), "it");
    expect(first.res.status).toBe(200);
    const c1 = await k("device_courses").where({ id: course.id }).first();
    expect(Number(c1.cumulative_hours)).toBeCloseTo(Number(course.cumulative_hours) + 1, 9);
    expect(c1.status).toBe("training");
    const after1 = await k("forecasts").where({ worker_id: w, device_type_id: deviceTypeId }).first();
    expect(Number(after1.hours_done)).toBeCloseTo(Number(c1.cumulative_hours), 9);
    expect(after1.remaining_hours).not.toBe(before.remaining_hours);
    const last = await k("training_sessions").where({ id: first.id }).first();
    expect(Number(last.cumulative_hours)).toBeCloseTo(Number(c1.cumulative_hours), 9);
    expect(Number(last.task_score)).toBeCloseTo(low, 9);

    const high = String(Math.min(1, Number(criterion.score_threshold) + 0.05));
    let hit = first;
    for (let i = 0; i < Number(criterion.consecutive_sessions); i++) {
      hit = await logOne(high);
      expect(hit.res.status).toBe(200);
    }
    const done = await k("device_courses").where({ id: course.id }).first();
    expect(done.status).toBe("proficient");
    expect(Number(done.hours_to_proficiency)).toBeCloseTo(
      Number(course.cumulative_hours) + 1 + Number(criterion.consecutive_sessions),
      9,
    );
    // The day of the session that met the criterion (its start, as logged).
    const hitRow = await k("training_sessions").where({ id: hit.id }).first("logged_at");
    expect(String(done.proficient_on)).toBe(dateIn(hitRow.logged_at, "UTC"));
    expect((await k("workers").where({ id: w }).first("stage")).stage).toBe("proficient");
    const change = await k("stage_changes")
      .where({ worker_id: w, to_stage: "proficient", device_type_id: deviceTypeId })
      .orderBy("id", "desc")
      .first();
    expect(change).toBeTruthy();
    const outcome = await k("forecast_outcomes").where({ worker_id: w, device_type_id: deviceTypeId }).first();
    expect(Number(outcome.actual_hours)).toBeCloseTo(Number(done.hours_to_proficiency), 9);
    expect(outcome.model_version_id).toBe(after1.model_version_id);
    expect((await k("forecasts").where({ worker_id: w, device_type_id: deviceTypeId }).first()).progress_status).toBe(
      "proficient",
    );

    // No sessions after proficiency.
    const more = await logOne("0.9");
    expect(more.res.status).toBe(409);
    expect(await more.res.text()).toContain("already reached proficiency");
  });

  it("a course in training is forecast by the simulated k-in-a-row rule under the curve chosen by AICc, and the page says which", async () => {
    // A seeded course whose curve informs the forecast (status "combined").
    const row = await k("forecasts as f")
      .join("device_courses as c", function () {
        this.on("c.worker_id", "f.worker_id").andOn("c.device_type_id", "f.device_type_id");
      })
      .where({ "f.progress_status": "combined", "c.status": "training" })
      .orderBy("f.id")
      .first("f.*");
    expect(row).toBeTruthy();
    const stored = JSON.parse(row.progress);
    // Both curves were fitted; the one kept has the lower AICc (recomputed here from each candidate's RSS,
    // AICc = n·ln(RSS/n) + 2K + 2K(K + 1)/(n − K − 1), K = 4; Burnham & Anderson 2002).
    const sessions = await k("training_sessions")
      .where({ worker_id: row.worker_id, device_type_id: row.device_type_id, status: "attended" })
      .whereNotNull("task_score")
      .orderBy([{ column: "cumulative_hours" }, { column: "id" }])
      .select("duration_hours", "cumulative_hours");
    const n = sessions.length;
    const candidates = stored.curveChoice.candidates as { kind: string; residualSS: number; aicc: number | null }[];
    expect(candidates.map((c) => c.kind).sort()).toEqual(["exponential", "power"]);
    for (const c of candidates) {
      if (c.aicc !== null) expect(c.aicc).toBeCloseTo(n * Math.log(c.residualSS / n) + 8 + 40 / (n - 5), 8);
    }
    const scored = candidates.filter((c) => c.aicc !== null);
    if (scored.length === 2) {
      const best = scored.reduce((a, b) => ((a.aicc as number) <= (b.aicc as number) ? a : b));
      expect(stored.curve.kind).toBe(best.kind);
    }
    // The simulation continued the log in sessions of the median logged length.
    const lengths = sessions.map((s) => Number(s.duration_hours)).sort((a, b) => a - b);
    const mid = lengths.length / 2;
    const medianLength = lengths.length % 2 ? lengths[Math.floor(mid)] : (lengths[mid - 1] + lengths[mid]) / 2;
    expect(stored.simulation.sessionHours).toBeCloseTo(medianLength, 9);
    expect(stored.simulation.draws).toBe(2000);
    expect(Number(row.remaining_planning_hours)).toBeGreaterThan(Number(row.remaining_hours));

    const { client } = await signIn(PERSONA.assessor);
    const text = pageText(await (await client.request(`/progress/${row.worker_id}/${row.device_type_id}`)).text());
    expect(text).toContain(`Curve used: ${stored.curve.kind === "power" ? "power law" : "exponential"}`);
    expect(text).toContain("2,000 simulated courses");
    expect(text).toContain(
      `${(await k("proficiency_criteria").where({ device_type_id: row.device_type_id }).first()).consecutive_sessions} sessions in a row score at least`,
    );
  });

  it("a course whose chosen curve levels off below the criterion is flagged for review, with no number", async () => {
    const flag = await k("review_flags").where({ kind: "plateau" }).whereNull("resolved_at").first();
    expect(flag).toBeTruthy();
    const f = await k("forecasts").where({ worker_id: flag.worker_id, device_type_id: flag.device_type_id }).first();
    expect(f.progress_status).toBe("review");
    expect(f.remaining_hours).toBeNull();
    expect(f.remaining_planning_hours).toBeNull();
    const stored = JSON.parse(f.progress);
    const criterion = await k("proficiency_criteria").where({ device_type_id: flag.device_type_id }).first();
    expect(stored.curve.asymptote).toBeLessThan(Number(criterion.score_threshold));
    expect(flag.reason).toContain(`levels off at ${stored.curve.asymptote.toPrecision(3)}`);
    expect(stored.simulation).toBeNull();
  });

  it("trainers reach only trainees on their own schedule", async () => {
    const { client } = await signIn(PERSONA.trainer);
    const ines = (
      await k("trainers as t").join("users as u", "u.id", "t.user_id").where("u.email", PERSONA.trainer).first("t.id")
    ).id;
    const mine = await k("training_sessions").where({ trainer_id: ines }).first("worker_id", "device_type_id");
    expect((await client.request(`/progress/${mine.worker_id}/${mine.device_type_id}`)).status).toBe(200);
    const other = await k("training_sessions")
      .whereNot({ trainer_id: ines })
      .whereNotIn("worker_id", k("training_sessions").where({ trainer_id: ines }).select("worker_id"))
      .first("worker_id", "device_type_id");
    expect((await client.request(`/progress/${other.worker_id}/${other.device_type_id}`)).status).toBe(404);
    expect((await client.request("/models")).status).toBe(403);
  });
});

describe("drift", () => {
  it("counts a course as a miss once its hours pass the planning figure, and alarms by an exact binomial test", async () => {
    const deviceTypeId = await device("SRA-WAIST");
    const v = await k("model_versions")
      .where({ device_type_id: deviceTypeId, status: "approved" })
      .first("id", "version_number");
    const q = Number((await k("organisations").first("planning_quantile")).planning_quantile);
    /** Within / miss among the resolved courses of the version, straight from SQL. */
    const resolved = async () => {
      let within = 0;
      let missed = 0;
      const done = new Set<number>();
      for (const o of await k("forecast_outcomes").where({ model_version_id: v.id })) {
        if (o.forecast_planning_hours == null || Math.abs(Number(o.planning_quantile) - q) > 1e-9) continue;
        done.add(o.worker_id);
        if (Number(o.actual_hours) <= Number(o.forecast_planning_hours)) within++;
        else missed++;
      }
      const running = await k("forecasts as f")
        .join("device_courses as c", function () {
          this.on("c.worker_id", "=", "f.worker_id").andOn("c.device_type_id", "=", "f.device_type_id");
        })
        .where("f.model_version_id", v.id)
        .whereNot("c.status", "proficient")
        .select("f.worker_id", "f.planning_hours", "c.cumulative_hours");
      for (const r of running)
        if (!done.has(r.worker_id) && Number(r.cumulative_hours) >= Number(r.planning_hours)) missed++;
      return { within, missed };
    };
    const { client } = await signIn(PERSONA.assessor);
    const warningOf = (html: string) =>
      /data-testid="drift-warning"[^>]*>([^<]*Waist-mounted[^<]*)</.exec(html.replace(/<!-- -->/g, ""))?.[1] ?? null;
    // Outside reference for the exact binomial tail: jStat's binomial CDF.
    const pOf = (r: { within: number; missed: number }) => jStat.binomial.cdf(r.within, r.within + r.missed, q);
    const start = await resolved();
    const before = warningOf(await (await client.request("/models")).text());
    expect(before !== null).toBe(start.within + start.missed > 0 && pOf(start) <= 0.05);

    // Courses that ran past their figure: finished late, and one still training beyond it (not finished).
    const free = await k("workers")
      .whereNotIn("id", k("device_courses").where({ device_type_id: deviceTypeId }).select("worker_id"))
      .orderBy("id", "desc")
      .limit(8)
      .select("id");
    const outcomeIds: number[] = [];
    for (const w of free.slice(0, 7)) {
      const [row] = await k("forecast_outcomes")
        .insert({
          model_version_id: v.id,
          worker_id: w.id,
          device_type_id: deviceTypeId,
          forecast_median_hours: 10,
          forecast_lower_hours: 8,
          forecast_upper_hours: 14,
          forecast_planning_hours: 12,
          planning_quantile: q,
          actual_hours: 20,
          covered: false,
          reached_on: "2026-11-29",
          recorded_at: "2026-11-29T10:00:00.000Z",
        })
        .returning("id");
      outcomeIds.push(row.id);
    }
    const runner = free[7].id as number;
    const template = await k("forecasts").where({ model_version_id: v.id }).first();
    const { id: _id, worker_id: _w, ...rest } = template;
    await k("device_courses").insert({
      worker_id: runner,
      device_type_id: deviceTypeId,
      status: "training",
      cumulative_hours: Number(template.planning_hours) + 1,
      started_on: "2026-11-02",
      updated_at: "2026-11-29T10:00:00.000Z",
    });
    await k("forecasts").insert({ ...rest, worker_id: runner });
    try {
      const now = await resolved();
      expect(now.missed).toBe(start.missed + 8);
      expect(pOf(now)).toBeLessThanOrEqual(0.05);
      const warning = warningOf(await (await client.request("/models")).text());
      expect(warning).toContain(`${now.missed} of ${now.within + now.missed} courses went past their planning figure`);
      const page = (await (await client.request(`/models/${v.id}`)).text()).replace(/<!-- -->/g, "");
      expect(page).toContain(`p = ${pOf(now).toPrecision(2)}`);
    } finally {
      await k("forecasts").where({ worker_id: runner, device_type_id: deviceTypeId }).del();
      await k("device_courses").where({ worker_id: runner, device_type_id: deviceTypeId }).del();
      await k("forecast_outcomes").whereIn("id", outcomeIds).del();
    }
  });
});

describe("norm set pinning", () => {
  it("a newer norm set, and results rescored with it, leave the forecasts of an existing version unchanged", async () => {
    const deviceTypeId = await device("SRF-FOOT");
    const v = await k("model_versions").where({ device_type_id: deviceTypeId, status: "approved" }).first();
    const measureIds: number[] = JSON.parse(v.measure_ids);
    const pinned = await k("norm_values").where({ norm_set_id: v.norm_set_id }).whereIn("measure_id", measureIds);
    const snapshot = async () =>
      new Map(
        (await k("forecasts").where({ device_type_id: deviceTypeId }).select("worker_id", "planning_hours")).map(
          (f) => [f.worker_id as number, Number(f.planning_hours)],
        ),
      );
    const before = await snapshot();
    expect(before.size).toBeGreaterThan(0);
    const [set] = await k("norm_sets")
      .insert({
        name: "IT newer norms",
        origin: "published",
        source: "integration test (invented)",
        source_date: "2026-12-02",
        created_at: "2026-12-02T09:00:00.000Z",
      })
      .returning("id");
    await k("norm_values").insert(
      pinned.map((n) => ({ norm_set_id: set.id, measure_id: n.measure_id, mean: n.mean + n.sd, sd: n.sd * 2, n: 50 })),
    );
    // Every stored z-score of these measures is rescored with the newer set (what a reassessment would get).
    const results = await k("assessment_results")
      .whereIn("measure_id", measureIds)
      .select("id", "z_score", "norm_set_id");
    await k("assessment_results")
      .whereIn("measure_id", measureIds)
      .update({ z_score: k.raw("z_score / 2 - 0.5"), norm_set_id: set.id });
    const { client } = await signIn(PERSONA.assessor);
    try {
      // Recompute every forecast (saving the planning percentile unchanged does that).
      const q = Math.round(Number((await k("organisations").first("planning_quantile")).planning_quantile) * 100);
      const res = await client.postForm("/models", { intent: "quantile", planningQuantile: String(q) });
      expect(res.status).toBe(200);
      const after = await snapshot();
      expect(after.size).toBe(before.size);
      for (const [w, hours] of before) expect(Math.abs((after.get(w) ?? 0) - hours)).toBeLessThan(1e-9);
      // A new fit is pinned to the newest set holding every measure, and says so.
      const fit = await client.postForm("/models/new", {
        intent: "fit",
        deviceTypeId: String(deviceTypeId),
        measureIds: measureIds.map(String),
      });
      expect(text(await fit.text(), "norm-set")).toBe("IT newer norms");
    } finally {
      for (const r of results)
        await k("assessment_results").where({ id: r.id }).update({ z_score: r.z_score, norm_set_id: r.norm_set_id });
      await k("norm_values").where({ norm_set_id: set.id }).del();
      await k("norm_sets").where({ id: set.id }).del();
    }
  });
});

describe("erasure on withdrawal", () => {
  it("the consent module's forecasts step erases forecasts, drift records and review flags", async () => {
    const step = ERASURE_STEPS.find((s) => s.label === "forecasts")!;
    expect(step.purposes).toEqual(expect.arrayContaining(["planning", "assessment"]));
    const flagged = await k("review_flags").first("worker_id");
    expect(flagged).toBeTruthy();
    const w = flagged.worker_id as number;
    expect(Number((await k("forecasts").where({ worker_id: w }).count({ n: "*" }).first())?.n)).toBeGreaterThan(0);
    const UNDO = new Error("undo");
    await k
      .transaction(async (trx) => {
        const n = await step.run(trx, w);
        expect(n).toBeGreaterThan(0);
        expect(Number((await trx("forecasts").where({ worker_id: w }).count({ n: "*" }).first())?.n)).toBe(0);
        expect(Number((await trx("review_flags").where({ worker_id: w }).count({ n: "*" }).first())?.n)).toBe(0);
        expect(await eraseForecasts(trx, w)).toBe(0);
        throw UNDO; // leave the shared test database as it was
      })
      .catch((e) => {
        if (e !== UNDO) throw e;
      });
  });
});

afterAll(async () => {
  await k("api_keys").where("name", "like", "forecast-it-%").del();
});
