/**
 * Training allocator (docs/methods.md). Every plan goes through the independent checker; optima are compared
 * with HiGHS on the time-indexed MIP (tests/reference/allocation-highs.ts).
 */
import { describe, expect, it } from "vitest";
import { type AllocationPlan, type AllocationProblem, solveAllocation } from "../../app/compute/allocation";
import { cutViolation, starterCuts, WeekCapacity } from "../../app/compute/allocation/cuts";
import { buildInstance } from "../../app/compute/allocation/instance";
import { lagrangianBound } from "../../app/compute/allocation/lagrangian";
import { FlowNetwork } from "../../app/compute/allocation/maxflow";
import { checkPlan } from "./allocation-checker";
import { buildLp, loadHighs, solveWithHighs } from "./allocation-highs";
import { randomInstance } from "./allocation-instances";

async function solveChecked(
  problem: AllocationProblem,
  options?: Parameters<typeof solveAllocation>[1],
): Promise<AllocationPlan> {
  const plan = await solveAllocation(problem, options);
  expect(checkPlan(problem, plan)).toEqual([]);
  return plan;
}

const weeksAll = (n: number, h: number) => Array.from({ length: n }, () => h);

describe("hand-made instances with an answer found by hand", () => {
  it("one device, two workers, room for one: the higher priority worker is trained", async () => {
    // worked by hand: 2 weeks × 10 device-hours = 20 h, each worker needs 20 h
    const problem: AllocationProblem = {
      weeks: 2,
      deviceTypes: [{ id: "arm", hoursPerWeek: [10, 10] }],
      trainers: [{ id: "T1", deviceTypeIds: ["arm"], hoursPerWeek: [20, 20], traineesPerSession: 1 }],
      workers: [
        {
          id: "low",
          group: "Kitting",
          priority: 2,
          options: [{ deviceTypeId: "arm", hoursNeeded: 20 }],
          maxHoursPerWeek: 10,
        },
        {
          id: "high",
          group: "Kitting",
          priority: 5,
          options: [{ deviceTypeId: "arm", hoursNeeded: 20 }],
          maxHoursPerWeek: 10,
        },
      ],
    };
    const plan = await solveChecked(problem);
    expect(plan.status).toBe("optimal");
    expect(plan.objective).toBe(5);
    expect(plan.bound).toBe(5);
    expect(plan.gap).toBe(0);
    expect(plan.assignments.map((a) => a.workerId)).toEqual(["high"]);
    expect(plan.assignments[0].completionWeek).toBe(1);
    expect(plan.unassigned.map((u) => u.workerId)).toEqual(["low"]);
    // the device is the bottleneck: both weeks full
    expect(plan.usage!.filter((u) => u.kind === "device").map((u) => u.used)).toEqual([10, 10]);
  });

  it("a minimum share per group brings a lower-priority worker in", async () => {
    // worked by hand: room for two 10-h trainees; without fairness a1 + a2 (10), with share 0.5 each
    // department needs ⌊0.5 × 2⌋ = 1 ready, so a1 (or a2) + one of Paint Prep: 5 + 1 = 6.
    const base: AllocationProblem = {
      weeks: 1,
      deviceTypes: [{ id: "exo", hoursPerWeek: [20] }],
      trainers: [{ id: "T1", deviceTypeIds: ["exo"], hoursPerWeek: [20], traineesPerSession: 1 }],
      workers: [
        {
          id: "a1",
          group: "Final Assembly",
          priority: 5,
          options: [{ deviceTypeId: "exo", hoursNeeded: 10 }],
          maxHoursPerWeek: 10,
        },
        {
          id: "a2",
          group: "Final Assembly",
          priority: 5,
          options: [{ deviceTypeId: "exo", hoursNeeded: 10 }],
          maxHoursPerWeek: 10,
        },
        {
          id: "b1",
          group: "Paint Prep",
          priority: 1,
          options: [{ deviceTypeId: "exo", hoursNeeded: 10 }],
          maxHoursPerWeek: 10,
        },
        {
          id: "b2",
          group: "Paint Prep",
          priority: 1,
          options: [{ deviceTypeId: "exo", hoursNeeded: 10 }],
          maxHoursPerWeek: 10,
        },
      ],
    };
    const free = await solveChecked(base);
    expect(free.objective).toBe(10);
    expect(free.status).toBe("optimal");
    const fair = await solveChecked({ ...base, minimumSharePerGroup: 0.5 });
    expect(fair.status).toBe("optimal");
    expect(fair.objective).toBe(6);
    const groups = fair.assignments.map((a) => base.workers.find((w) => w.id === a.workerId)!.group).sort();
    expect(groups).toEqual(["Final Assembly", "Paint Prep"]);
  });

  it("workers train only in their available weeks; one who cannot fit is told why", async () => {
    // worked by hand: "leave" is available in weeks 2–3 only, 6 h/week → 12 h, needs 12: weeks 2 and 3.
    // "short" needs 20 h but has 2 weeks × 5 h = 10 h: impossible whatever the capacity.
    const problem: AllocationProblem = {
      weeks: 4,
      deviceTypes: [{ id: "finger", hoursPerWeek: weeksAll(4, 40) }],
      trainers: [{ id: "T1", deviceTypeIds: ["finger"], hoursPerWeek: weeksAll(4, 40), traineesPerSession: 1 }],
      workers: [
        {
          id: "leave",
          group: "Inspection",
          priority: 3,
          options: [{ deviceTypeId: "finger", hoursNeeded: 12 }],
          maxHoursPerWeek: 6,
          availableWeeks: [2, 3],
        },
        {
          id: "short",
          group: "Inspection",
          priority: 4,
          options: [{ deviceTypeId: "finger", hoursNeeded: 20 }],
          maxHoursPerWeek: 5,
          availableWeeks: [0, 3],
        },
      ],
    };
    const plan = await solveChecked(problem);
    expect(plan.status).toBe("optimal");
    expect(plan.objective).toBe(3);
    const a = plan.assignments[0];
    expect(a.workerId).toBe("leave");
    expect([...new Set(a.sessions.map((s) => s.week))].sort()).toEqual([2, 3]);
    expect(a.completionWeek).toBe(3);
    const why = plan.unassigned.find((u) => u.workerId === "short")!;
    expect(why.reason).toMatch(/more hours than can fit/);
  });

  it("a trainer without the device certification is never used, even when idle", async () => {
    // worked by hand: only T-arm holds "arm" and gives 10 h/week for 2 weeks = 20 supervised hours,
    // enough for one 20-h trainee although T-exo has 40 idle hours per week.
    const problem: AllocationProblem = {
      weeks: 2,
      deviceTypes: [
        { id: "arm", hoursPerWeek: [40, 40] },
        { id: "exo", hoursPerWeek: [40, 40] },
      ],
      trainers: [
        { id: "T-arm", deviceTypeIds: ["arm"], hoursPerWeek: [10, 10], traineesPerSession: 1 },
        { id: "T-exo", deviceTypeIds: ["exo"], hoursPerWeek: [40, 40], traineesPerSession: 3 },
      ],
      workers: ["x", "y"].map((id, i) => ({
        id,
        group: "Kitting",
        priority: 2 + i,
        options: [{ deviceTypeId: "arm", hoursNeeded: 20 }],
        maxHoursPerWeek: 10,
      })),
    };
    const plan = await solveChecked(problem);
    expect(plan.objective).toBe(3);
    expect(plan.status).toBe("optimal");
    for (const a of plan.assignments) for (const s of a.sessions) expect(s.trainerId).toBe("T-arm");
    expect(plan.usage!.find((u) => u.kind === "trainer" && u.id === "T-exo" && u.week === 0)!.used).toBe(0);
  });

  it("group sessions: a trainer with two trainees per session supervises twice the trainee-hours", async () => {
    // docs/methods.md: k trainees for h hours use h·k / traineesPerSession trainer-hours.
    const make = (traineesPerSession: number): AllocationProblem => ({
      weeks: 1,
      deviceTypes: [{ id: "exo", hoursPerWeek: [20] }],
      trainers: [{ id: "T1", deviceTypeIds: ["exo"], hoursPerWeek: [8], traineesPerSession }],
      workers: ["p", "q"].map((id) => ({
        id,
        group: "Kitting",
        priority: 1,
        options: [{ deviceTypeId: "exo", hoursNeeded: 8 }],
        maxHoursPerWeek: 8,
      })),
    });
    const solo = await solveChecked(make(1));
    expect(solo.objective).toBe(1);
    const pair = await solveChecked(make(2));
    expect(pair.objective).toBe(2);
    expect(pair.usage!.find((u) => u.kind === "trainer")!.used).toBeCloseTo(8, 9);
  });

  it("an impossible fairness minimum gives status infeasible with a message", async () => {
    // worked by hand: Kitting has 2 workers, share 1 needs both, the device holds 10 h: one only.
    const problem: AllocationProblem = {
      weeks: 1,
      deviceTypes: [{ id: "arm", hoursPerWeek: [10] }],
      trainers: [{ id: "T1", deviceTypeIds: ["arm"], hoursPerWeek: [10], traineesPerSession: 1 }],
      workers: ["u", "v"].map((id) => ({
        id,
        group: "Kitting",
        priority: 1,
        options: [{ deviceTypeId: "arm", hoursNeeded: 10 }],
        maxHoursPerWeek: 10,
      })),
      minimumSharePerGroup: 1,
    };
    const plan = await solveChecked(problem);
    expect(plan.status).toBe("infeasible");
    expect(plan.assignments).toEqual([]);
    expect(plan.message).toMatch(/minimum share per group cannot be met/);
    expect(plan.message).toMatch(/Kitting: 2 of 2/);
    expect(plan.unassigned).toHaveLength(2);
    const ref = await solveWithHighs(problem, 30);
    expect(ref.status).toBe("Infeasible");
  });

  it("ties go to earlier completion: an unconstrained worker finishes as early as the weekly limit allows", async () => {
    // worked by hand: 14 h at 6 h/week → weeks 0, 1, 2 (6 + 6 + 2), completion week 2 of 6.
    const problem: AllocationProblem = {
      weeks: 6,
      deviceTypes: [{ id: "exo", hoursPerWeek: weeksAll(6, 30) }],
      trainers: [{ id: "T1", deviceTypeIds: ["exo"], hoursPerWeek: weeksAll(6, 30), traineesPerSession: 1 }],
      workers: [
        {
          id: "early",
          group: "Kitting",
          priority: 2,
          options: [{ deviceTypeId: "exo", hoursNeeded: 14 }],
          maxHoursPerWeek: 6,
        },
        {
          id: "other",
          group: "Kitting",
          priority: 2,
          options: [{ deviceTypeId: "exo", hoursNeeded: 30 }],
          maxHoursPerWeek: 6,
        },
      ],
    };
    const plan = await solveChecked(problem);
    const byId = new Map(plan.assignments.map((a) => [a.workerId, a] as const));
    expect(byId.get("early")!.completionWeek).toBe(2);
    expect(byId.get("other")!.completionWeek).toBe(4);
  });

  it("the binding device's shadow price matches the LP dual of the fractional knapsack", async () => {
    // One week, one device with 30 h, trainers plentiful. Priorities/hours 5/10, 4/10, 3/20: the LP fills
    // by ratio (Dantzig 1957, fractional knapsack) and the critical item's ratio 3/20 = 0.15 is the
    // device dual. Cross-checked with HiGHS's dual of the LP relaxation.
    const problem: AllocationProblem = {
      weeks: 1,
      deviceTypes: [{ id: "arm", hoursPerWeek: [30] }],
      trainers: [{ id: "T1", deviceTypeIds: ["arm"], hoursPerWeek: [100], traineesPerSession: 1 }],
      workers: [
        { id: "a", group: "g", priority: 5, options: [{ deviceTypeId: "arm", hoursNeeded: 10 }], maxHoursPerWeek: 40 },
        { id: "b", group: "g", priority: 4, options: [{ deviceTypeId: "arm", hoursNeeded: 10 }], maxHoursPerWeek: 40 },
        { id: "c", group: "g", priority: 3, options: [{ deviceTypeId: "arm", hoursNeeded: 20 }], maxHoursPerWeek: 40 },
      ],
    };
    const highs = await loadHighs();
    const relaxed = highs.solve(
      buildLp(problem).lp.replace(/Binaries[\s\S]*End/, "Bounds\n z_0_0 <= 1\n z_1_0 <= 1\n z_2_0 <= 1\nEnd"),
      { output_flag: false },
    );
    expect(relaxed.Status).toBe("Optimal");
    const dual = Math.abs(relaxed.Rows.find((r) => r.Name === "dev_0_0")!.Dual);
    expect(dual).toBeCloseTo(0.15, 9);

    const plan = await solveChecked(problem);
    expect(plan.objective).toBe(9);
    expect(plan.status).toBe("optimal");
    const device = plan.bindingResources!.find((b) => b.kind === "device" && b.week === 0)!;
    expect(device.shadowPrice).toBeGreaterThan(dual - 0.02);
    expect(device.shadowPrice).toBeLessThan(dual + 0.02);
    expect(device.description).toMatch(/arm in week 1/);
    for (const b of plan.bindingResources!.filter((x) => x.kind === "trainer"))
      expect(b.shadowPrice).toBeLessThan(0.2 * dual);
  });
});

