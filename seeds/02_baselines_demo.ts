import type { Knex } from "knex";
import { mean, sampleStandardDeviation } from "simple-statistics";
import { zScore } from "../app/compute/features";
import { mulberry32 } from "./lib/prng";

// ─────────────────────────────────────────────────────────────────────────────────────────────
// INVENTED DEMO DATA for "Harrow & Vale Fabrication": the baseline battery, baseline
// results for consented demo workers (a subset assessed twice, so test–retest reliability has data),
// and a norm set derived from this invented cohort. The values come from a documented synthetic
// model, not from any study or real person:
// value = mean + sd · (0.6 · ability + 0.8 · trait) + sd · 0.4 · sessionNoise,
// ability, trait and noise independent standard normals (seeded), so the expected test–retest
// ICC is 1 / (1 + 0.16) ≈ 0.86. The four measures 03_forecast_demo.ts also uses share its means and SDs. Runs after 01_demo_scenario.ts; deterministic (seeded PRNG, fixed dates).
// ─────────────────────────────────────────────────────────────────────────────────────────────

const AT = "2026-11-30T09:00:00.000Z";

export const DEMO_MEASURES = [
  {
    code: "pegboard.dominant",
    name: "Pegboard, dominant hand",
    unit: "pins in 30 s",
    hib: true,
    entry: "manual",
    kind: null,
    mean: 15,
    sd: 2,
    decimals: 0,
  },
  {
    code: "boxBlocks.dominant",
    name: "Box and block, dominant hand",
    unit: "blocks per minute",
    hib: true,
    entry: "manual",
    kind: null,
    mean: 70,
    sd: 8,
    decimals: 0,
  },
  {
    code: "grip.dominant",
    name: "Grip strength, dominant hand",
    unit: "kg",
    hib: true,
    entry: "manual",
    kind: null,
    mean: 38,
    sd: 9,
    decimals: 1,
  },
  {
    code: "sway.ellipseArea95",
    name: "Sway 95 % ellipse area",
    unit: "mm²",
    hib: false,
    entry: "trace",
    kind: "sway",
    mean: 300,
    sd: 90,
    decimals: 1,
  },
  {
    code: "sway.meanVelocity",
    name: "Sway mean velocity",
    unit: "mm/s",
    hib: false,
    entry: "trace",
    kind: "sway",
    mean: 12,
    sd: 3,
    decimals: 2,
  },
  {
    code: "tracking.rmse",
    name: "Foot tracking RMSE",
    unit: "position units",
    hib: false,
    entry: "trace",
    kind: "tracking",
    mean: 12,
    sd: 3,
    decimals: 3,
  },
  {
    code: "tracking.lagMagnitudeSeconds",
    name: "Foot tracking lag size",
    unit: "s",
    hib: false,
    entry: "trace",
    kind: "tracking",
    mean: 0.2,
    sd: 0.06,
    decimals: 3,
  },
  {
    code: "hand.participationRatio",
    name: "Hand participation ratio",
    unit: "effective components",
    hib: true,
    entry: "trace",
    kind: "glove",
    mean: 5,
    sd: 1.2,
    decimals: 3,
  },
  {
    code: "hand.pc1Ratio",
    name: "Hand first-component share",
    unit: "ratio",
    hib: false,
    entry: "trace",
    kind: "glove",
    mean: 0.5,
    sd: 0.08,
    decimals: 3,
  },
  {
    code: "timing.meanAbsoluteAsynchronyMs",
    name: "Timing mean absolute asynchrony",
    unit: "ms",
    hib: false,
    entry: "trace",
    kind: "timing",
    mean: 40,
    sd: 10,
    decimals: 1,
  },
  {
    code: "timing.sdAsynchronyMs",
    name: "Timing SD of asynchrony",
    unit: "ms",
    hib: false,
    entry: "trace",
    kind: "timing",
    mean: 40,
    sd: 10,
    decimals: 1,
  },
  {
    code: "force.rmse",
    name: "Force grading RMSE",
    unit: "N",
    hib: false,
    entry: "trace",
    kind: "force",
    mean: 2,
    sd: 0.6,
    decimals: 3,
  },
  {
    code: "force.rSquared",
    name: "Force grading R²",
    unit: "ratio",
    hib: true,
    entry: "trace",
    kind: "force",
    mean: 0.9,
    sd: 0.04,
    decimals: 3,
  },
] as const;

function normal(rand: () => number): number {
  return Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}

function addDays(date: string, days: number): string {
  const d = new Date(`${date}T00:00:00.000Z`);
  d.setUTCDate(d.getUTCDate() + days);
  return d.toISOString().slice(0, 10);
}

