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
