/**
 * Session rules of the second stage (docs/methods.md, "Session rules"): hand-worked cases, and seeded instances
 * solved by the allocator and placed by the packing code, every session checked by the independent checker
 * (tests/reference/session-rules-checker.ts, minute by minute, imports only types).
 */
import { describe, expect, it } from "vitest";
import { solveAllocation } from "../../app/compute/allocation";
import { placePlan } from "../../app/compute/placement";
import { cutSessions, type PlanCalendar, packSessions, splitEqual, splitFull } from "../../app/compute/session-packing";
import {
  deviceHoursInWeek,
  sessionRuleViolations,
  teachableMinutes,
  trainerHoursInWeek,
} from "../../app/compute/session-rules";
import { sessionInstance } from "./session-instances";
import { checkPackedSessions } from "./session-rules-checker";

const MON = "2027-03-01"; // a Monday
const week0 = ["2027-03-01", "2027-03-02", "2027-03-03", "2027-03-04", "2027-03-05"];

function oneSite(over: Partial<PlanCalendar> = {}): PlanCalendar {
  return {
    startDate: MON,
    weeks: 1,
    sites: [
      { site: "Yard", hours: week0.map((_, i) => ({ weekday: i + 1, start: "07:00", end: "17:00" })), closures: [] },
    ],
    devices: [
      {
        id: "Arm at Yard",
        deviceTypeId: 1,
        siteId: 1,
        name: "Arm",
        site: "Yard",
        wearTimeLimitMinutes: 240,
        minSessionMinutes: 30,
        maxSessionMinutes: 120,
        units: [1, 2, 3].map((u) => ({ unitId: u, serial: `U${u}`, bookableHoursPerWeek: 30, unavailableDates: [] })),
      },
    ],
    trainers: [
      {
        id: "Tess",
        trainerId: 1,
        name: "Tess",
        email: null,
        site: "Yard",
        traineesPerSession: 1,
        hoursPerWeek: 30,
        maxContinuousMinutes: 120,
        breakMinutes: 15,
        windows: week0.map((date) => ({ date, start: "08:00", end: "13:00" })),
      },
    ],
    workers: ["w1", "w2", "w3"].map((id, i) => ({
      id,
      workerId: i + 1,
      name: id,
      employeeNumber: id,
      email: null,
      department: "Line",
      site: "Yard",
      maxHoursPerWeek: 10,
      unavailableDates: [],
    })),
    ...over,
  };
}
const plan = (workerId: string, hours: number, week = 0) => ({
  workerId,
  deviceTypeId: "Arm at Yard",
  completionWeek: week,
  sessions: [{ week, trainerId: "Tess", hours }],
});