export async function seed(knex: Knex): Promise<void> {
  const rand = mulberry32(20261202);
  await knex.transaction(async (trx) => {
    const users = await trx("users")
      .whereIn("email", ["morwenna.pike@harrowvale.example", "rhea.lindqvist@harrowvale.example"])
      .select("id", "email");
    const assessors = users.sort((a, b) => a.email.localeCompare(b.email)).map((u) => u.id as number);
    const measureIds: number[] = [];
    for (const m of DEMO_MEASURES) {
      const [r] = await trx("measures")
        .insert({
          code: m.code,
          name: m.name,
          unit: m.unit,
          higher_is_better: m.hib,
          entry: m.entry,
          trace_kind: m.kind,
          description: "Demo battery (invented values).",
          active: true,
          created_by: assessors[0],
          created_at: AT,
        })
        .returning("id");
      measureIds.push(r.id);
    }

    // Consented workers (01 seed); about 60 % baselined, a third of those twice (retest 14 days later).
    const workers = await trx("workers").where({ stage: "consented" }).orderBy("id").select("id", "employee_number");
    type Sess = { workerId: number; on: string; assessor: number; values: number[] };
    const sessions: Sess[] = [];
    for (const w of workers) {
      const persona = w.employee_number === "HV-00001";
      if (!persona && rand() >= 0.6) continue;
      const ability = normal(rand);
      const traits = DEMO_MEASURES.map(() => normal(rand));
      const first = addDays("2026-10-12", Math.floor(rand() * 28));
      const count = persona || rand() < 0.33 ? 2 : 1;
      for (let s = 0; s < count; s++) {
        const values = DEMO_MEASURES.map((m, i) => {
          const z = 0.6 * ability + 0.8 * traits[i] + 0.4 * normal(rand);
          let v = m.mean + m.sd * (m.hib ? z : -z);
          if (m.code === "force.rSquared") v = Math.min(0.995, v);
          v = Math.max(m.code.startsWith("tracking.lag") ? 0.01 : m.sd * 0.2, v);
          const f = 10 ** m.decimals;
          return Math.round(v * f) / f;
        });
        sessions.push({
          workerId: w.id,
          on: addDays(first, 14 * s),
          assessor: assessors[(w.id + s) % assessors.length],
          values,
        });
      }
    }

    // Norms from this invented cohort: each worker's first session.
    const firstByWorker = new Map<number, Sess>();
    for (const s of sessions) if (!firstByWorker.has(s.workerId)) firstByWorker.set(s.workerId, s);
    const firsts = [...firstByWorker.values()];
    const [ns] = await trx("norm_sets")
      .insert({
        name: "Harrow & Vale cohort, autumn 2026 (invented demo)",
        origin: "cohort",
        source: `First baselines of ${firsts.length} consented workers at North Yard, Riverside and Eastgate (invented demo data).`,
        source_date: "2026-11-25",
        created_by: assessors[0],
        created_at: AT,
      })
      .returning("id");
    const norms = DEMO_MEASURES.map((_, i) => {
      const vs = firsts.map((s) => s.values[i]);
      return { mean: mean(vs), sd: sampleStandardDeviation(vs), n: vs.length };
    });
    await trx("norm_values").insert(
      norms.map((n, i) => ({ norm_set_id: ns.id, measure_id: measureIds[i], mean: n.mean, sd: n.sd, n: n.n })),
    );

    for (const s of sessions) {
      const at = `${s.on}T10:00:00.000Z`;
      const [row] = await trx("assessment_sessions")
        .insert({
          worker_id: s.workerId,
          assessed_on: s.on,
          assessor_user_id: s.assessor,
          notes: "Seeded demo baseline (invented).",
          created_at: at,
        })
        .returning("id");
      await trx("assessment_results").insert(
        s.values.map((v, i) => ({
          session_id: row.id,
          measure_id: measureIds[i],
          value: v,
          z_score: zScore(v, norms[i].mean, norms[i].sd, DEMO_MEASURES[i].hib),
          norm_set_id: ns.id,
          created_at: at,
        })),
      );
    }
    for (const [workerId, s] of firstByWorker) {
      await trx("workers")
        .where({ id: workerId })
        .update({ stage: "baselined", updated_at: `${s.on}T10:00:00.000Z` });
      await trx("stage_changes").insert({
        worker_id: workerId,
        from_stage: "consented",
        to_stage: "baselined",
        actor_user_id: s.assessor,
        at: `${s.on}T10:00:00.000Z`,
      });
    }
  });
}
