/**
 * Re-planning from the published plan (docs/methods.md, "Re-planning"): after one trainer's leave only the
 * sessions that had to move move. The expected set is counted by brute force over the published sessions
 * (every session of that trainer on a leave day; nothing else changed), independent of the code under test.
 */
import { describe, expect, it } from "vitest";
import { type AllocationProblem, solveAllocation } from "../../app/compute/allocation";
import { bookCommitments, type Commitment } from "../../app/compute/commitments";
import { placePlan } from "../../app/compute/placement";
import { type PublishedSession, placeReplan, planFromPublished, replanOutcome } from "../../app/compute/replan";
import type { PackedSession, PlanCalendar } from "../../app/compute/session-packing";
import { checkPlan } from "./allocation-checker";
import { checkPackedSessions } from "./session-rules-checker";

const START = "2027-01-04"; // a Monday
const WEEKS = 4;
const dates = (week: number) =>
  Array.from({ length: 5 }, (_, i) => {
    const d = new Date(`${START}T00:00:00Z`);
    d.setUTCDate(d.getUTCDate() + week * 7 + i);
    return d.toISOString().slice(0, 10);
  });

function instance(leave: { trainer: string; week: number } | null): {
  problem: AllocationProblem;
  calendar: PlanCalendar;
} {
  const trainers = [
    { id: "Ada", holds: ["exo"], trainees: 2 },
    { id: "Ben", holds: ["exo", "arm"], trainees: 1 },
    { id: "Cleo", holds: ["arm"], trainees: 2 },
  ];
  const windows = (id: string) =>
    Array.from({ length: WEEKS }, (_, w) => w)
      .filter((w) => !(leave && leave.trainer === id && leave.week === w))
      .flatMap((w) => dates(w).map((date) => ({ date, start: "08:00", end: "12:00" })));
  const calendar: PlanCalendar = {
    startDate: START,
    weeks: WEEKS,
    devices: ["exo", "arm"].map((name, i) => ({
      id: name,
      deviceTypeId: i + 1,
      siteId: 1,
      name,
      site: "North",
      wearTimeLimitMinutes: 90,
      units: [1, 2].map((u) => ({
        unitId: i * 10 + u,
        serial: `${name}-${u}`,
        bookableHoursPerWeek: 12,
        unavailableDates: [],
      })),
    })),
    trainers: trainers.map((t, i) => ({
      id: t.id,
      trainerId: i + 1,
      name: t.id,
      email: null,
      traineesPerSession: t.trainees,
      hoursPerWeek: 20,
      windows: windows(t.id),
    })),
    workers: Array.from({ length: 10 }, (_, i) => ({
      id: `w${i + 1}`,
      workerId: i + 1,
      name: `Worker ${i + 1}`,
      employeeNumber: `E${i + 1}`,
      email: null,
      department: "Kitting",
      site: "North",
      maxHoursPerWeek: 3,
      unavailableDates: [],
    })),
  };
  const problem: AllocationProblem = {
    weeks: WEEKS,
    deviceTypes: calendar.devices.map((d) => ({ id: d.id, hoursPerWeek: Array(WEEKS).fill(24) })),
    trainers: trainers.map((t) => ({
      id: t.id,
      deviceTypeIds: t.holds,
      hoursPerWeek: Array.from({ length: WEEKS }, (_, w) =>
        leave && leave.trainer === t.id && leave.week === w ? 0 : 20,
      ),
      traineesPerSession: t.trainees,
    })),
    workers: calendar.workers.map((w, i) => ({
      id: w.id,
      group: "Kitting",
      priority: 1 + (i % 4),
      options: [{ deviceTypeId: i % 2 === 0 ? "exo" : "arm", hoursNeeded: 6 + (i % 3) * 2 }],
      maxHoursPerWeek: 3,
    })),
  };
  return { problem, calendar };
}

const asPublished = (s: PackedSession): PublishedSession => ({
  workerId: s.workerId,
  deviceId: s.deviceId,
  trainerId: s.trainerId,
  unitId: s.unitId,
  serial: s.serial,
  date: s.date,
  start: s.start,
  end: s.end,
});
const key = (s: PackedSession | PublishedSession) =>
  `${s.workerId}|${s.date}|${s.start}|${s.end}|${s.trainerId}|${s.unitId}`;

