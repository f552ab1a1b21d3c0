import { describe, expect, it } from "vitest";
import type { AllocationProblem } from "~/compute/allocation";
import { bookCommitments } from "~/compute/commitments";

// Fixed commitments of workers already in training, on small problems worked out by hand (every number below
// is arithmetic on the inputs, written next to the check).
const problem = (): AllocationProblem => ({
  weeks: 3,
  deviceTypes: [{ id: "Arm at North", hoursPerWeek: [6, 6, 6] }],
  trainers: [
    { id: "Ines", deviceTypeIds: ["Arm at North"], hoursPerWeek: [2, 2, 2], traineesPerSession: 2 },
    { id: "Olu", deviceTypeIds: ["Arm at North"], hoursPerWeek: [3, 3, 3], traineesPerSession: 1 },
  ],
  workers: [
    {
      id: "9",
      group: "g",
      priority: 1,
      options: [{ deviceTypeId: "Arm at North", hoursNeeded: 4 }],
      maxHoursPerWeek: 3,
    },
  ],
});

describe("bookCommitments", () => {
  it("books remaining hours week by week with the preferred trainer and takes them off the capacities", () => {
    const { problem: left, committed } = bookCommitments(problem(), [
      { workerId: "1", deviceTypeId: "Arm at North", hoursNeeded: 5, maxHoursPerWeek: 3, preferredTrainerId: "Ines" },
    ]);
    const [c] = committed;
    // week 0: min(3 max/week, 5 left, 6 device, 2 trainer-h × 2 trainees = 4) = 3 with Ines; week 1: the last 2
    expect(c.assignment.sessions).toEqual([
      { week: 0, trainerId: "Ines", hours: 3 },
      { week: 1, trainerId: "Ines", hours: 2 },
    ]);
    expect(c.assignment.completionWeek).toBe(1);
    expect(c.hoursBooked).toBe(5);
    expect(c.hoursLeft).toBe(0);
    // device 6 − 3 = 3, 6 − 2 = 4; Ines 2 − 3/2 = 0.5, 2 − 2/2 = 1
    expect(left.deviceTypes[0].hoursPerWeek).toEqual([3, 4, 6]);
    expect(left.trainers[0].hoursPerWeek).toEqual([0.5, 1, 2]);
    expect(left.trainers[1].hoursPerWeek).toEqual([3, 3, 3]);
    // the solver's own workers are untouched
    expect(left.workers).toEqual(problem().workers);
  });

  it("spills to another certified trainer, skips unavailable weeks and reports hours beyond the horizon", () => {
    const { committed } = bookCommitments(problem(), [
      {
        workerId: "2",
        deviceTypeId: "Arm at North",
        hoursNeeded: 20,
        maxHoursPerWeek: 6,
        availableWeeks: [0, 2],
        preferredTrainerId: "Ines",
      },
    ]);
    const [c] = committed;
    // per available week: Ines 2 × 2 = 4 supervised hours, then Olu min(6 − 4, 3 × 1) = 2; week 1 skipped
    expect(c.assignment.sessions).toEqual([
      { week: 0, trainerId: "Ines", hours: 4 },
      { week: 0, trainerId: "Olu", hours: 2 },
      { week: 2, trainerId: "Ines", hours: 4 },
      { week: 2, trainerId: "Olu", hours: 2 },
    ]);
    expect(c.hoursBooked).toBe(12);
    expect(c.hoursLeft).toBe(8); // 20 − 12: not ready in this horizon
    expect(c.assignment.completionWeek).toBe(2);
  });
  it("rounds a need that is not a whole number of quarter hours up to the next quarter, so it can finish", () => {
    const { committed } = bookCommitments(problem(), [
      {
        workerId: "3",
        deviceTypeId: "Arm at North",
        hoursNeeded: 3.22,
        maxHoursPerWeek: 3,
        preferredTrainerId: "Ines",
      },
    ]);
    const [c] = committed;
    // 3.22 h → 3.25 h booked in quarters: week 0 the weekly maximum 3, week 1 the last quarter
    expect(c.assignment.sessions).toEqual([
      { week: 0, trainerId: "Ines", hours: 3 },
      { week: 1, trainerId: "Ines", hours: 0.25 },
    ]);
    expect(c.hoursBooked).toBe(3.25);
    expect(c.hoursLeft).toBe(0);
    expect(c.assignment.completionWeek).toBe(1);
  });
});
