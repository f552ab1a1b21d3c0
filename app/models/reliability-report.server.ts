import { sampleStandardDeviation } from "simple-statistics";
import { holm } from "~/compute/multiplicity";
import {
  iccConfidenceInterval,
  intraclassCorrelation,
  minimalDetectableChange,
  type ReliabilityLabel,
  reliabilityLabel,
  reliableChangeIndex,
  standardErrorOfMeasurement,
} from "~/compute/reliability";
import { type Db, db } from "~/db.server";

// Test–retest reliability per measure from repeated baselines (docs/methods.md).
// Ratings: each worker's first two sessions holding the measure (rows = workers, columns = sessions),
// counted only when they are at most MAX_RETEST_DAYS apart (a test–retest interval short enough that
// true change is unlikely; sessions further apart measure change, not reliability).
// SD is the between-worker SD of the first session; SEM = SD·√(1 − ICC(2,1)) (absolute agreement,
// because a real change must be told apart from any systematic shift between sessions too);
// MDC95 = 1.96·√2·SEM.

/** Fewest workers with two baselines before reliability is reported for a measure. */
export const MIN_RETEST_N = 5;
/** Longest interval between the two baselines of a retest pair. */
export const MAX_RETEST_DAYS = 28;

export interface MeasureReliability {
  measureId: number;
  code: string;
  name: string;
  unit: string;
  n: number;
  icc21: number | null;
  /** 95 % confidence interval of ICC(2,1) (McGraw & Wong 1996, case 2A). */
  icc21Lower?: number | null;
  icc21Upper?: number | null;
  /** Koo & Li (2016) reading of ICC(2,1). */
  label?: ReliabilityLabel | null;
  icc31: number | null;
  sd: number | null;
  sem: number | null;
  mdc95: number | null;
  note?: string;
}

export function retestSummary(
  pairs: [number, number][],
): Omit<MeasureReliability, "measureId" | "code" | "name" | "unit"> {
  const n = pairs.length;
  if (n < MIN_RETEST_N)
    return {
      n,
      icc21: null,
      icc31: null,
      sd: null,
      sem: null,
      mdc95: null,
      note: `needs two baselines from at least ${MIN_RETEST_N} workers`,
    };
  try {
    const icc21 = intraclassCorrelation(pairs, "ICC(2,1)");
    const icc31 = intraclassCorrelation(pairs, "ICC(3,1)");
    const sd = sampleStandardDeviation(pairs.map((p) => p[0]));
    let interval: { lower: number; upper: number } | null = null;
    try {
      const ci = iccConfidenceInterval(pairs, "ICC(2,1)", 0.95);
      if (Number.isFinite(ci.lower) && Number.isFinite(ci.upper)) interval = ci;
    } catch {
      interval = null; // e.g. ICC of exactly 1: no interval, the estimate still stands
    }
    const spread = { icc21Lower: interval?.lower ?? null, icc21Upper: interval?.upper ?? null };
    if (icc21 < 0)
      return {
        n,
        icc21,
        ...spread,
        label: "poor",
        icc31,
        sd,
        sem: null,
        mdc95: null,
        note: "ICC below 0: no usable reliability",
      };
    const sem = standardErrorOfMeasurement(sd, icc21);
    return {
      n,
      icc21,
      ...spread,
      label: reliabilityLabel(icc21),
      icc31,
      sd,
      sem,
      mdc95: minimalDetectableChange(sem, 0.95),
    };
  } catch (e) {
    return { n, icc21: null, icc31: null, sd: null, sem: null, mdc95: null, note: (e as Error).message };
  }
}