describe("building blocks", () => {
  it("max-flow reproduces the textbook example (value 23)", () => {
    // Cormen, Leiserson, Rivest & Stein, Introduction to Algorithms, 3rd ed. (2009), Figure 26.1: max flow 23.
    const net = new FlowNetwork(6); // 0 = s, 1 = t, 2..5 = v1..v4
    const [s, t, v1, v2, v3, v4] = [0, 1, 2, 3, 4, 5];
    net.addEdge(s, v1, 16);
    net.addEdge(s, v2, 13);
    net.addEdge(v1, v3, 12);
    net.addEdge(v2, v1, 4);
    net.addEdge(v2, v4, 14);
    net.addEdge(v3, v2, 9);
    net.addEdge(v3, t, 20);
    net.addEdge(v4, v3, 7);
    net.addEdge(v4, t, 4);
    expect(net.augment(s, t)).toBeCloseTo(23, 12);
    // the minimum cut of that figure is {s, v1, v2, v4} | {v3, t}: capacity 12 + 7 + 4 = 23
    expect([...net.sourceSide(s)]).toEqual([1, 0, 1, 1, 0, 1]);
  });

  it("every capacity cut is satisfied by HiGHS's optimal selections (the cuts are valid)", async () => {
    for (const seed of [5, 6, 7]) {
      const problem = randomInstance({ workers: 40, deviceTypes: 3, trainers: 4, weeks: 6, seed });
      const ref = await solveWithHighs(problem, 60);
      expect(ref.optimal).toBe(true);
      const inst = buildInstance(problem);
      const z = new Map<number, number>();
      for (const [wid, did] of ref.chosen) {
        const c = inst.candidates.find((x) => inst.workers[x.worker].id === wid && inst.deviceIds[x.device] === did);
        expect(c).toBeDefined();
        z.set(c!.index, 1);
      }
      const cuts = starterCuts(inst, new WeekCapacity(inst));
      expect(cuts.length).toBeGreaterThan(50);
      for (const cut of cuts) expect(cutViolation(cut, inst, z)).toBeLessThanOrEqual(1e-6);
    }
  });
});

