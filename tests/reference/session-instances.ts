/**
 * Seeded calendars for the second stage (invented): sites with working hours, closures (a holiday and a
 * shutdown week), device units with maintenance, trainers with working windows, leave and break rules, workers
 * with leave and some with a stricter wear-time limit. The first-stage problem is built from the calendar with
 * the product's capacity functions, as app/models/allocation-problem.server.ts does, so the two stages agree.
 */
import type { AllocationProblem } from "../../app/compute/allocation";
import type { PlanCalendar } from "../../app/compute/session-packing";
import { deviceHoursInWeek, trainerHoursInWeek } from "../../app/compute/session-rules";
import { mulberry32 } from "./allocation-instances";

const START = "2027-03-01"; // a Monday
const addDays = (d: string, n: number) => {
  const x = new Date(`${d}T12:00:00Z`);
  x.setUTCDate(x.getUTCDate() + n);
  return x.toISOString().slice(0, 10);
};
const weekday = (d: string) => {
  const w = new Date(`${d}T12:00:00Z`).getUTCDay();
  return w === 0 ? 7 : w;
};

export function sessionInstance(
  seed: number,
  size: { sites: number; workersPerSite: number; weeks: number } = { sites: 2, workersPerSite: 14, weeks: 6 },
): { calendar: PlanCalendar; problem: AllocationProblem } {
  const rnd = mulberry32(seed);
  const pick = <T>(xs: T[]) => xs[Math.floor(rnd() * xs.length)];
  const int = (lo: number, hi: number) => lo + Math.floor(rnd() * (hi - lo + 1));
  const dates = Array.from({ length: size.weeks * 7 }, (_, i) => addDays(START, i));
  const calendar: PlanCalendar = {
    startDate: START,
    weeks: size.weeks,
    devices: [],
    trainers: [],
    workers: [],
    sites: [],
  };
  const problemTrainers: AllocationProblem["trainers"] = [];
  const problemWorkers: AllocationProblem["workers"] = [];
  for (let s = 0; s < size.sites; s++) {
    const site = `Site ${s + 1}`;
    const open = pick(["07:00", "07:30", "08:00"]);
    const close = pick(["14:30", "16:00", "17:00"]);
    const worksSaturday = rnd() < 0.3;
    const holiday = dates[int(0, 4) + 7 * int(0, size.weeks - 1)];
    const shutdownWeek = int(1, size.weeks - 1);
    calendar.sites!.push({
      site,
      hours:
        rnd() < 0.15
          ? null
          : [1, 2, 3, 4, 5, ...(worksSaturday ? [6] : [])].map((wd) => ({
              weekday: wd,
              start: open,
              end: wd === 6 ? "12:00" : close,
            })),
      closures: [
        { startsOn: holiday, endsOn: holiday, reason: "Public holiday (invented)" },
        {
          startsOn: addDays(START, shutdownWeek * 7),
          endsOn: addDays(START, shutdownWeek * 7 + 4),
          reason: "Shutdown week (invented)",
        },
      ],
    });
    const deviceIds: string[] = [];
    for (let d = 0; d < 2; d++) {
      const wear = pick([45, 60, 90, 120, 240]);
      const id = `Device ${d + 1} at ${site}`;
      deviceIds.push(id);
      calendar.devices.push({
        id,
        deviceTypeId: d + 1,
        siteId: s + 1,
        name: `Device ${d + 1}`,
        site,
        wearTimeLimitMinutes: wear,
        minSessionMinutes: Math.min(pick([30, 30, 45]), wear),
        maxSessionMinutes: Math.min(pick([90, 120]), wear),
        units: Array.from({ length: int(1, 3) }, (_, u) => {
          const down = rnd() < 0.3 ? int(0, dates.length - 3) : -1;
          return {
            unitId: (s * 10 + d) * 10 + u,
            serial: `S${s + 1}-D${d + 1}-U${u + 1}`,
            bookableHoursPerWeek: pick([15, 20, 30]),
            unavailableDates: down < 0 ? [] : dates.slice(down, down + 3),
          };
        }),
      });
    }
    for (let t = 0; t < 2; t++) {
      const id = `Trainer ${s + 1}.${t + 1}`;
      const split = rnd() < 0.5;
      const leaveStart = rnd() < 0.4 ? int(0, dates.length - 5) : -1;
      const windows = dates.flatMap((date) => {
        if (leaveStart >= 0 && date >= dates[leaveStart] && date <= dates[leaveStart + 4]) return [];
        if (weekday(date) > 5) return [];
        return split
          ? [
              { date, start: "08:00", end: "12:00" },
              { date, start: "13:00", end: "16:00" },
            ]
          : [{ date, start: "08:00", end: "13:00" }];
      });
      const trainer = {
        id,
        trainerId: s * 10 + t,
        name: id,
        email: null,
        site,
        traineesPerSession: int(1, 3),
        hoursPerWeek: split ? 30 : 20,
        ...pick([
          { maxContinuousMinutes: 120, breakMinutes: 15 },
          { maxContinuousMinutes: 90, breakMinutes: 15 },
          { maxContinuousMinutes: 150, breakMinutes: 20 },
        ]),
        windows,
      };
      calendar.trainers.push(trainer);
      problemTrainers.push({
        id,
        deviceTypeIds: t === 0 ? deviceIds : [pick(deviceIds)],
        hoursPerWeek: Array.from({ length: size.weeks }, (_, w) => trainerHoursInWeek(calendar, trainer, w)),
        traineesPerSession: trainer.traineesPerSession,
      });
    }
    for (let w = 0; w < size.workersPerSite; w++) {
      const id = `${s + 1}-${w + 1}`;
      const leave = rnd() < 0.2 ? int(0, dates.length - 5) : -1;
      const options = deviceIds.filter(() => rnd() < 0.7);
      if (options.length === 0) options.push(pick(deviceIds));
      const strict = rnd() < 0.15 ? { [options[0]]: pick([20, 40, 60]) } : undefined;
      calendar.workers.push({
        id,
        workerId: s * 100 + w,
        name: `Worker ${id}`,
        employeeNumber: `E${id}`,
        email: null,
        department: "Line",
        site,
        maxHoursPerWeek: pick([2, 3, 4, 6]),
        unavailableDates: leave < 0 ? [] : dates.slice(leave, leave + 5),
        ...(strict ? { wearTimeLimits: strict } : {}),
      });
      problemWorkers.push({
        id,
        group: site,
        priority: pick([1, 1, 2, 3]),
        options: options.map((o) => ({ deviceTypeId: o, hoursNeeded: int(4, 40) / 4 })),
        maxHoursPerWeek: calendar.workers.at(-1)!.maxHoursPerWeek,
      });
    }
  }
  return {
    calendar,
    problem: {
      weeks: size.weeks,
      deviceTypes: calendar.devices.map((d) => ({
        id: d.id,
        hoursPerWeek: Array.from({ length: size.weeks }, (_, w) => deviceHoursInWeek(calendar, d, w)),
      })),
      trainers: problemTrainers,
      workers: problemWorkers,
    },
  };
}