describe("session rules by hand", () => {
  it("a five-hour window holds 270 teaching minutes with a 15-minute break after each two hours", () => {
    // by hand: 120 teach + 15 break + 120 teach + 15 break + 30 teach = 300 minutes
    expect(teachableMinutes([{ from: 480, to: 780 }], { maxContinuousMinutes: 120, breakMinutes: 15 })).toBe(270);
    // windows 08:00–12:00 and 13:00–15:00 are an hour apart, so two stretches: 225 + 120
    expect(
      teachableMinutes(
        [
          { from: 480, to: 720 },
          { from: 780, to: 900 },
        ],
        { maxContinuousMinutes: 120, breakMinutes: 15 },
      ),
    ).toBe(345);
  });

  it("cuts minutes into sessions between the shortest and the longest", () => {
    // 130 min, sessions 30–120: two of 65 (equal) or 100 + 30 (full sessions, the short one lifted to 30)
    expect(cutSessions(130, { min: 30, max: 120 }, splitEqual)).toEqual({ blocks: [65, 65], rest: 0 });
    expect(cutSessions(130, { min: 30, max: 120 }, splitFull)).toEqual({ blocks: [100, 30], rest: 0 });
    // below the shortest session: all rest
    expect(cutSessions(20, { min: 30, max: 120 }, splitEqual)).toEqual({ blocks: [], rest: 20 });
    // 100 min with sessions 60–90: one 90 fits, two of 60 would be 120 > 100, so 10 min are left over
    expect(cutSessions(100, { min: 60, max: 90 }, splitEqual)).toEqual({ blocks: [90], rest: 10 });
  });

  it("closures and working hours cut the first stage's weekly hours", () => {
    const cal = oneSite();
    cal.sites![0].closures = [{ startsOn: "2027-03-01", endsOn: "2027-03-02", reason: "Holiday" }];
    // by hand: 3 units × 30 h × 3 open days of 5 = 54 h; the trainer: 3 days × 270 min = 13.5 h
    expect(deviceHoursInWeek(cal, cal.devices[0], 0)).toBe(54);
    expect(trainerHoursInWeek(cal, cal.trainers[0], 0)).toBe(13.5);
    // site open 07:00–09:00 only: each unit at most 3 days × 2 h = 6 h; the trainer 3 days × 08:00–09:00
    cal.sites![0].hours = week0.map((_, i) => ({ weekday: i + 1, start: "07:00", end: "09:00" }));
    expect(deviceHoursInWeek(cal, cal.devices[0], 0)).toBe(18);
    expect(trainerHoursInWeek(cal, cal.trainers[0], 0)).toBe(3);
  });

  it("never books on a closure day, keeps the trainer's break and rounds a last short rest up to the shortest session", () => {
    const cal = oneSite();
    cal.sites![0].closures = [{ startsOn: "2027-03-01", endsOn: "2027-03-03", reason: "Shutdown" }];
    const { sessions, unplaced } = packSessions(cal, [plan("w1", 2), plan("w2", 2), plan("w3", 0.25)]);
    expect(unplaced).toEqual([]);
    expect(sessions.every((s) => s.date >= "2027-03-04")).toBe(true);
    // w3's 15 minutes become one 30-minute session (its last week)
    expect(sessions.filter((s) => s.workerId === "w3").map((s) => s.minutes)).toEqual([30]);
    // two 2-hour sessions with Tess (one trainee each) on Thursday 08:00–13:00: the second after a 15-minute break
    const thursday = sessions.filter((s) => s.date === "2027-03-04" && s.minutes === 120);
    expect(thursday.map((s) => `${s.start}–${s.end}`)).toEqual(["08:00–10:00", "10:15–12:15"]);
    expect(checkPackedSessions(cal, sessions)).toEqual([]);
  });

  it("a short rest moves on with the worker's later hours instead of becoming a short session", () => {
    const cal = oneSite({ weeks: 2 });
    cal.trainers[0].windows = [0, 1, 2, 3, 4, 7, 8, 9, 10, 11].map((i) => ({
      date: new Date(Date.UTC(2027, 2, 1 + i)).toISOString().slice(0, 10),
      start: "08:00",
      end: "13:00",
    }));
    cal.sites![0].hours = [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: "07:00", end: "17:00" }));
    const a = {
      workerId: "w1",
      deviceTypeId: "Arm at Yard",
      completionWeek: 1,
      sessions: [
        { week: 0, trainerId: "Tess", hours: 0.25 },
        { week: 1, trainerId: "Tess", hours: 1 },
      ],
    };
    const { sessions, unplaced } = packSessions(cal, [a]);
    expect(unplaced).toEqual([]);
    // the 15 minutes of week 0 join week 1's hour: one 75-minute session, nothing shorter than 30
    expect(sessions.map((s) => [s.week, s.minutes])).toEqual([[1, 75]]);
  });

  it("the checker and the publish guard both name broken rules", () => {
    const cal = oneSite();
    cal.sites![0].closures = [{ startsOn: "2027-03-05", endsOn: "2027-03-05", reason: "Holiday" }];
    const s = (workerId: string, date: string, start: string, end: string, serial = "U1") => ({
      week: 0,
      workerId,
      deviceId: "Arm at Yard",
      trainerId: "Tess",
      unitId: 1,
      serial,
      date,
      start,
      end,
      minutes: 0,
    });
    const cases = [
      [s("w1", "2027-03-01", "08:00", "08:20")], // shorter than 30 minutes
      [s("w1", "2027-03-05", "08:00", "09:00")], // closure day
      [s("w1", "2027-03-01", "06:00", "07:30")], // before the site opens
      [s("w1", "2027-03-01", "08:00", "10:00"), s("w2", "2027-03-01", "10:05", "11:00", "U2")], // no break
      [s("w1", "2027-03-01", "08:00", "09:00"), s("w2", "2027-03-01", "08:30", "09:30")], // unit and trainer twice
    ];
    for (const c of cases) {
      expect(checkPackedSessions(cal, c).length, JSON.stringify(c)).toBeGreaterThan(0);
      expect(sessionRuleViolations(cal, c).length, JSON.stringify(c)).toBeGreaterThan(0);
    }
    const fine = [s("w1", "2027-03-01", "08:00", "10:00"), s("w2", "2027-03-01", "10:15", "11:00", "U2")];
    expect(checkPackedSessions(cal, fine)).toEqual([]);
    expect(sessionRuleViolations(cal, fine)).toEqual([]);
  });
});

describe("seeded instances: solved, placed, every session checked independently", () => {
  for (const seed of [1, 2, 3, 4, 5, 6, 7, 8]) {
    it(`seed ${seed}`, async () => {
      const { calendar, problem } = sessionInstance(seed);
      const solved = await solveAllocation(problem, { timeLimitMs: 4000 });
      const placed = placePlan(calendar, [], solved);
      expect(placed.sessions.length).toBeGreaterThan(0);
      expect(checkPackedSessions(calendar, placed.sessions)).toEqual([]);
      // every planned minute is placed or reported; a worker with unplaced minutes is not counted ready
      for (const a of solved.assignments) {
        const planned = Math.round(a.sessions.reduce((h, x) => h + x.hours, 0) * 60);
        const got = placed.sessions.filter((s) => s.workerId === a.workerId).reduce((m, s) => m + s.minutes, 0);
        const lost = placed.unplaced.filter((u) => u.workerId === a.workerId).reduce((m, u) => m + u.minutes, 0);
        expect(got + lost, a.workerId).toBeGreaterThanOrEqual(planned);
        expect(placed.readyIds.includes(a.workerId), a.workerId).toBe(lost === 0);
      }
    });
  }
});