describe("the bound", () => {
  it("the Lagrangian bound is never below HiGHS's LP relaxation and settles within 0.5 % of it", async () => {
    // The Lagrangian dual of this model equals its LP relaxation (each worker's subproblem has whole-number
    // optima; Geoffrion 1974), so HiGHS's LP optimum is the floor no valid Lagrangian bound can go under.
    const highs = await loadHighs();
    for (const seed of [21, 22, 23]) {
      const problem = randomInstance({ workers: 80, deviceTypes: 3, trainers: 5, weeks: 8, seed });
      const { lp, zNames } = buildLp(problem);
      const bounds = [...zNames.keys()].map((z) => ` ${z} <= 1`).join("\n");
      const relaxed = highs.solve(lp.replace(/Binaries[\s\S]*End/, `Bounds\n${bounds}\nEnd`), { output_flag: false });
      expect(relaxed.Status).toBe("Optimal");
      const lpValue = (relaxed as unknown as { ObjectiveValue: number }).ObjectiveValue;
      const lag = lagrangianBound(buildInstance(problem), 0, 2000);
      expect(lag.bound).toBeGreaterThanOrEqual(lpValue - 1e-6);
      expect(lag.bound).toBeLessThanOrEqual(lpValue * 1.005);
    }
  });

  it("at bench size M (150 workers) the bound is valid and proves HiGHS's optimum", async () => {
    const problem = randomInstance({ workers: 150, deviceTypes: 4, trainers: 6, weeks: 12, seed: 2024 });
    const plan = await solveChecked(problem, { timeLimitMs: 10_000 });
    const ref = await solveWithHighs(problem, 120);
    expect(ref.optimal).toBe(true);
    // a maximisation: the proven bound must never be below the true optimum
    expect(plan.bound).toBeGreaterThanOrEqual(ref.objective - 1e-6);
    expect(plan.objective).toBe(ref.objective);
    expect(plan.status).toBe("optimal");
  });
});