/** No person or unit in two places at once (an independent check of the combined schedule). */
function doubleBookings(sessions: PackedSession[]): string[] {
  const out: string[] = [];
  const mins = (t: string) => Number(t.slice(0, 2)) * 60 + Number(t.slice(3, 5));
  for (let i = 0; i < sessions.length; i++)
    for (let j = i + 1; j < sessions.length; j++) {
      const a = sessions[i];
      const b = sessions[j];
      if (a.date !== b.date || !(mins(a.start) < mins(b.end) && mins(b.start) < mins(a.end))) continue;
      if (a.workerId === b.workerId) out.push(`worker ${a.workerId} ${a.date} ${a.start}`);
      if (a.unitId !== null && a.unitId === b.unitId) out.push(`unit ${a.unitId} ${a.date} ${a.start}`);
      // a trainer may share a slot (same start and end) with several trainees, never overlap otherwise
      if (a.trainerId === b.trainerId && (a.start !== b.start || a.end !== b.end || a.deviceId !== b.deviceId))
        out.push(`trainer ${a.trainerId} ${a.date} ${a.start}`);
    }
  return out;
}

describe("re-planning from the published plan after one trainer's leave", () => {
  it("moves exactly the people with a session in the leave, keeps everyone else's sessions as they were", async () => {
    const before = instance(null);
    const first = await solveAllocation(before.problem);
    expect(checkPlan(before.problem, first)).toEqual([]);
    const published = placePlan(before.calendar, [], first).sessions;
    expect(published.length).toBeGreaterThan(10);

    // The busiest trainer goes on leave for their busiest week. Brute force: every published session of that
    // trainer on that week's dates.
    const count = new Map<string, number>();
    for (const s of published) count.set(`${s.trainerId}|${s.week}`, (count.get(`${s.trainerId}|${s.week}`) ?? 0) + 1);
    const [busiest] = [...count.entries()].sort((a, b) => b[1] - a[1] || a[0].localeCompare(b[0]));
    const [trainer, weekText] = busiest[0].split("|");
    const week = Number(weekText);
    const leaveDays = new Set(dates(week));
    const mustMove = new Set(
      published.filter((s) => s.trainerId === trainer && leaveDays.has(s.date)).map((s) => s.workerId),
    );
    const onLeave = new Set(mustMove);
    // and, by the same count, anyone whose published sessions fell short of their planned hours (the packer
    // could not place them all within the session rules): keeping those sessions would not finish them
    const publishedMinutes = new Map<string, number>();
    for (const s of published) publishedMinutes.set(s.workerId, (publishedMinutes.get(s.workerId) ?? 0) + s.minutes);
    for (const a of first.assignments) {
      const planned = a.sessions.reduce((m, x) => m + x.hours * 60, 0);
      if ((publishedMinutes.get(a.workerId) ?? 0) + 1e-6 < planned) mustMove.add(a.workerId);
    }
    expect(mustMove.size).toBeGreaterThan(0);
    const withSessions = new Set(published.map((s) => s.workerId));

    const after = instance({ trainer, week });
    const priorities = new Map(before.problem.workers.map((w) => [w.id, w.priority]));
    const { problem, decision } = planFromPublished(
      after.problem,
      after.calendar,
      published.map(asPublished),
      priorities,
      100,
      new Map(),
    );
    expect(new Set(decision.mustMove.map((m) => m.workerId))).toEqual(mustMove);
    for (const m of decision.mustMove)
      expect(m.reason).toMatch(
        onLeave.has(m.workerId) ? new RegExp(`trainer ${trainer} is on leave`) : /the published sessions give/,
      );

    const plan = await solveAllocation(problem);
    expect(checkPlan(problem, plan)).toEqual([]);
    const outcome = replanOutcome(decision, plan);
    // everyone who could keep their sessions does (one person moved is worth 100, more than any plan value here)
    expect(new Set(outcome.kept.map((k) => k.workerId))).toEqual(
      new Set([...withSessions].filter((id) => !mustMove.has(id))),
    );
    expect(new Set(outcome.moved.map((m) => m.workerId))).toEqual(mustMove);
    expect(outcome.kept.length).toBeGreaterThan(0);

    const placed = placeReplan(after.calendar, [], plan, decision);
    const now = new Set(placed.sessions.map(key));
    for (const s of published) if (!mustMove.has(s.workerId)) expect(now.has(key(s)), `kept ${key(s)}`).toBe(true);
    // nothing of the kept people was added or changed, and nobody is double booked
    const keptIds = new Set(outcome.kept.map((k) => k.workerId));
    expect(placed.sessions.filter((s) => keptIds.has(s.workerId)).length).toBe(
      published.filter((s) => keptIds.has(s.workerId)).length,
    );
    expect(doubleBookings(placed.sessions)).toEqual([]);
    // the movers' new sessions avoid the leave
    for (const s of placed.sessions) if (s.trainerId === trainer) expect(leaveDays.has(s.date)).toBe(false);
  });

  it("with no weight on keeping, the plan is worth at least as much as with a weight (the trade-off is real)", async () => {
    const before = instance(null);
    const first = await solveAllocation(before.problem);
    const published = placePlan(before.calendar, [], first).sessions.map(asPublished);
    const after = instance({ trainer: "Ada", week: 1 });
    const priorities = new Map(before.problem.workers.map((w) => [w.id, w.priority]));
    const value = async (weight: number) => {
      const { problem } = planFromPublished(after.problem, after.calendar, published, priorities, weight, new Map());
      const plan = await solveAllocation(problem);
      expect(checkPlan(problem, plan)).toEqual([]);
      const ready = new Set(plan.assignments.map((a) => a.workerId));
      return after.problem.workers.filter((w) => ready.has(w.id)).reduce((s, w) => s + w.priority, 0);
    };
    expect(await value(0)).toBeGreaterThanOrEqual(await value(100));
  });

  it("a changed priority forces a move, with the reason in words", () => {
    const before = instance(null);
    const after = instance(null);
    after.problem.workers[0].priority = 5;
    const s: PublishedSession = {
      workerId: "w1",
      deviceId: "exo",
      trainerId: "Ada",
      unitId: 1,
      serial: "exo-1",
      date: dates(0)[0],
      start: "08:00",
      end: "09:00",
    };
    const priorities = new Map(before.problem.workers.map((w) => [w.id, w.priority]));
    const { decision } = planFromPublished(after.problem, after.calendar, [s], priorities, 10, new Map());
    expect(decision.mustMove).toEqual([{ workerId: "w1", name: "Worker 1", reason: "priority changed from 1 to 5" }]);
  });
});

