/**
 * Indexed form of an allocation problem: integer ids, per-week capacities as arrays, and the list of
 * candidate (worker, device type) pairs that could possibly be completed inside the horizon.
 */
import { round1 } from "../rounding";
import type { AllocationProblem } from "./types";

export const EPS = 1e-7;

export interface Candidate {
  index: number;
  worker: number;
  device: number;
  hours: number;
  /** most hours this worker can receive on this device in each week (0 outside available weeks) */
  weekCap: number[];
  /** priority plus the option's bonus: what choosing this candidate adds to the objective */
  value: number;
  /** a fixed weekly schedule (the worker's published sessions kept) */
  fixed: boolean;
}

export interface WorkerInfo {
  id: string;
  group: number;
  priority: number;
  maxHours: number;
  candidates: number[];
}

export interface Instance {
  weeks: number;
  deviceIds: string[];
  trainerIds: string[];
  /** device-hours bookable, [device][week] */
  deviceCap: number[][];
  /** supervised trainee-hours a trainer can give, [trainer][week] = hours × traineesPerSession */
  trainerCap: number[][];
  traineesPerSession: number[];
  /** trainerHolds[t][d] */
  trainerHolds: boolean[][];
  workers: WorkerInfo[];
  candidates: Candidate[];
  groupIds: string[];
  groupMembers: number[][];
  groupMinimum: number[];
  /** workers that cannot be made ready on any option, with the reason */
  impossible: Map<number, string>;
  /** all priorities are whole numbers, so any bound can be rounded down */
  integralPriorities: boolean;
}

const positive = (x: number | undefined) => (typeof x === "number" && Number.isFinite(x) && x > 0 ? x : 0);

