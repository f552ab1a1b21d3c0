/**
 * Allocation benchmark: seeded instances S, M, L, XL solved by Limberly's allocator and by HiGHS on the
 * time-indexed MIP (the reference optimum; HiGHS is used here only). Run: npx tsx bench/allocate.ts
 * Targets: M and L ≥ 99 % of HiGHS's objective, L under 10 s, XL under 60 s; the reported gap (bound − plan) /
 * bound ≤ 0.5 % at L and ≤ 1 % at XL; at every size no slower than HiGHS in the same run; no session of the
 * plan placed on a calendar (tests/reference/session-instances.ts) shorter than the device type's minimum.
 */
import { solveAllocation } from "../app/compute/allocation";
import { packSessions } from "../app/compute/session-packing";
import { solveWithHighs } from "../tests/reference/allocation-highs";
import { randomInstance } from "../tests/reference/allocation-instances";
import { calendarForProblem } from "../tests/reference/session-instances";

interface Size {
  name: string;
  workers: number;
  deviceTypes: number;
  trainers: number;
  weeks: number;
  timeLimitMs: number;
  targetMs?: number;
  targetRatio?: number;
  /** largest reported gap allowed, as a fraction */
  targetGap?: number;
}

const sizes: Size[] = [
  { name: "S", workers: 40, deviceTypes: 3, trainers: 4, weeks: 8, timeLimitMs: 10_000 },
  { name: "M", workers: 150, deviceTypes: 4, trainers: 6, weeks: 12, timeLimitMs: 10_000, targetRatio: 0.99 },
  {
    name: "L",
    workers: 400,
    deviceTypes: 6,
    trainers: 10,
    weeks: 12,
    timeLimitMs: 9_000,
    targetMs: 10_000,
    targetRatio: 0.99,
    targetGap: 0.005,
  },
  {
    name: "XL",
    workers: 1000,
    deviceTypes: 6,
    trainers: 20,
    weeks: 16,
    timeLimitMs: 50_000,
    targetMs: 60_000,
    targetGap: 0.01,
  },
];
const HIGHS_LIMIT_S = 120;

export async function main(): Promise<void> {
  const rows: Record<string, string | number>[] = [];
  // `npx tsx bench/allocate.ts M L` runs only the sizes named (the machine is shared; one size at a time)
  const only = process.argv.slice(2);
  for (const s of sizes.filter((x) => only.length === 0 || only.includes(x.name))) {
    const problem = randomInstance({
      workers: s.workers,
      deviceTypes: s.deviceTypes,
      trainers: s.trainers,
      weeks: s.weeks,
      seed: 2024,
    });
    const t0 = performance.now();
    // the bench passes a wall clock so the time limit is also enforced as a deadline
    const plan = await solveAllocation(problem, { timeLimitMs: s.timeLimitMs, clock: () => performance.now() });
    const ours = performance.now() - t0;
    const ref = await solveWithHighs(problem, HIGHS_LIMIT_S);
    const ratio = ref.objective > 0 ? plan.objective / ref.objective : NaN;
    const okRatio = s.targetRatio === undefined || ratio >= s.targetRatio;
    // no slower than the reference in the same run (HiGHS stopping at its limit counts as its time)
    const okTime = (s.targetMs === undefined || ours < s.targetMs) && ours <= ref.timeMs;
    const gap = plan.gap ?? 0;
    const okGap = s.targetGap === undefined || gap <= s.targetGap;
    // second stage: the plan's hours as dated sessions; the share shorter than the device's minimum must be 0
    const calendar = calendarForProblem(problem);
    const packed = packSessions(calendar, plan.assignments).sessions;
    const short = packed.filter(
      (p) => p.minutes < calendar.devices.find((d) => d.id === p.deviceId)!.minSessionMinutes!,
    );
    rows.push({
      size: s.name,
      workers: s.workers,
      "ours obj": plan.objective,
      "HiGHS obj": ref.optimal ? ref.objective : `${ref.objective} (best found, ${HIGHS_LIMIT_S} s limit)`,
      "obj ratio": ref.optimal ? ratio.toFixed(4) : `${ratio.toFixed(4)} (vs best found)`,
      "target ratio": s.targetRatio ? `≥ ${s.targetRatio}` : "—",
      "ours ms": Math.round(ours),
      "HiGHS ms": Math.round(ref.timeMs),
      "time ratio": (ours / ref.timeMs).toFixed(3),
      "target ms": s.targetMs ? `< ${s.targetMs}, ≤ HiGHS` : "≤ HiGHS",
      status: plan.status,
      bound: plan.bound,
      "reported gap": `${(gap * 100).toFixed(2)} %`,
      "target gap": s.targetGap !== undefined ? `≤ ${(s.targetGap * 100).toFixed(1)} %` : "—",
      "sessions < min": `${((short.length / Math.max(1, packed.length)) * 100).toFixed(2)} % of ${packed.length}`,
      "meets targets": okRatio && okTime && okGap && short.length === 0 ? "yes" : "NO",
    });
  }
  console.table(rows);
  const cols = Object.keys(rows[0]);
  console.log(`\n| ${cols.join(" | ")} |\n|${cols.map(() => "---").join("|")}|`);
  for (const r of rows) console.log(`| ${cols.map((c) => r[c]).join(" | ")} |`);
}

main().then(
  () => process.exit(0),
  (e) => {
    console.error(e);
    process.exit(1);
  },
);