describe("re-planning keeps the published sessions of workers already in training", () => {
  // w9 and w10 are in training: fixed commitments of every run, not options of the solver
  const IN_TRAINING = ["w9", "w10"];
  const commitmentsOf = (problem: AllocationProblem): Commitment[] =>
    problem.workers
      .filter((w) => IN_TRAINING.includes(w.id))
      .map((w) => ({
        workerId: w.id,
        deviceTypeId: w.options[0].deviceTypeId,
        hoursNeeded: w.options[0].hoursNeeded,
        maxHoursPerWeek: w.maxHoursPerWeek,
      }));
  const booking = (leave: { trainer: string; week: number } | null) => {
    const inst = instance(leave);
    const pool = { ...inst.problem, workers: inst.problem.workers.filter((w) => !IN_TRAINING.includes(w.id)) };
    return { inst, booked: bookCommitments(pool, commitmentsOf(inst.problem)) };
  };
  async function publishFirst() {
    const { inst, booked } = booking(null);
    const plan = await solveAllocation(booked.problem);
    return { committed: booked.committed, placed: placePlan(inst.calendar, booked.committed, plan) };
  }
  async function run(leave: { trainer: string; week: number } | null, published: PublishedSession[]) {
    const { inst, booked } = booking(leave);
    const priorities = new Map(inst.problem.workers.map((w) => [w.id, w.priority]));
    const { problem, decision } = planFromPublished(
      booked.problem,
      inst.calendar,
      published,
      priorities,
      100,
      new Map(),
      booked.committed,
    );
    const plan = await solveAllocation(problem);
    expect(checkPlan(problem, plan)).toEqual([]);
    const placed = placeReplan(inst.calendar, booked.committed, plan, decision);
    return { ...inst, committed: booked.committed, placed, decision, outcome: replanOutcome(decision, plan) };
  }
  const theirs = (sessions: (PackedSession | PublishedSession)[], id: string) =>
    sessions
      .filter((s) => s.workerId === id)
      .map(key)
      .sort();

  it("keeps them identical when nothing changed, and moves one with the first reason when their trainer is on leave", async () => {
    const first = await publishFirst();
    const published = first.placed.sessions.map(asPublished);
    // the instance is only a test when both have published sessions covering their hours
    for (const id of IN_TRAINING) {
      const c = first.committed.find((x) => x.workerId === id)!;
      const minutes = first.placed.sessions.filter((s) => s.workerId === id).reduce((m, s) => m + s.minutes, 0);
      expect(minutes / 60).toBeGreaterThanOrEqual(c.hoursBooked);
      expect(c.hoursBooked).toBeGreaterThan(0);
    }

    const same = await run(null, published);
    for (const id of IN_TRAINING) expect(theirs(same.placed.sessions, id)).toEqual(theirs(published, id));
    expect(same.outcome.kept.map((k) => k.workerId)).toEqual(expect.arrayContaining(IN_TRAINING));
    expect(same.outcome.moved.filter((m) => IN_TRAINING.includes(m.workerId))).toEqual([]);
    expect(doubleBookings(same.placed.sessions)).toEqual([]);
    expect(checkPackedSessions(same.calendar, same.placed.sessions)).toEqual([]);
    expect(same.placed.continuing.total).toBe(2);

    // w9's trainer goes on leave in the week of w9's first session (brute force: which in-training workers
    // have a published session with that trainer in that week)
    const s9 = first.placed.sessions.find((s) => s.workerId === "w9")!;
    const leave = { trainer: s9.trainerId, week: s9.week };
    const leaveDays = new Set(dates(leave.week));
    const hit = IN_TRAINING.filter((id) =>
      published.some((s) => s.workerId === id && s.trainerId === leave.trainer && leaveDays.has(s.date)),
    );
    expect(hit).toContain("w9");
    const after = await run(leave, published);
    for (const id of IN_TRAINING) {
      const moved = after.outcome.moved.find((m) => m.workerId === id);
      if (hit.includes(id)) {
        expect(moved?.reason).toMatch(new RegExp(`^trainer ${leave.trainer} is on leave or not working at that time`));
        for (const s of after.placed.sessions.filter((x) => x.workerId === id))
          expect(s.trainerId === leave.trainer && leaveDays.has(s.date)).toBe(false);
      } else {
        expect(moved).toBeUndefined();
        expect(theirs(after.placed.sessions, id)).toEqual(theirs(published, id));
      }
    }
    expect(doubleBookings(after.placed.sessions)).toEqual([]);
    expect(checkPackedSessions(after.calendar, after.placed.sessions)).toEqual([]);
  });
  it("a shortfall within placement's rounding to whole minutes is no reason to move; a real one is", async () => {
    const before = instance(null);
    const first = await solveAllocation(before.problem);
    const published = placePlan(before.calendar, [], first).sessions.map(asPublished);
    const priorities = new Map(before.problem.workers.map((w) => [w.id, w.priority]));
    const someone = published[0].workerId;
    const mine = published.filter((s) => s.workerId === someone);
    const minutes = mine.reduce(
      (m, s) =>
        m +
        (Number(s.end.slice(0, 2)) * 60 +
          Number(s.end.slice(3)) -
          (Number(s.start.slice(0, 2)) * 60 + Number(s.start.slice(3)))),
      0,
    );
    // the need set just above what was published: by less than half a minute a session (rounding), then by 30 min
    const withNeed = (hours: number): AllocationProblem => ({
      ...before.problem,
      workers: before.problem.workers.map((w) =>
        w.id === someone ? { ...w, options: w.options.map((o) => ({ ...o, hoursNeeded: hours })) } : w,
      ),
    });
    const decide = (hours: number) =>
      planFromPublished(withNeed(hours), before.calendar, published, priorities, 100, new Map()).decision;
    const rounding = decide((minutes + 0.4 * mine.length) / 60);
    expect(rounding.mustMove.map((m) => m.workerId)).not.toContain(someone);
    const real = decide((minutes + 30) / 60);
    expect(real.mustMove.find((m) => m.workerId === someone)?.reason).toMatch(/the published sessions give/);
  });
});
