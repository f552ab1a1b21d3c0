// Benchmark: baseline measures on recording sizes the product expects.
// Run: npx tsx bench/features.ts — prints a table of median times against targets and exits.
import { pathToFileURL } from "node:url";
import { handDimensionality, swayMetrics, trackingError } from "../app/compute/features";
import { processSwayTrace } from "../app/compute/features/sway-processing";
import { mulberry32 } from "../app/compute/seeded-random";
import { computeTrace, parseTrace } from "../app/compute/trace-parsing";
import { type TimedResult, timeCases } from "./_timing";

function normal(random: () => number): number {
  return Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random());
}

/** 60,000 × 22 joint angles (e.g. 10 min at 100 Hz): three synergies plus sensor noise. */
function gloveTrace(rows: number, joints: number, seed: number): number[][] {
  const random = mulberry32(seed);
  const loadings = Array.from({ length: 3 }, () => Array.from({ length: joints }, () => normal(random)));
  const synergy = [0, 0, 0];
  return Array.from({ length: rows }, () => {
    for (let k = 0; k < 3; k++) synergy[k] = 0.98 * synergy[k] + (3 - k) * 0.2 * normal(random);
    return Array.from(
      { length: joints },
      (_, j) =>
        30 +
        synergy[0] * loadings[0][j] +
        synergy[1] * loadings[1][j] +
        synergy[2] * loadings[2][j] +
        0.5 * normal(random),
    );
  });
}

/** Centre-of-pressure random walk pulled back to the centre, in mm. */
function swayTrace(n: number, seed: number): { x: number[]; y: number[] } {
  const random = mulberry32(seed);
  const x: number[] = [];
  const y: number[] = [];
  let px = 0;
  let py = 0;
  for (let i = 0; i < n; i++) {
    px = 0.995 * px + 0.3 * normal(random);
    py = 0.995 * py + 0.2 * normal(random);
    x.push(px);
    y.push(py);
  }
  return { x, y };
}

export function main(): TimedResult[] {
  const glove = gloveTrace(60_000, 22, 42);
  const sway = swayTrace(60_000, 7);
  const target = Array.from(
    { length: 60_000 },
    (_, i) => Math.sin((2 * Math.PI * 0.3 * i) / 100) + 0.5 * Math.sin((2 * Math.PI * 0.11 * i) / 100),
  );
  const cursor = target.map((_, i) => target[Math.max(0, i - 25)]);
  // The same glove recording as an uploaded CSV would arrive: header + string cells, t at 100 Hz.
  const gloveCsv = [
    ["t", ...glove[0].map((_, j) => `joint_${j + 1}`)],
    ...glove.map((row, i) => [String(i / 100), ...row.map((v) => v.toFixed(3))]),
  ];
  const parseAndScore = () => {
    const parsed = parseTrace("glove", gloveCsv);
    if (!parsed.ok) throw new Error(parsed.errors[0].message);
    return computeTrace("glove", parsed);
  };

  // Targets: hand dimensionality per the brief (< 1 s); the others are product choices so an upload
  // is scored well inside one request.
  const cases = [
    { name: "handDimensionality 60,000 × 22", run: () => handDimensionality(glove), targetMs: 1000 },
    { name: "swayMetrics 60,000 samples", run: () => swayMetrics(sway.x, sway.y, 100), targetMs: 100 },
    {
      name: "processSwayTrace 60,000 samples at 1,000 Hz (filter + resample)",
      run: () =>
        processSwayTrace(
          sway.x.map((_, i) => i / 1000),
          sway.x,
          sway.y,
          1000,
        ),
      targetMs: 200,
    },
    {
      name: "trackingError 60,000 samples, fs 100 (±100 lags)",
      run: () => trackingError(target, cursor, 100),
      targetMs: 500,
    },
    { name: "parseTrace + computeTrace glove CSV 60,000 × 23", run: parseAndScore, targetMs: 2000 },
  ];
  return timeCases(cases);
}

// Run when executed directly (npx tsx bench/features.ts); importing the file only exposes main().
if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) main();