/**
 * A calendar for a first-stage instance without one (bench/allocate.ts): one site open Mon–Fri 07:00–17:00 with
 * a holiday on the second Monday, enough 30-hour units for each device type's hours, trainers working
 * 07:30–12:00 and 12:30–17:00 with the default break rule, workers away in the weeks they are not available.
 */
export function calendarForProblem(problem: AllocationProblem, startDate = START): PlanCalendar {
  const site = "Bench site";
  const dates = (week: number) => Array.from({ length: 7 }, (_, i) => addDays(startDate, week * 7 + i));
  const all = Array.from({ length: problem.weeks }, (_, w) => dates(w)).flat();
  return {
    startDate,
    weeks: problem.weeks,
    sites: [
      {
        site,
        hours: [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: "07:00", end: "17:00" })),
        closures: [{ startsOn: addDays(startDate, 7), endsOn: addDays(startDate, 7), reason: "Holiday (invented)" }],
      },
    ],
    devices: problem.deviceTypes.map((d, i) => ({
      id: d.id,
      deviceTypeId: i + 1,
      siteId: 1,
      name: d.id,
      site,
      wearTimeLimitMinutes: 120,
      minSessionMinutes: 30,
      maxSessionMinutes: 120,
      units: Array.from({ length: Math.max(1, Math.ceil(Math.max(...d.hoursPerWeek) / 30)) }, (_, u) => ({
        unitId: i * 100 + u,
        serial: `${d.id}-${u + 1}`,
        bookableHoursPerWeek: 30,
        unavailableDates: [],
      })),
    })),
    trainers: problem.trainers.map((t, i) => ({
      id: t.id,
      trainerId: i + 1,
      name: t.id,
      email: null,
      site,
      traineesPerSession: t.traineesPerSession,
      hoursPerWeek: Math.max(...t.hoursPerWeek),
      windows: all
        .filter((date) => weekday(date) <= 5)
        .flatMap((date) => [
          { date, start: "07:30", end: "12:00" },
          { date, start: "12:30", end: "17:00" },
        ]),
    })),
    workers: problem.workers.map((w, i) => ({
      id: w.id,
      workerId: i + 1,
      name: w.id,
      employeeNumber: w.id,
      email: null,
      department: w.group,
      site,
      maxHoursPerWeek: w.maxHoursPerWeek,
      unavailableDates: w.availableWeeks
        ? Array.from({ length: problem.weeks }, (_, k) => k)
            .filter((k) => !w.availableWeeks!.includes(k))
            .flatMap(dates)
        : [],
    })),
  };
}
