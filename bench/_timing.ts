import { performance } from "node:perf_hooks";

// Shared by the benchmarks: median wall time of `run` over `repeats` calls, after one warm-up call
// so the JIT has compiled the code before it is measured.
export function medianTimeMs(run: () => unknown, repeats: number): number {
  run();
  const times: number[] = [];
  for (let i = 0; i < repeats; i++) {
    const start = performance.now();
    run();
    times.push(performance.now() - start);
  }
  times.sort((a, b) => a - b);
  return times[Math.floor(times.length / 2)];
}

export interface TimedCase {
  name: string;
  run: () => unknown;
  targetMs: number;
}
export interface TimedResult {
  name: string;
  timeMs: number;
  targetMs: number;
  pass: boolean;
}

/** Times each case (median of `repeats`), prints one table against the targets, returns the rows. */
export function timeCases(cases: TimedCase[], repeats = 7): TimedResult[] {
  const results = cases.map(({ name, run, targetMs }) => {
    const timeMs = medianTimeMs(run, repeats);
    return { name, timeMs: Number(timeMs.toFixed(2)), targetMs, pass: timeMs < targetMs };
  });
  console.table(
    results.map((r) => ({
      name: r.name,
      "time ms": r.timeMs,
      "target ms": r.targetMs,
      result: r.pass ? "pass" : "FAIL",
    })),
  );
  return results;
}

export interface Spread {
  runs: number;
  medianMs: number;
  p95Ms: number;
  maxMs: number;
}

/**
 * Wall times of an async `run` over `repeats` calls after one warm-up call (statement caches, JIT; pass
 * `warmUp: false` when the caller has just made that call): median (mean of the middle two for an even
 * count) and 95th percentile by nearest rank (the max below 20 runs).
 */
export async function timeAsync(
  run: () => Promise<unknown>,
  repeats: number,
  { warmUp = true }: { warmUp?: boolean } = {},
): Promise<Spread> {
  if (warmUp) await run();
  const times: number[] = [];
  for (let i = 0; i < repeats; i++) {
    const start = performance.now();
    await run();
    times.push(performance.now() - start);
  }
  times.sort((a, b) => a - b);
  const n = times.length;
  const median = n % 2 ? times[n >> 1] : (times[n / 2 - 1] + times[n / 2]) / 2;
  const round = (x: number) => Number(x.toFixed(1));
  return {
    runs: n,
    medianMs: round(median),
    p95Ms: round(times[Math.ceil(0.95 * n) - 1]),
    maxMs: round(times[n - 1]),
  };
}
