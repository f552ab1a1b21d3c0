/**
 * Independent plan checker for the allocation rules of docs/methods.md. It re-derives every rule from the problem text and the plan
 * alone (it imports only the types), so a solver bug cannot hide behind shared code.
 * Returns a list of violations; an empty list means the plan is valid.
 */
import type { AllocationPlan, AllocationProblem } from "../../app/compute/allocation";

const TOL = 1e-6;

export function checkPlan(problem: AllocationProblem, plan: AllocationPlan): string[] {
  const errors: string[] = [];
  const H = problem.weeks;
  const workers = new Map(problem.workers.map((w) => [w.id, w] as const));
  const devices = new Map(problem.deviceTypes.map((d) => [d.id, d] as const));
  const trainers = new Map(problem.trainers.map((t) => [t.id, t] as const));
  const deviceUse = new Map<string, number[]>();
  const trainerUse = new Map<string, number[]>();
  for (const d of problem.deviceTypes) deviceUse.set(d.id, new Array(H).fill(0));
  for (const t of problem.trainers) trainerUse.set(t.id, new Array(H).fill(0));

  const seen = new Set<string>();
  let priority = 0;
  const readyPerGroup = new Map<string, number>();
  for (const a of plan.assignments) {
    const w = workers.get(a.workerId);
    if (!w) {
      errors.push(`unknown worker ${a.workerId}`);
      continue;
    }
    if (seen.has(a.workerId)) errors.push(`worker ${a.workerId} assigned twice`);
    seen.add(a.workerId);
    priority += w.priority;
    readyPerGroup.set(w.group, (readyPerGroup.get(w.group) ?? 0) + 1);
    const option = w.options.find((o) => o.deviceTypeId === a.deviceTypeId);
    if (!option) {
      errors.push(`${a.workerId}: device type ${a.deviceTypeId} is not one of the worker's options`);
      continue;
    }
    if (!devices.has(a.deviceTypeId)) errors.push(`${a.workerId}: device type ${a.deviceTypeId} is not in the fleet`);
    const available = new Set(w.availableWeeks ?? Array.from({ length: H }, (_, k) => k));
    const perWeek = new Array(H).fill(0);
    let total = 0;
    let last = -1;
    for (const s of a.sessions) {
      if (!Number.isInteger(s.week) || s.week < 0 || s.week >= H) {
        errors.push(`${a.workerId}: session in week ${s.week} outside the horizon`);
        continue;
      }
      if (!(s.hours >= 0) || !Number.isFinite(s.hours))
        errors.push(`${a.workerId}: session with invalid hours ${s.hours}`);
      if (!available.has(s.week)) errors.push(`${a.workerId}: trains in week ${s.week} while not available`);
      const t = trainers.get(s.trainerId);
      if (!t) errors.push(`${a.workerId}: unknown trainer ${s.trainerId}`);
      else {
        if (!t.deviceTypeIds.includes(a.deviceTypeId))
          errors.push(`${a.workerId}: trainer ${s.trainerId} does not hold ${a.deviceTypeId}`);
        trainerUse.get(t.id)![s.week] += s.hours / t.traineesPerSession;
      }
      const du = deviceUse.get(a.deviceTypeId);
      if (du) du[s.week] += s.hours;
      perWeek[s.week] += s.hours;
      total += s.hours;
      if (s.hours > 0) last = Math.max(last, s.week);
    }
    perWeek.forEach((h, k) => {
      if (h > w.maxHoursPerWeek + TOL)
        errors.push(`${a.workerId}: ${h} h in week ${k} exceeds the weekly limit ${w.maxHoursPerWeek}`);
    });
    if (total < option.hoursNeeded - TOL) errors.push(`${a.workerId}: ${total} h planned, needs ${option.hoursNeeded}`);
    if (option.hoursNeeded > 0 && a.completionWeek !== last)
      errors.push(`${a.workerId}: completionWeek ${a.completionWeek} but last training week is ${last}`);
  }
  for (const d of problem.deviceTypes)
    deviceUse.get(d.id)!.forEach((u, k) => {
      if (u > (d.hoursPerWeek[k] ?? 0) + TOL)
        errors.push(`device ${d.id} week ${k}: ${u} h used > ${d.hoursPerWeek[k]}`);
    });
  for (const t of problem.trainers)
    trainerUse.get(t.id)!.forEach((u, k) => {
      if (u > (t.hoursPerWeek[k] ?? 0) + TOL)
        errors.push(`trainer ${t.id} week ${k}: ${u} h used > ${t.hoursPerWeek[k]}`);
    });

  // a kept worker (fixed-schedule option chosen) gets exactly that schedule and adds its bonus
  for (const id of plan.kept ?? []) {
    const w = workers.get(id);
    const a = plan.assignments.find((x) => x.workerId === id);
    const fixed = w?.options.find((o) => o.weeklyHours);
    if (!w || !a || !fixed) {
      errors.push(`kept worker ${id} without an assignment or a fixed-schedule option`);
      continue;
    }
    priority += fixed.bonus ?? 0;
    const perWeek = new Array(H).fill(0);
    for (const x of a.sessions) perWeek[x.week] += x.hours;
    perWeek.forEach((h, k) => {
      if (Math.abs(h - (fixed.weeklyHours![k] ?? 0)) > 1e-6)
        errors.push(`kept worker ${id}: ${h} h in week ${k}, the kept schedule has ${fixed.weeklyHours![k] ?? 0}`);
    });
  }
  if (Math.abs(plan.objective - priority) > TOL)
    errors.push(`objective ${plan.objective} ≠ Σ priority of assignments (+ keep bonuses) ${priority}`);
  if (plan.bound < plan.objective - TOL) errors.push(`bound ${plan.bound} below objective ${plan.objective}`);
  if (plan.status === "optimal" && plan.objective < plan.bound - 1e-6)
    errors.push(`status optimal but objective ${plan.objective} < bound ${plan.bound}`);
  if (
    plan.gap !== undefined &&
    plan.bound > 0 &&
    Math.abs(plan.gap - (plan.bound - plan.objective) / plan.bound) > 1e-9
  )
    errors.push(`gap ${plan.gap} ≠ (bound − objective)/bound`);

  const listed = new Set([...plan.assignments.map((a) => a.workerId), ...plan.unassigned.map((u) => u.workerId)]);
  for (const w of problem.workers)
    if (!listed.has(w.id)) errors.push(`worker ${w.id} neither assigned nor listed as unassigned`);
  for (const u of plan.unassigned) {
    if (seen.has(u.workerId)) errors.push(`worker ${u.workerId} both assigned and unassigned`);
    if (!u.reason) errors.push(`worker ${u.workerId} unassigned without a reason`);
  }

  if (plan.status !== "infeasible" && problem.minimumSharePerGroup) {
    const size = new Map<string, number>();
    for (const w of problem.workers) size.set(w.group, (size.get(w.group) ?? 0) + 1);
    for (const [g, n] of size) {
      const need = Math.floor(problem.minimumSharePerGroup * n + 1e-9);
      if ((readyPerGroup.get(g) ?? 0) < need)
        errors.push(`group ${g}: ${readyPerGroup.get(g) ?? 0} ready < minimum ${need}`);
    }
  }

  if (plan.usage) {
    for (const u of plan.usage) {
      const mine = u.kind === "device" ? deviceUse.get(u.id)?.[u.week] : trainerUse.get(u.id)?.[u.week];
      if (mine === undefined) errors.push(`usage for unknown ${u.kind} ${u.id}`);
      else if (Math.abs(mine - u.used) > 1e-5)
        errors.push(`usage ${u.kind} ${u.id} week ${u.week}: reported ${u.used}, sessions add to ${mine}`);
    }
  }
  return errors;
}
