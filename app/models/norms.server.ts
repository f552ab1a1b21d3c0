import { sampleStandardDeviation, mean as ssMean } from "simple-statistics";
import { nowInstant, todayIn } from "~/dates";
import { type Db, db } from "~/db.server";
import { UserError } from "~/errors";
import { organisationTimeZone } from "./sites.server";

// Norm sets (docs/methods.md): mean and SD per measure, cohort-derived or entered from a published table,
// with source and date. Every stored z-score records which norm set it used.

/** Fewest workers a cohort-derived norm needs for one measure (below that the measure is left out). */
export const MIN_COHORT_N = 10;

export interface NormSet {
  id: number;
  name: string;
  origin: "cohort" | "published";
  source: string;
  sourceDate: string;
  createdBy: string | null;
  createdAt: string;
  values: { measureId: number; mean: number; sd: number; n: number | null }[];
}

export async function listNormSets(k: Db = db()): Promise<NormSet[]> {
  const sets = await k("norm_sets as n")
    .leftJoin("users as u", "u.id", "n.created_by")
    .select("n.*", "u.display_name as creator")
    .orderBy([
      { column: "n.source_date", order: "desc" },
      { column: "n.id", order: "desc" },
    ]);
  const values = await k("norm_values").select("*");
  return sets.map((s) => ({
    id: s.id,
    name: s.name,
    origin: s.origin,
    source: s.source,
    sourceDate: s.source_date as string,
    createdBy: s.creator ?? null,
    createdAt: String(s.created_at),
    values: values
      .filter((v) => v.norm_set_id === s.id)
      .map((v) => ({ measureId: v.measure_id, mean: v.mean, sd: v.sd, n: v.n ?? null })),
  }));
}

/**
 * The norm each measure is scored against by default: the most recent norm set (by source date,
 * then id) that holds a value for the measure.
 */
export async function defaultNorms(
  k: Db = db(),
): Promise<Map<number, { normSetId: number; mean: number; sd: number }>> {
  const rows = await k("norm_values as v")
    .join("norm_sets as n", "n.id", "v.norm_set_id")
    .select("v.measure_id", "v.norm_set_id", "v.mean", "v.sd")
    .orderBy([
      { column: "n.source_date", order: "desc" },
      { column: "n.id", order: "desc" },
    ]);
  const out = new Map<number, { normSetId: number; mean: number; sd: number }>();
  for (const r of rows)
    if (!out.has(r.measure_id)) out.set(r.measure_id, { normSetId: r.norm_set_id, mean: r.mean, sd: r.sd });
  return out;
}

export async function normsOf(
  normSetId: number,
  k: Db = db(),
): Promise<Map<number, { normSetId: number; mean: number; sd: number }>> {
  const rows = await k("norm_values").where({ norm_set_id: normSetId }).select("measure_id", "mean", "sd");
  return new Map(rows.map((r) => [r.measure_id, { normSetId, mean: r.mean, sd: r.sd }]));
}

export async function createPublishedNormSet(
  input: {
    name: string;
    source: string;
    sourceDate: string;
    values: { measureId: number; mean: number; sd: number; n: number | null }[];
  },
  userId: number,
) {
  return db().transaction(async (trx) => {
    const [r] = await trx("norm_sets")
      .insert({
        name: input.name,
        origin: "published",
        source: input.source,
        source_date: input.sourceDate,
        created_by: userId,
        created_at: nowInstant(),
      })
      .returning("id");
    await trx("norm_values").insert(
      input.values.map((v) => ({ norm_set_id: r.id, measure_id: v.measureId, mean: v.mean, sd: v.sd, n: v.n })),
    );
    return r.id;
  });
}

/**
 * Cohort norms from each consented worker's FIRST baseline value per measure, at one site or at every
 * site in the assessor's scope. Workers without given assessment consent have no data (erased), and
 * only measures with at least MIN_COHORT_N workers are included.
 */
export async function createCohortNormSet(
  input: { name: string; siteId: number | null; siteIds: number[]; siteLabel: string },
  userId: number,
) {
  return db().transaction(async (trx) => {
    const rows = await trx("assessment_results as r")
      .join("assessment_sessions as s", "s.id", "r.session_id")
      .join("workers as w", "w.id", "s.worker_id")
      .whereIn("w.site_id", input.siteId ? [input.siteId] : input.siteIds)
      .select("r.measure_id", "r.value", "s.worker_id", "s.assessed_on", "s.id as session_id")
      .orderBy([{ column: "s.assessed_on" }, { column: "s.id" }]);
    const first = new Map<string, number>();
    for (const r of rows) {
      const key = `${r.measure_id}:${r.worker_id}`;
      if (!first.has(key)) first.set(key, r.value);
    }
    const byMeasure = new Map<number, number[]>();
    for (const [key, v] of first) {
      const m = Number(key.split(":")[0]);
      (byMeasure.get(m) ?? byMeasure.set(m, []).get(m)!).push(v);
    }
    const values = [...byMeasure]
      .filter(([, vs]) => vs.length >= MIN_COHORT_N)
      .map(([measureId, vs]) => ({ measureId, mean: ssMean(vs), sd: sampleStandardDeviation(vs), n: vs.length }))
      .filter((v) => v.sd > 0);
    if (values.length === 0)
      throw new UserError(
        `No measure has first baselines from at least ${MIN_COHORT_N} consented workers at ${input.siteLabel} yet.`,
      );
    const today = todayIn(await organisationTimeZone(trx));
    const [r] = await trx("norm_sets")
      .insert({
        name: input.name,
        origin: "cohort",
        source: `First baselines of consented workers at ${input.siteLabel}, computed ${today} (n per measure listed).`,
        source_date: today,
        created_by: userId,
        created_at: nowInstant(),
      })
      .returning("id");
    await trx("norm_values").insert(
      values.map((v) => ({ norm_set_id: r.id, measure_id: v.measureId, mean: v.mean, sd: v.sd, n: v.n })),
    );
    return { id: r.id, measures: values.length };
  });
}

export interface ScoringNorm {
  mean: number;
  sd: number;
  higherIsBetter: boolean;
}

/**
 * One norm set's mean and SD per measure with the measure's direction: what a model version pinned to the
 * set scores raw baseline values with, at fit and at prediction time. Measures the set lacks are absent.
 */
export async function scoringNorms(normSetId: number, measureIds: number[], k: Db = db()) {
  const rows = await k("norm_values as v")
    .join("measures as m", "m.id", "v.measure_id")
    .where("v.norm_set_id", normSetId)
    .whereIn("v.measure_id", measureIds)
    .select("v.measure_id", "v.mean", "v.sd", "m.higher_is_better");
  return new Map<number, ScoringNorm>(
    rows
      .filter((r) => Number(r.sd) > 0)
      .map((r) => [
        r.measure_id as number,
        { mean: Number(r.mean), sd: Number(r.sd), higherIsBetter: Boolean(r.higher_is_better) },
      ]),
  );
}

/** Norm sets with the measures each holds, newest first (by source date, then id). */
export async function normSetCoverage(k: Db = db()): Promise<{ id: number; name: string; measureIds: number[] }[]> {
  const sets = await k("norm_sets")
    .select("id", "name")
    .orderBy([
      { column: "source_date", order: "desc" },
      { column: "id", order: "desc" },
    ]);
  const values = await k("norm_values").select("norm_set_id", "measure_id").orderBy(["norm_set_id", "measure_id"]);
  return sets.map((s) => ({
    id: s.id,
    name: s.name,
    measureIds: values.filter((v) => v.norm_set_id === s.id).map((v) => v.measure_id),
  }));
}