describe("behaviour", () => {
  it("handles an empty problem and degenerate input", async () => {
    const empty = await solveChecked({ weeks: 0, deviceTypes: [], trainers: [], workers: [] });
    expect(empty).toMatchObject({ status: "optimal", objective: 0, bound: 0, assignments: [], unassigned: [] });
    const noTrainer = await solveChecked({
      weeks: 2,
      deviceTypes: [{ id: "arm", hoursPerWeek: [10, 10] }],
      trainers: [],
      workers: [
        {
          id: "x",
          group: "g",
          priority: 3,
          options: [
            { deviceTypeId: "arm", hoursNeeded: 5 },
            { deviceTypeId: "unknown", hoursNeeded: 1 },
          ],
          maxHoursPerWeek: 5,
        },
      ],
    });
    // no certified trainer means no supervised hours at all
    expect(noTrainer.objective).toBe(0);
    expect(noTrainer.unassigned[0].reason).toMatch(/more hours than can fit/);
  });

  it("a short time limit or an expired deadline still gives a valid plan with an honest bound", async () => {
    const problem = randomInstance({ workers: 60, deviceTypes: 3, trainers: 4, weeks: 8, seed: 11 });
    const ref = await solveWithHighs(problem, 60);
    let calls = 0;
    const rushed = await solveChecked(problem, { timeLimitMs: 100, clock: () => (calls++ < 3 ? 0 : 1e9) });
    expect(rushed.objective).toBeLessThanOrEqual(ref.objective);
    expect(rushed.bound).toBeGreaterThanOrEqual(ref.objective - 1e-6);
    expect(rushed.objective).toBeGreaterThan(0.8 * ref.objective);
  });

  it("is deterministic and reports progress", async () => {
    const problem = randomInstance({ workers: 30, deviceTypes: 3, trainers: 4, weeks: 8, seed: 77 });
    const phases: { phase: string; fraction: number }[] = [];
    const a = await solveChecked(problem, { onProgress: (p) => phases.push(p) });
    const b = await solveChecked(problem);
    expect(JSON.stringify(b)).toBe(JSON.stringify(a));
    expect(phases[0].phase).toBe("prepare");
    expect(phases[phases.length - 1]).toEqual({ phase: "done", fraction: 1 });
    for (let i = 1; i < phases.length; i++) expect(phases[i].fraction).toBeGreaterThanOrEqual(phases[i - 1].fraction);
  });

  it("the generated instances are scarce: not everyone can be made ready", async () => {
    const problem = randomInstance({ workers: 60, deviceTypes: 3, trainers: 4, weeks: 8, seed: 3 });
    const plan = await solveChecked(problem);
    expect(plan.assignments.length).toBeGreaterThan(10);
    expect(plan.unassigned.length).toBeGreaterThan(10);
  });
});

