/**
 * Reference optimum for allocation problems: the time-indexed mixed-integer model solved by HiGHS
 * (Huangfu & Hall 2018, Mathematical Programming Computation 10:119–142; npm `highs`). Built directly
 * from the problem text, sharing no code with the solver under test.
 *
 *   max Σ p_w z_wd
 *   Σ_d z_wd ≤ 1                                   one option per worker
 *   Σ_{t,k} x_wdtk ≥ h_wd z_wd                     ready means all planning hours delivered
 *   Σ_t x_wdtk ≤ maxHours_w z_wd                   weekly limit, only in available weeks
 *   Σ_{w,t} x_wdtk ≤ deviceHours_dk                device-hours per week
 *   Σ_{w,d} x_wdtk ≤ trainerHours_tk · trainees_t  group sessions
 *   Σ_{w∈g,d} z_wd ≥ ⌊share·|g|⌋                   fairness minimum
 *   x_wdtk exists only when trainer t holds device type d.
 */
import type { AllocationProblem } from "../../app/compute/allocation";

export interface HighsReference {
  status: string;
  /** Σ priority of the best plan found (optimal when status is "Optimal") */
  objective: number;
  optimal: boolean;
  feasible: boolean;
  /** chosen device per worker id */
  chosen: Map<string, string>;
  timeMs: number;
}

interface HighsResult {
  Status: string;
  Columns: Record<string, { Primal: number }>;
  Rows: { Name: string; Dual: number }[];
}
type HighsSolver = { solve: (lp: string, options?: Record<string, unknown>) => HighsResult };
let loader: Promise<HighsSolver> | null = null;

export function loadHighs(): Promise<HighsSolver> {
  if (!loader)
    loader = import("highs").then((m) => {
      const load = ((m as { default?: unknown }).default ?? m) as () => Promise<HighsSolver>;
      return load();
    });
  return loader;
}

export function buildLp(problem: AllocationProblem): { lp: string; zNames: Map<string, [string, string]> } {
  const H = problem.weeks;
  const devices = new Map(problem.deviceTypes.map((d) => [d.id, d] as const));
  const obj: string[] = [];
  const rows: string[] = [];
  const binaries: string[] = [];
  const zNames = new Map<string, [string, string]>();
  const deviceTerms = new Map<string, string[]>();
  const trainerTerms = new Map<string, string[]>();
  const groupTerms = new Map<string, string[]>();
  const groupSize = new Map<string, number>();
  problem.workers.forEach((w, wi) => {
    groupSize.set(w.group, (groupSize.get(w.group) ?? 0) + 1);
    const avail = new Set(w.availableWeeks ?? Array.from({ length: H }, (_, k) => k));
    const zs: string[] = [];
    w.options.forEach((o, oi) => {
      if (!devices.has(o.deviceTypeId)) return;
      const di = problem.deviceTypes.findIndex((d) => d.id === o.deviceTypeId);
      const z = `z_${wi}_${oi}`;
      zNames.set(z, [w.id, o.deviceTypeId]);
      zs.push(z);
      binaries.push(z);
      obj.push(`${w.priority} ${z}`);
      const all: string[] = [];
      for (let k = 0; k < H; k++) {
        if (!avail.has(k)) continue;
        const week: string[] = [];
        problem.trainers.forEach((t, ti) => {
          if (!t.deviceTypeIds.includes(o.deviceTypeId)) return;
          const x = `x_${wi}_${oi}_${ti}_${k}`;
          week.push(x);
          all.push(x);
          const dk = `${di}_${k}`;
          if (!deviceTerms.has(dk)) deviceTerms.set(dk, []);
          deviceTerms.get(dk)!.push(x);
          const tk = `${ti}_${k}`;
          if (!trainerTerms.has(tk)) trainerTerms.set(tk, []);
          trainerTerms.get(tk)!.push(x);
        });
        if (week.length) rows.push(`wk_${wi}_${oi}_${k}: ${week.join(" + ")} - ${w.maxHoursPerWeek} ${z} <= 0`);
      }
      rows.push(
        all.length
          ? `need_${wi}_${oi}: ${all.join(" + ")} - ${o.hoursNeeded} ${z} >= 0`
          : `need_${wi}_${oi}: ${z} <= 0`,
      );
    });
    if (zs.length > 1) rows.push(`one_${wi}: ${zs.join(" + ")} <= 1`);
    if (!groupTerms.has(w.group)) groupTerms.set(w.group, []);
    groupTerms.get(w.group)!.push(...zs);
  });
  for (const [dk, terms] of deviceTerms) {
    const [di, k] = dk.split("_").map(Number);
    rows.push(`dev_${dk}: ${terms.join(" + ")} <= ${problem.deviceTypes[di].hoursPerWeek[k] ?? 0}`);
  }
  for (const [tk, terms] of trainerTerms) {
    const [ti, k] = tk.split("_").map(Number);
    const t = problem.trainers[ti];
    rows.push(`tr_${tk}: ${terms.join(" + ")} <= ${(t.hoursPerWeek[k] ?? 0) * t.traineesPerSession}`);
  }
  const share = problem.minimumSharePerGroup ?? 0;
  let gi = 0;
  for (const [g, terms] of groupTerms) {
    const need = Math.floor(share * (groupSize.get(g) ?? 0) + 1e-9);
    if (need > 0) rows.push(`grp_${gi++}: ${terms.length ? terms.join(" + ") : "0 zz_dummy"} >= ${need}`);
  }
  // long rows are wrapped: the LP format allows a term per line
  const wrap = (s: string) => s.replace(/ \+ /g, "\n + ");
  const lp = [
    "Maximize",
    ` obj: ${obj.length ? obj.join(" + ") : "0 zz_dummy"}`,
    "Subject To",
    ...rows.map((r) => ` ${wrap(r)}`),
    "Binaries",
    ...(binaries.length ? binaries : ["zz_dummy"]).map((b) => ` ${b}`),
    "End",
  ].join("\n");
  return { lp, zNames };
}

export async function solveWithHighs(problem: AllocationProblem, timeLimitSeconds = 120): Promise<HighsReference> {
  const highs = await loadHighs();
  const { lp, zNames } = buildLp(problem);
  const t0 = performance.now();
  const res = highs.solve(lp, { time_limit: timeLimitSeconds, mip_rel_gap: 0, output_flag: false });
  const timeMs = performance.now() - t0;
  const status: string = res.Status;
  const optimal = status === "Optimal";
  const feasible = optimal || (status === "Time limit reached" && res.Columns && Object.keys(res.Columns).length > 0);
  const chosen = new Map<string, string>();
  let objective = 0;
  if (feasible) {
    for (const [name, [wid, did]] of zNames) {
      const col = res.Columns[name];
      if (col && col.Primal > 0.5) {
        chosen.set(wid, did);
        objective += problem.workers.find((w) => w.id === wid)!.priority;
      }
    }
  }
  return { status, objective, optimal, feasible, chosen, timeMs };
}