/** Reliability of every measure, organisation-wide (an aggregate: no worker is identifiable in it). */
export async function reliabilityByMeasure(k: Db = db()): Promise<MeasureReliability[]> {
  const measures = await k("measures").select("id", "code", "name", "unit").orderBy("id");
  const rows = await k("assessment_results as r")
    .join("assessment_sessions as s", "s.id", "r.session_id")
    .select("r.measure_id", "r.value", "s.worker_id", "s.assessed_on")
    .orderBy([{ column: "s.assessed_on" }, { column: "s.id" }]);
  const series = new Map<string, { value: number; day: number }[]>();
  for (const r of rows) {
    const key = `${r.measure_id}:${r.worker_id}`;
    const list = series.get(key) ?? [];
    if (list.length < 2)
      list.push({ value: r.value, day: Date.parse(`${r.assessed_on as string}T00:00:00Z`) / 86_400_000 });
    series.set(key, list);
  }
  const pairsByMeasure = new Map<number, [number, number][]>();
  for (const [key, v] of series) {
    if (v.length < 2 || v[1].day - v[0].day > MAX_RETEST_DAYS) continue;
    const m = Number(key.split(":")[0]);
    (pairsByMeasure.get(m) ?? pairsByMeasure.set(m, []).get(m)!).push([v[0].value, v[1].value]);
  }
  return measures.map((m) => ({
    measureId: m.id,
    code: m.code,
    name: m.name,
    unit: m.unit,
    ...retestSummary(pairsByMeasure.get(m.id) ?? []),
  }));
}

export interface ChangeRow {
  measureId: number;
  name: string;
  unit: string;
  higherIsBetter: boolean;
  previous: number;
  latest: number;
  change: number;
  mdc95: number | null;
  /** Reliable change index (Jacobson & Truax 1991) and its p-value after Holm's correction over the measures compared. */
  rci: number | null;
  adjustedP: number | null;
  verdict: "better" | "worse" | "within error" | "no MDC yet";
}

/** Family-wise error rate of the "real change" verdicts of one comparison (Holm over its measures). */
export const CHANGE_ALPHA = 0.05;

/**
 * For one worker: change of each measure from the previous to the latest session. A change is real when its
 * reliable change index (change / √2·SEM, SEM from ICC(2,1) and the first-baseline SD) stays significant
 * after Holm's correction over all measures compared here, at family-wise level CHANGE_ALPHA. Without the
 * correction this is the MDC95 rule (|change| > 1.96·√2·SEM) applied to each measure separately.
 */
export function changesSincePrevious(
  sessions: { results: { measureId: number; name: string; unit: string; higherIsBetter: boolean; value: number }[] }[],
  reliability: Map<number, MeasureReliability>,
): ChangeRow[] {
  const out: ChangeRow[] = [];
  const history = new Map<number, { name: string; unit: string; higherIsBetter: boolean; values: number[] }>();
  for (const s of sessions)
    for (const r of s.results) {
      const h = history.get(r.measureId) ?? {
        name: r.name,
        unit: r.unit,
        higherIsBetter: r.higherIsBetter,
        values: [],
      };
      h.values.push(r.value);
      history.set(r.measureId, h);
    }
  const tested: { row: number; p: number; rci: number }[] = [];
  for (const [measureId, h] of history) {
    if (h.values.length < 2) continue;
    const previous = h.values[h.values.length - 2];
    const latest = h.values[h.values.length - 1];
    const change = latest - previous;
    const rel = reliability.get(measureId);
    const usable = rel?.mdc95 != null && rel.sd != null && rel.icc21 != null && rel.sem != null && rel.sem > 0;
    if (usable) {
      const r = reliableChangeIndex(previous, latest, rel.sd as number, rel.icc21 as number);
      tested.push({ row: out.length, p: r.pValue, rci: r.rci });
    }
    out.push({
      measureId,
      name: h.name,
      unit: h.unit,
      higherIsBetter: h.higherIsBetter,
      previous,
      latest,
      change,
      mdc95: rel?.mdc95 ?? null,
      rci: null,
      adjustedP: null,
      verdict: usable ? "within error" : "no MDC yet",
    });
  }
  if (tested.length > 0) {
    const h = holm(
      tested.map((t) => t.p),
      CHANGE_ALPHA,
    );
    tested.forEach((t, i) => {
      const row = out[t.row];
      row.rci = t.rci;
      row.adjustedP = h.adjusted[i];
      if (h.rejected[i]) row.verdict = row.change > 0 === row.higherIsBetter ? "better" : "worse";
    });
  }
  return out;
}