// 20 seeded instances, 20–60 workers; every fourth one with a fairness minimum.
const cases = Array.from({ length: 20 }, (_, i) => ({
  seed: 101 + i,
  workers: 20 + 2 * i + (i % 3),
  deviceTypes: 2 + (i % 3),
  trainers: 3 + (i % 3),
  weeks: i % 2 === 0 ? 8 : 6,
  share: i % 4 === 3 ? 0.2 : undefined,
}));
const optimalCount = { optimal: 0, done: 0 };

describe("against HiGHS on seeded random instances", () => {
  it.each(cases)(
    "seed $seed: $workers workers, $deviceTypes device types, $trainers trainers, $weeks weeks",
    async (c) => {
      const problem = randomInstance({
        workers: c.workers,
        deviceTypes: c.deviceTypes,
        trainers: c.trainers,
        weeks: c.weeks,
        seed: c.seed,
        minimumSharePerGroup: c.share,
      });
      const plan = await solveChecked(problem, { timeLimitMs: 20_000 });
      const ref = await solveWithHighs(problem, 100);
      expect(ref.optimal).toBe(true);
      expect(plan.status).not.toBe("infeasible");
      // never above the true optimum; the proven bound is never below it
      expect(plan.objective).toBeLessThanOrEqual(ref.objective + 1e-6);
      expect(plan.bound).toBeGreaterThanOrEqual(ref.objective - 1e-6);
      if (plan.status === "optimal") expect(Math.abs(plan.objective - ref.objective)).toBeLessThanOrEqual(1e-6);
      optimalCount.done++;
      if (plan.status === "optimal") optimalCount.optimal++;
    },
  );

  it("most instances are solved to proven optimality (≥ 15 of 20)", () => {
    expect(optimalCount.done).toBe(20);
    expect(optimalCount.optimal).toBeGreaterThanOrEqual(15);
  });
});
