import type { Knex } from "knex";
import { MEASURE_DIRECTIONS, zScore } from "../app/compute/features";
import { firstProficientIndex } from "../app/compute/proficiency-rule";
import { gaussianSource, mulberry32 } from "../app/compute/seeded-random";
import { upsertForecast } from "../app/models/forecast.server";
import { approveModelVersion, saveModelVersion } from "../app/models/model-versions.server";
import { logSessionResult } from "../app/models/progress.server";

// ─────────────────────────────────────────────────────────────────────────────────────────────
// INVENTED DEMO DATA for the forecast area. Every outcome below is generated from the documented
// synthetic model, not observed on anyone:
//
// log(hours to proficiency) = ln(H₀) + Σ_j b_j · z_j + σ · ε, z_j, ε ~ N(0, 1) independent
//
// with z_j the baseline z-score (positive = better) on four trace measures, and per device type:
// SRF-FOOT H₀ = 22 h b = tracking −0.30, timing −0.15, hand −0.10, sway −0.03 σ = 0.22
// SRA-WAIST H₀ = 16 h b = tracking −0.05, timing −0.20, hand −0.25, sway −0.08 σ = 0.25
// EXO-SHOULDER H₀ = 7 h b = tracking −0.04, timing −0.05, hand −0.02, sway −0.22 σ = 0.24
// EXO-BACK H₀ = 6 h b = tracking −0.06, timing −0.03, hand 0.00, sway −0.26 σ = 0.24
// Sessions last 1 h (finger, exoskeletons) or 1.5 h (arm), inside each device's wear-time limit.
// Each past trainee's sessions follow a saturating curve score = a − (a − s)·e^(−c·hours) that reaches the
// criterion near the drawn hours, plus N(0, 0.025) noise; the recorded hours to proficiency are where the
// criterion rule (consecutive sessions at or above the threshold) is first met on those sessions.
// Per device type: 40 consented past trainees, 2 whose model consent was later withdrawn, 2 missing a
// measure, 1 stopped course, 5 trainees in progress (one on SRF-FOOT plateaus below the criterion; two
// finish after the model is approved, giving the first drift outcomes), and
// baselines for further workers so they get forecasts. Model versions are fitted by Morwenna Pike and
// approved by Rhea Lindqvist. Seeded PRNG and fixed dates: the same data on every machine.
// ─────────────────────────────────────────────────────────────────────────────────────────────

const NOW = "2026-11-30T09:00:00.000Z";
const FITTED_AT = "2026-11-20T10:00:00.000Z";
const APPROVED_AT = "2026-11-23T14:30:00.000Z";

const MEASURES = [
  { code: "tracking.rmse", kind: "tracking", mean: 12, sd: 3 },
  { code: "timing.sdAsynchronyMs", kind: "timing", mean: 40, sd: 10 },
  { code: "hand.participationRatio", kind: "glove", mean: 5, sd: 1.2 },
  { code: "sway.ellipseArea95", kind: "sway", mean: 300, sd: 90 },
] as const;

const MODELS: Record<
  string,
  { h0: number; b: number[]; sigma: number; session: number; threshold: number; consecutive: number }
> = {
  "SRF-FOOT": { h0: 22, b: [-0.3, -0.15, -0.1, -0.03], sigma: 0.22, session: 1, threshold: 0.8, consecutive: 2 },
  "SRA-WAIST": { h0: 16, b: [-0.05, -0.2, -0.25, -0.08], sigma: 0.25, session: 1.5, threshold: 0.8, consecutive: 2 },
  "EXO-SHOULDER": { h0: 7, b: [-0.04, -0.05, -0.02, -0.22], sigma: 0.24, session: 1, threshold: 0.85, consecutive: 2 },
  "EXO-BACK": { h0: 6, b: [-0.06, -0.03, 0, -0.26], sigma: 0.24, session: 1, threshold: 0.85, consecutive: 2 },
};