export function buildInstance(problem: AllocationProblem): Instance {
  const weeks = Math.max(0, Math.floor(problem.weeks));
  const deviceIds = problem.deviceTypes.map((d) => d.id);
  const deviceIndex = new Map(deviceIds.map((id, i) => [id, i] as const));
  const deviceCap = problem.deviceTypes.map((d) =>
    Array.from({ length: weeks }, (_, k) => positive(d.hoursPerWeek[k])),
  );
  const trainerIds = problem.trainers.map((t) => t.id);
  const traineesPerSession = problem.trainers.map((t) => Math.max(1, positive(t.traineesPerSession) || 1));
  const trainerCap = problem.trainers.map((t, i) =>
    Array.from({ length: weeks }, (_, k) => positive(t.hoursPerWeek[k]) * traineesPerSession[i]),
  );
  const trainerHolds = problem.trainers.map((t) => deviceIds.map((id) => t.deviceTypeIds.includes(id)));

  // Supervised hours any single trainee could get on device d in week k (device and trainers together).
  const weekRoom = deviceIds.map((_, d) =>
    Array.from({ length: weeks }, (_, k) => {
      let trainers = 0;
      for (let t = 0; t < trainerIds.length; t++) if (trainerHolds[t][d]) trainers += trainerCap[t][k];
      return Math.min(deviceCap[d][k], trainers);
    }),
  );

  const groupIds: string[] = [];
  const groupIndex = new Map<string, number>();
  const workers: WorkerInfo[] = [];
  const candidates: Candidate[] = [];
  const impossible = new Map<number, string>();
  let integralPriorities = true;

  problem.workers.forEach((w, wi) => {
    let g = groupIndex.get(w.group);
    if (g === undefined) {
      g = groupIds.length;
      groupIds.push(w.group);
      groupIndex.set(w.group, g);
    }
    const priority = Number.isFinite(w.priority) ? w.priority : 0;
    if (Math.abs(priority - Math.round(priority)) > 1e-9) integralPriorities = false;
    const maxHours = positive(w.maxHoursPerWeek);
    const available = new Array<boolean>(weeks).fill(w.availableWeeks === undefined);
    for (const k of w.availableWeeks ?? []) if (Number.isInteger(k) && k >= 0 && k < weeks) available[k] = true;
    const info: WorkerInfo = { id: w.id, group: g, priority, maxHours, candidates: [] };
    workers.push(info);

    // One candidate per distinct device type (the smallest hours figure if listed twice), plus any
    // fixed-schedule option (kept published sessions) as a candidate of its own.
    const best = new Map<number, number>();
    const fixedOptions: { d: number; weekly: number[]; bonus: number }[] = [];
    let unknownDevice = false;
    for (const o of w.options) {
      const d = deviceIndex.get(o.deviceTypeId);
      if (d === undefined) {
        unknownDevice = true;
        continue;
      }
      if (o.weeklyHours) {
        const weekly = Array.from({ length: weeks }, (_, k) => positive(o.weeklyHours![k]));
        fixedOptions.push({ d, weekly, bonus: Number.isFinite(o.bonus) ? Math.max(0, o.bonus!) : 0 });
        continue;
      }
      const h = Math.max(0, Number.isFinite(o.hoursNeeded) ? o.hoursNeeded : Infinity);
      if (!best.has(d) || h < best.get(d)!) best.set(d, h);
    }
    let reachableMax = 0;
    for (const [d, hours] of [...best.entries()].sort((a, b) => a[0] - b[0])) {
      const weekCap = Array.from({ length: weeks }, (_, k) => (available[k] ? Math.min(maxHours, weekRoom[d][k]) : 0));
      const total = weekCap.reduce((s, x) => s + x, 0);
      reachableMax = Math.max(reachableMax, total);
      if (hours === Infinity || total + EPS < hours || priority <= 0) continue;
      const c: Candidate = {
        index: candidates.length,
        worker: wi,
        device: d,
        hours,
        weekCap,
        value: priority,
        fixed: false,
      };
      candidates.push(c);
      info.candidates.push(c.index);
    }
    for (const f of fixedOptions) {
      // the schedule is kept as it is or not at all: each week exactly its hours (where the week still has room)
      const weekCap = f.weekly.map((h, k) => Math.min(h, weekRoom[f.d][k]));
      const hours = f.weekly.reduce((s, x) => s + x, 0);
      const value = priority + f.bonus;
      if (Math.abs(value - Math.round(value)) > 1e-9) integralPriorities = false;
      if (hours <= 0 || weekCap.reduce((s, x) => s + x, 0) + EPS < hours || value <= 0) continue;
      const c: Candidate = { index: candidates.length, worker: wi, device: f.d, hours, weekCap, value, fixed: true };
      candidates.push(c);
      info.candidates.push(c.index);
    }
    if (info.candidates.length === 0) {
      let reason: string;
      if (priority <= 0) reason = "priority is not positive, so training this worker adds no value to the plan";
      else if (best.size === 0)
        reason = unknownDevice
          ? "none of this worker's device options is in the fleet"
          : "no device option fits this worker";
      else
        reason = `needs more hours than can fit in the horizon (at most ${round1(reachableMax)} h reachable with the weekly limit, availability, devices and certified trainers)`;
      impossible.set(wi, reason);
    }
  });

  const groupMembers = groupIds.map(() => [] as number[]);
  workers.forEach((w, i) => {
    groupMembers[w.group].push(i);
  });
  const share = Math.min(1, Math.max(0, problem.minimumSharePerGroup ?? 0));
  const groupMinimum = groupMembers.map((m) => Math.floor(share * m.length + 1e-9));

  return {
    weeks,
    deviceIds,
    trainerIds,
    deviceCap,
    trainerCap,
    traineesPerSession,
    trainerHolds,
    workers,
    candidates,
    groupIds,
    groupMembers,
    groupMinimum,
    impossible,
    integralPriorities,
  };
}

/** Fewest hours any of the worker's options needs (Infinity without options). */
export function minHours(inst: Instance, w: number): number {
  let h = Infinity;
  for (const c of inst.workers[w].candidates) h = Math.min(h, inst.candidates[c].hours);
  return h;
}
