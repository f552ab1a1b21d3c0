/**
 * Seeded random allocation instances that look like the product's data: a few departments, device types
 * with units × bookable hours (and the odd maintenance week), trainers holding 1–3 device types with
 * group sessions of 1–3 trainees and some weeks off, workers with 1–2 fitting device types, 10–60 h
 * planning figures, 4–8 h per week, priorities 1–5 and some leave. Capacity is set scarce on purpose
 * (roughly half the demand fits) so that choosing who trains matters.
 * PRNG: mulberry32 (a common public-domain 32-bit generator), so instances are the same on every run.
 */
import type { AllocationProblem } from "../../app/compute/allocation";

export { mulberry32 } from "../../app/compute/seeded-random";

import { mulberry32 } from "../../app/compute/seeded-random";

export interface InstanceSpec {
  workers: number;
  deviceTypes: number;
  trainers: number;
  weeks: number;
  seed: number;
  /** fraction of the demand that the fleet can carry (default 0.5) */
  capacityShare?: number;
  minimumSharePerGroup?: number;
}

const DEPARTMENTS = ["Cable Harness", "Final Assembly", "Kitting", "Inspection", "Paint Prep"];

export function randomInstance(spec: InstanceSpec): AllocationProblem {
  const rnd = mulberry32(spec.seed * 2654435761 + spec.workers);
  const int = (lo: number, hi: number) => lo + Math.floor(rnd() * (hi - lo + 1));
  const pick = <T>(xs: T[]) => xs[Math.floor(rnd() * xs.length)];
  const H = spec.weeks;
  const D = spec.deviceTypes;
  const deviceIds = Array.from({ length: D }, (_, d) => `dev-${String.fromCharCode(65 + d)}`);
  const groups = DEPARTMENTS.slice(0, Math.min(DEPARTMENTS.length, 3 + (spec.workers > 30 ? 2 : 0)));

  const workers: AllocationProblem["workers"] = [];
  const demand = new Array<number>(D).fill(0);
  for (let i = 0; i < spec.workers; i++) {
    const nOpt = rnd() < 0.45 && D > 1 ? 2 : 1;
    const devs = new Set<number>();
    while (devs.size < nOpt) devs.add(int(0, D - 1));
    const maxHoursPerWeek = pick([4, 5, 6, 6, 8]);
    const options = [...devs]
      .sort((a, b) => a - b)
      .map((d) => {
        const hoursNeeded = Math.round(10 + rnd() * 50);
        return { deviceTypeId: deviceIds[d], hoursNeeded };
      });
    const w: AllocationProblem["workers"][number] = {
      id: `w${String(i).padStart(4, "0")}`,
      group: pick(groups),
      priority: int(1, 5),
      options,
      maxHoursPerWeek,
    };
    if (rnd() < 0.25) {
      // a block of 1–3 leave weeks
      const len = int(1, 3);
      const start = int(0, Math.max(0, H - len));
      w.availableWeeks = Array.from({ length: H }, (_, k) => k).filter((k) => k < start || k >= start + len);
    }
    const minH = Math.min(...options.map((o) => o.hoursNeeded));
    for (const o of options) demand[deviceIds.indexOf(o.deviceTypeId)] += minH / options.length;
    workers.push(w);
  }

  const share = spec.capacityShare ?? 0.5;
  const deviceTypes = deviceIds.map((id, d) => {
    const units = int(1, 3);
    const weekly = (demand[d] * share) / H;
    const bookable = Math.max(2, Math.round(weekly / units));
    const maintenanceWeek = rnd() < 0.5 ? int(0, H - 1) : -1;
    return {
      id,
      hoursPerWeek: Array.from(
        { length: H },
        (_, k) => units * bookable - (k === maintenanceWeek ? Math.min(bookable, 4) : 0),
      ),
    };
  });

  // trainers: every device type gets at least one trainer; the rest hold 1–3 random types
  const totalDemand = demand.reduce((s, x) => s + x, 0);
  const trainers: AllocationProblem["trainers"] = [];
  for (let t = 0; t < spec.trainers; t++) {
    const holds = new Set<number>();
    holds.add(t % D);
    const extra = int(0, 2);
    for (let e = 0; e < extra; e++) holds.add(int(0, D - 1));
    trainers.push({
      id: `tr-${t + 1}`,
      deviceTypeIds: [...holds].sort((a, b) => a - b).map((d) => deviceIds[d]),
      hoursPerWeek: [],
      traineesPerSession: int(1, 3),
    });
  }
  const groupSize = trainers.reduce((s, t) => s + t.traineesPerSession, 0) / Math.max(1, trainers.length);
  const trainerWeekly = (totalDemand * share * 1.15) / H / Math.max(1, spec.trainers) / groupSize;
  for (const t of trainers) {
    const base = Math.max(2, Math.round(trainerWeekly * (0.6 + 0.8 * rnd())));
    const holiday = rnd() < 0.4 ? int(0, H - 1) : -1;
    t.hoursPerWeek = Array.from({ length: H }, (_, k) => (k === holiday ? 0 : base));
  }

  return {
    weeks: H,
    deviceTypes,
    trainers,
    workers,
    ...(spec.minimumSharePerGroup !== undefined ? { minimumSharePerGroup: spec.minimumSharePerGroup } : {}),
  };
}