const PAST = 40;
const WITHDRAWN = 2;
const MISSING = 2;
const STOPPED = 1;
const IN_PROGRESS = 5;
const NEW_WITH_BASELINE = 40;

function addDays(day: string, days: number): string {
  const d = new Date(`${day}T00:00:00.000Z`);
  d.setUTCDate(d.getUTCDate() + days);
  return d.toISOString().slice(0, 10);
}

export async function seed(knex: Knex): Promise<void> {
  const rand = mulberry32(20261204);
  const gauss = gaussianSource(rand);
  await knex.transaction(async (trx) => {
    const user = async (email: string) => (await trx("users").where({ email }).first("id"))?.id as number;
    const morwenna = await user("morwenna.pike@harrowvale.example");
    const rhea = await user("rhea.lindqvist@harrowvale.example");
    if (!morwenna || !rhea) throw new Error("03_forecast_demo needs the personas from 01_demo_scenario");

    // Measures (the baseline seed may already have created them) and an invented norm set for them.
    for (const m of MEASURES) {
      const dir = MEASURE_DIRECTIONS[m.code];
      await trx("measures")
        .insert({
          code: m.code,
          name: dir.label,
          unit: dir.unit,
          higher_is_better: dir.higherIsBetter,
          entry: "trace",
          trace_kind: m.kind,
          active: true,
          created_at: NOW,
        })
        .onConflict("code")
        .ignore();
    }
    const measureIds: number[] = [];
    for (const m of MEASURES) measureIds.push((await trx("measures").where({ code: m.code }).first("id")).id);
    const [norm] = await trx("norm_sets")
      .insert({
        name: "Forecast demo norms (invented)",
        origin: "published",
        source: "Invented for the Limberly demo; not a published table.",
        source_date: "2026-09-01",
        created_by: morwenna,
        created_at: NOW,
      })
      .returning("id");
    for (let j = 0; j < MEASURES.length; j++)
      await trx("norm_values").insert({
        norm_set_id: norm.id,
        measure_id: measureIds[j],
        mean: MEASURES[j].mean,
        sd: MEASURES[j].sd,
        n: 120,
      });

    const texts = Object.fromEntries(
      (await trx("consent_text_versions").select("id", "purpose")).map((t) => [t.purpose, t.id]),
    );
    const devices = await trx("device_types").select("id", "code").orderBy("id");
    const trainers = await trx("trainers as t")
      .join("trainer_certifications as c", "c.trainer_id", "t.id")
      .select("t.id", "t.site_id", "c.device_type_id");
    const ines = (
      await trx("trainers as t")
        .join("users as u", "u.id", "t.user_id")
        .where("u.email", "ines.calloway@harrowvale.example")
        .first("t.id", "t.site_id")
    )?.id as number | undefined;

    // Workers in roster order; the worker persona (HV-00001) is kept for an in-progress course.
    const all = await trx("workers").select("id", "employee_number", "stage", "site_id").orderBy("id");
    const persona = all.find((w) => w.employee_number === "HV-00001");
    // Consented workers the baseline seed (02) has not assessed come first, so past trainees' synthetic baselines
    // do not pile a second, unrelated baseline onto a worker's test–retest pair.
    const assessed = new Set(await trx("assessment_sessions").distinct("worker_id").pluck("worker_id"));
    // Workers still only invited come last: they stay available for recording first consent.
    const rank = (w: { id: number; stage: string }) => (w.stage === "invited" ? 2 : assessed.has(w.id) ? 1 : 0);
    const pool = all
      .filter((w) => w !== persona && w.stage !== "withdrawn")
      .sort((a, b) => rank(a) - rank(b) || a.id - b.id);
    let next = 0;
    const take = () => {
      if (next >= pool.length) throw new Error("not enough demo workers for 03_forecast_demo");
      return pool[next++];
    };

    const consentAll = async (workerId: number, at: string) => {
      const have = new Set(
        (await trx("consent_records").where({ worker_id: workerId, status: "given" }).select("purpose")).map(
          (r) => r.purpose,
        ),
      );
      for (const purpose of ["assessment", "planning", "model"]) {
        if (have.has(purpose)) continue;
        await trx("consent_records").insert({
          worker_id: workerId,
          purpose,
          text_version_id: texts[purpose],
          status: "given",
          given_at: at,
          witness_user_id: morwenna,
          recorded_by: morwenna,
          created_at: at,
        });
      }
    };
    const setStage = async (workerId: number, from: string, to: string, deviceTypeId: number | null, at: string) => {
      if (from === to) return;
      await trx("workers").where({ id: workerId }).update({ stage: to, updated_at: at });
      await trx("stage_changes").insert({
        worker_id: workerId,
        device_type_id: deviceTypeId,
        from_stage: from,
        to_stage: to,
        actor_user_id: morwenna,
        at,
      });
    };
    const baseline = async (workerId: number, day: string, z: number[], skip: number | null = null) => {
      const [s] = await trx("assessment_sessions")
        .insert({
          worker_id: workerId,
          assessed_on: day,
          assessor_user_id: morwenna,
          notes: "Synthetic demo baseline (invented).",
          created_at: `${day}T09:00:00.000Z`,
        })
        .returning("id");
      for (let j = 0; j < MEASURES.length; j++) {
        if (j === skip) continue;
        const m = MEASURES[j];
        const hib = MEASURE_DIRECTIONS[m.code].higherIsBetter as boolean;
        const value = Math.max(0.01, m.mean + (hib ? z[j] : -z[j]) * m.sd);
        await trx("assessment_results").insert({
          session_id: s.id,
          measure_id: measureIds[j],
          value: Math.round(value * 1000) / 1000,
          z_score: Math.round(zScore(value, m.mean, m.sd, hib) * 10000) / 10000,
          norm_set_id: norm.id,
          created_at: `${day}T09:00:00.000Z`,
        });
      }
    };
    // Sessions along a curve that reaches the criterion near `targetHours`; stops at the criterion or after maxSessions.
    const sessions = async (
      workerId: number,
      deviceTypeId: number,
      trainerId: number | null,
      startDay: string,
      spec: (typeof MODELS)[string],
      targetHours: number,
      opts: { maxSessions?: number; asymptote?: number; holdLast?: boolean } = {},
    ) => {
      const a = opts.asymptote ?? 0.94 + 0.04 * rand();
      const s = 0.2 + 0.15 * rand();
      const goal = Math.min(spec.threshold + 0.03, a - 0.01);
      const c = a > goal ? Math.log((a - s) / (a - goal)) / targetHours : 0.05;
      let cum = 0;
      const scores: number[] = [];
      let day = startDay;
      for (let i = 0; i < (opts.maxSessions ?? 400); i++) {
        cum = Math.round((cum + spec.session) * 1000) / 1000;
        const score = Math.min(1, Math.max(0, a - (a - s) * Math.exp(-c * cum) + 0.025 * gauss()));
        scores.push(Math.round(score * 1000) / 1000);
        if (
          opts.holdLast &&
          firstProficientIndex(scores, { scoreThreshold: spec.threshold, consecutiveSessions: spec.consecutive }) >= 0
        ) {
          // Keep the session that completes the criterion for later (it is logged after the model is approved).
          return {
            cum: Math.round((cum - spec.session) * 1000) / 1000,
            day,
            proficient: false,
            curve: { a, s, c },
            held: scores[i],
          };
        }
        day = addDays(day, i % 2 === 0 ? 2 : 3);
        const at = `${day}T${i % 2 === 0 ? "09" : "13"}:00:00.000Z`;
        await trx("training_sessions").insert({
          worker_id: workerId,
          device_type_id: deviceTypeId,
          trainer_id: trainerId,
          scheduled_start: at.slice(0, 19), // wall-clock, without zone
          status: "attended",
          duration_hours: spec.session,
          task_score: scores[i],
          cumulative_hours: cum,
          logged_by: morwenna,
          logged_at: at,
          created_at: at,
        });
        if (
          firstProficientIndex(scores, { scoreThreshold: spec.threshold, consecutiveSessions: spec.consecutive }) >= 0
        )
          return { cum, day, proficient: true, curve: { a, s, c }, held: null };
      }
      return { cum, day, proficient: false, curve: { a, s, c }, held: null };
    };

    const finishers: {
      workerId: number;
      deviceTypeId: number;
      trainerId: number | null;
      session: number;
      score: number;
      day: string;
    }[] = [];
    for (const d of devices) {
      const spec = MODELS[d.code];
      if (!spec) continue;
      await trx("proficiency_criteria")
        .insert({
          device_type_id: d.id,
          score_threshold: spec.threshold,
          consecutive_sessions: spec.consecutive,
          set_by: morwenna,
          set_at: "2026-06-01T09:00:00.000Z",
        })
        .onConflict("device_type_id")
        .merge();
      const trainerFor = (siteId: number) =>
        trainers.find((t) => t.device_type_id === d.id && t.site_id === siteId)?.id ??
        trainers.find((t) => t.device_type_id === d.id)?.id ??
        null;
      const drawZ = () => MEASURES.map(() => Math.round(gauss() * 1000) / 1000);
      const drawHours = (z: number[]) =>
        spec.h0 * Math.exp(z.reduce((s, zj, j) => s + spec.b[j] * zj, 0) + spec.sigma * gauss());

      // Past trainees: consented, withdrawn later, missing a measure, stopped.
      const roles = [
        ...Array(PAST).fill("past"),
        ...Array(WITHDRAWN).fill("withdrawn"),
        ...Array(MISSING).fill("missing"),
        ...Array(STOPPED).fill("stopped"),
      ];
      for (let i = 0; i < roles.length; i++) {
        const w = take();
        const startDay = addDays("2025-03-03", Math.floor(rand() * 420));
        await consentAll(w.id, `${addDays(startDay, -21)}T10:00:00.000Z`);
        const z = drawZ();
        await baseline(w.id, addDays(startDay, -7), z, roles[i] === "missing" ? 2 : null);
        const target = drawHours(z);
        const trainerId = trainerFor(w.site_id);
        const stopped = roles[i] === "stopped";
        const run = await sessions(w.id, d.id, trainerId, startDay, spec, target, stopped ? { maxSessions: 4 } : {});
        await trx("device_courses").insert({
          worker_id: w.id,
          device_type_id: d.id,
          status: stopped ? "stopped" : run.proficient ? "proficient" : "training",
          cumulative_hours: run.cum,
          started_on: startDay,
          proficient_on: run.proficient && !stopped ? run.day : null,
          hours_to_proficiency: run.proficient && !stopped ? run.cum : null,
          pause_reason: stopped ? "Stopped at the worker's request (invented)." : null,
          updated_at: `${run.day}T17:00:00.000Z`,
        });
        if (run.proficient && !stopped) await setStage(w.id, w.stage, "proficient", d.id, `${run.day}T17:00:00.000Z`);
        if (roles[i] === "withdrawn") {
          await trx("consent_records").insert({
            worker_id: w.id,
            purpose: "model",
            text_version_id: texts.model,
            status: "withdrawn",
            withdrawn_at: "2026-09-15T10:00:00.000Z",
            witness_user_id: rhea,
            recorded_by: rhea,
            created_at: "2026-09-15T10:00:00.000Z",
          });
        }
      }

      // Trainees in progress (started in October/November 2026); one SRF-FOOT trainee plateaus below the criterion.
      for (let i = 0; i < IN_PROGRESS; i++) {
        const w = d.code === "SRF-FOOT" && i === 0 && persona ? persona : take();
        const finishing = i === 1 || i === 2;
        const z0 = drawZ();
        const target = drawHours(z0);
        // Finishers started early enough to be one session from the criterion when the model is approved.
        const startDay = finishing
          ? addDays("2026-11-20", -Math.ceil((target / spec.session) * 2.5) - 4)
          : addDays("2026-10-12", Math.floor(rand() * 14));
        await consentAll(w.id, "2026-10-05T10:00:00.000Z");
        await baseline(w.id, addDays(startDay, -5), z0);
        const plateau = d.code === "SRF-FOOT" && i === IN_PROGRESS - 1;
        const done = finishing
          ? 400
          : plateau
            ? 9
            : 3 + Math.floor(rand() * Math.max(1, Math.min(6, target / spec.session - 3)));
        const inesFits =
          ines !== undefined &&
          trainers.some((t) => t.id === ines && t.device_type_id === d.id && t.site_id === w.site_id);
        const trainerId = inesFits ? (ines as number) : trainerFor(w.site_id);
        const run = await sessions(w.id, d.id, trainerId, startDay, spec, target, {
          maxSessions: done,
          holdLast: finishing,
          ...(plateau ? { asymptote: 0.66 } : {}),
        });
        const status = run.proficient ? "proficient" : "training";
        await trx("device_courses").insert({
          worker_id: w.id,
          device_type_id: d.id,
          status,
          cumulative_hours: run.cum,
          started_on: startDay,
          proficient_on: run.proficient ? run.day : null,
          hours_to_proficiency: run.proficient ? run.cum : null,
          updated_at: `${run.day}T17:00:00.000Z`,
        });
        await setStage(w.id, w.stage, run.proficient ? "proficient" : "training", d.id, `${startDay}T09:00:00.000Z`);
        if (finishing && run.held !== null)
          finishers.push({
            workerId: w.id,
            deviceTypeId: d.id,
            trainerId,
            session: spec.session,
            score: run.held,
            day: run.day,
          });
      }
    }

    // Workers not yet trained, with a recent baseline: they get forecasts once the versions are approved.
    for (let i = 0; i < NEW_WITH_BASELINE && next < pool.length; i++) {
      const w = take();
      if (w.stage === "invited") continue;
      await baseline(
        w.id,
        addDays("2026-11-02", i % 14),
        MEASURES.map(() => Math.round(gauss() * 1000) / 1000),
      );
      await setStage(w.id, w.stage, "baselined", null, `${addDays("2026-11-02", i % 14)}T12:00:00.000Z`);
    }

    // One model version per device type: fitted by Morwenna Pike, approved by Rhea Lindqvist (forecasts follow).
    for (const d of devices) {
      if (!MODELS[d.code]) continue;
      const v = await saveModelVersion(
        { deviceTypeId: d.id, measureIds, notes: "Demo model on the synthetic cohort (invented data)." },
        morwenna,
        trx,
        { now: FITTED_AT },
      );
      await approveModelVersion(v.id, rhea, trx, { now: APPROVED_AT });
    }
    // Two trainees per device type reach the criterion after approval (through the product's own logging
    // path), so each version has its first drift outcomes: actual hours against the forecast in use.
    for (const f of finishers) {
      const day = f.day > "2026-11-24" ? f.day : "2026-11-24";
      await logSessionResult(
        {
          workerId: f.workerId,
          deviceTypeId: f.deviceTypeId,
          durationHours: f.session,
          taskScore: f.score,
          notes: "Synthetic demo session (invented).",
          loggedBy: morwenna,
          trainerId: f.trainerId,
          at: `${day}T10:00:00.000Z`,
        },
        trx,
      );
    }
    // Progress updates for the trainees in progress, as of the seed date.
    for (const c of await trx("device_courses").where({ status: "training" }).select("worker_id", "device_type_id")) {
      await upsertForecast(trx, c.worker_id, c.device_type_id, { actor: morwenna, now: NOW });
    }
  });
}
