// Times disclosure control on manager-sized tables with many small counts.
// Run: npx tsx bench/disclosure.ts   (prints a table; exits by itself)
// Targets are ours (a manager page should render within about half a second), not published.

import { performance } from "node:perf_hooks";
import { auditProtectedTable, protectLinkedTables, protectTable } from "../app/compute/disclosure";
import { mulberry32 as seeded } from "../app/compute/seeded-random";
import { smallCountTable } from "../tests/reference/disclosure-audit";

const labels = (prefix: string, k: number) => Array.from({ length: k }, (_, i) => `${prefix}${i + 1}`);

function timeIt<T>(runs: number, make: (run: number) => () => T): { medianMs: number; maxMs: number; last: T } {
  const times: number[] = [];
  let last!: T;
  for (let r = 0; r < runs; r++) {
    const job = make(r);
    const start = performance.now();
    last = job();
    times.push(performance.now() - start);
  }
  times.sort((a, b) => a - b);
  return { medianMs: times[times.length >> 1], maxMs: times[times.length - 1], last };
}

export function main(): void {
  const rows: Record<string, string | number>[] = [];
  const runs = 9;
  // Warm-up so the first timed run is not JIT compilation.
  protectTable(labels("r", 10), labels("c", 6), smallCountTable(seeded(1), 10, 6));

  for (const [m, n, target] of [
    [10, 6, 100],
    [20, 10, 300],
    [30, 12, 500],
  ] as const) {
    const tables = Array.from({ length: runs }, (_, r) => smallCountTable(seeded(1000 + r), m, n));
    const protect = timeIt(runs, (r) => () => protectTable(labels("r", m), labels("c", n), tables[r]));
    const hidden = protect.last.cells.flat().filter((v) => v === null).length;
    rows.push({
      job: `protectTable ${m}×${n}`,
      "median ms": +protect.medianMs.toFixed(1),
      "max ms": +protect.maxMs.toFixed(1),
      "target ms": target,
      "hidden cells (last)": hidden,
      ok: protect.maxMs <= target ? "yes" : "NO",
    });
    const audit = timeIt(runs, (r) => {
      const published = protectTable(labels("r", m), labels("c", n), tables[r]);
      return () => auditProtectedTable(tables[r], published);
    });
    rows.push({
      job: `auditProtectedTable ${m}×${n}`,
      "median ms": +audit.medianMs.toFixed(1),
      "max ms": +audit.maxMs.toFixed(1),
      "target ms": target,
      "hidden cells (last)": hidden,
      ok: audit.maxMs <= target ? "yes" : "NO",
    });
  }

  // Linked views: 3 sites × 5 departments, 8 stages, published together.
  const parentOf = Array.from({ length: 15 }, (_, d) => `site ${1 + Math.floor(d / 5)}`);
  const linked = timeIt(runs, (r) => {
    const counts = smallCountTable(seeded(5000 + r), 15, 8);
    return () =>
      protectLinkedTables({ detail: { rows: labels("dept ", 15), columns: labels("stage ", 8), counts }, parentOf });
  });
  rows.push({
    job: "protectLinkedTables 15 depts / 3 sites × 8",
    "median ms": +linked.medianMs.toFixed(1),
    "max ms": +linked.maxMs.toFixed(1),
    "target ms": 1000,
    "hidden cells (last)": linked.last.detail.cells.flat().filter((v) => v === null).length,
    ok: linked.maxMs <= 1000 ? "yes" : "NO",
  });

  console.table(rows);
}

main();
