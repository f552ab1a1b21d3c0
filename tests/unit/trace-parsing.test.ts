// Trace upload parsing: every kind of problem is reported with its file row and column.

import * as ss from "simple-statistics";
import { describe, expect, it } from "vitest";
import { forceGrading, handDimensionality, MEASURE_DIRECTIONS, swayMetrics, timingMetrics } from "~/compute/features";
import { processSwayTrace, SWAY_PROCESSING } from "~/compute/features/sway-processing";
import {
  analyseTrace,
  computeTrace,
  parseTrace,
  type TraceIssue,
  type TraceParseResult,
} from "~/compute/trace-parsing";

/** Header + rows of numbers as strings, the way a CSV splitter hands them over. */
function table(header: string[], rows: (number | string)[][]): string[][] {
  return [header, ...rows.map((r) => r.map(String))];
}
function swayRows(n: number, fs = 100): (number | string)[][] {
  // A slow ellipse around (10, −5) mm; t = i/fs exactly.
  return Array.from({ length: n }, (_, i) => [i / fs, 10 + 4 * Math.cos(i / 50), -5 + 2 * Math.sin(i / 37)]);
}
function errorsOf(result: TraceParseResult): TraceIssue[] {
  if (result.ok) throw new Error("expected the parse to fail");
  return result.errors;
}

describe("parseTrace: accepted files", () => {
  it("parses a sway trace, estimates fs from the timestamps and computes the sway measures after processing", () => {
    const rows = table(["t", "x", "y"], swayRows(2101, 50)); // 42 s at 50 Hz
    rows.push(["", "", ""]); // trailing blank line from the file's last newline
    const parsed = parseTrace("sway", rows);
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    expect(parsed.kind).toBe("sway");
    expect(parsed.sampleRateHz).toBeCloseTo(50, 9); // steps of exactly 1/50 s
    expect(parsed.data.x).toHaveLength(2101);
    const { measures: out, processing } = analyseTrace("sway", parsed);
    expect(computeTrace("sway", parsed)).toEqual(out);
    // The measures are those of the processed trace (checked in tests/reference/sway-processing.test.ts).
    const p = processSwayTrace(parsed.data.t, parsed.data.x, parsed.data.y, parsed.sampleRateHz!);
    expect(processing).toEqual(p.processing);
    expect(processing).toMatchObject({ resampledRateHz: 100, cutoffHz: 10, durationSeconds: 42 });
    expect(processing!.recordedRateHz).toBeCloseTo(50, 9);
    const direct = swayMetrics(p.x, p.y, 100);
    expect(out["sway.pathLength"]).toBeCloseTo(direct.pathLength, 9);
    expect(out["sway.ellipseArea95"]).toBeCloseTo(direct.ellipseArea95, 9);
    // Duration (n − 1)/fs = 4200/100 = 42 s, so mean velocity = path / 42 (Schubert & Kirchner 2014 definition).
    expect(out["sway.meanVelocity"]).toBeCloseTo(direct.pathLength / 42, 9);
    // The slow ellipse lies far below the cut-off: processing leaves the raw measures nearly unchanged.
    const raw = swayMetrics(parsed.data.x, parsed.data.y, 50);
    expect(out["sway.ellipseArea95"] / raw.ellipseArea95).toBeCloseTo(1, 3);
    for (const key of Object.keys(out)) expect(MEASURE_DIRECTIONS).toHaveProperty([key]);
  });

  it("other kinds have no processing", () => {
    const rows = table(
      ["target", "produced"],
      [
        [1, 1],
        [2, 2.1],
        [3, 2.9],
      ],
    );
    const parsed = parseTrace("force", rows);
    if (!parsed.ok) throw new Error("expected the parse to succeed");
    expect(analyseTrace("force", parsed).processing).toBeNull();
  });

  it("accepts header names in any case, with spaces and a byte-order mark, and a matching declared rate", () => {
    const rows = table(["\uFEFFT", " X ", "y"], swayRows(2100));
    const parsed = parseTrace("sway", rows, { declaredSampleRateHz: 100 });
    expect(parsed.ok).toBe(true);
  });

  it("parses a tracking trace and recovers the cursor delay", () => {
    const fs = 50;
    const rows = Array.from({ length: 500 }, (_, i) => {
      const t = i / fs;
      return [t, Math.sin(2 * Math.PI * 0.4 * t), Math.sin(2 * Math.PI * 0.4 * (t - 0.2))];
    });
    const parsed = parseTrace("tracking", table(["t", "target", "cursor"], rows));
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    const out = computeTrace("tracking", parsed);
    expect(out["tracking.lagSeconds"]).toBeCloseTo(0.2, 9); // 10 samples at 50 Hz
    for (const key of Object.keys(out)) expect(MEASURE_DIRECTIONS).toHaveProperty([key]);
  });

  it("parses a glove trace with named joints", () => {
    const joints = ["thumb_mcp", "thumb_ip", "index_mcp", "index_pip"];
    const rows = Array.from({ length: 300 }, (_, i) => [
      i / 100,
      ...joints.map((_, j) => 20 + 10 * Math.sin(i / (7 + 3 * j)) + j),
    ]);
    const parsed = parseTrace("glove", table(["t", ...joints], rows));
    expect(parsed.ok).toBe(true);
    if (!parsed.ok || parsed.kind !== "glove") return;
    expect(parsed.data.joints).toEqual(joints);
    expect(parsed.data.samples[0]).toHaveLength(4);
    const out = computeTrace("glove", parsed);
    const direct = handDimensionality(parsed.data.samples);
    expect(out["hand.pc1Ratio"]).toBeCloseTo(direct.explainedVarianceRatio[0], 12);
    expect(out["hand.joints"]).toBe(4);
    for (const key of Object.keys(out)) expect(MEASURE_DIRECTIONS).toHaveProperty([key]);
  });

  it("parses timing columns of different lengths with blank cells", () => {
    // 6 cues every 600 ms; 5 responses (the 4th cue unanswered); rows run out early for onset_ms.
    const rows = [
      ["cue_ms", "onset_ms"],
      ["1000", "980"],
      ["1600", "1610"],
      ["2200", "2170"],
      ["2800", ""],
      ["3400", "3390"],
      ["4000", "4020"],
    ];
    const compact = rows.map((r) => [...r]);
    compact[4] = ["2800"]; // splitter dropped the trailing empty cell
    const parsed = parseTrace("timing", compact);
    expect(parsed.ok).toBe(true);
    if (!parsed.ok || parsed.kind !== "timing") return;
    expect(parsed.data.cueMs).toHaveLength(6);
    expect(parsed.data.onsetMs).toEqual([980, 1610, 2170, 3390, 4020]);
    const out = computeTrace("timing", parsed);
    expect(out["timing.missed"]).toBe(1);
    expect(out["timing.cues"]).toBe(6);
    // Asynchronies −20, 10, −30, −10, 20 → mean |a| = 18 ms; SD per simple-statistics.
    expect(out["timing.meanAbsoluteAsynchronyMs"]).toBeCloseTo(18, 12);
    expect(out["timing.sdAsynchronyMs"]).toBeCloseTo(ss.sampleStandardDeviation([-20, 10, -30, -10, 20]), 12);
    expect(out["timing.interOnsetCv"]).toBeCloseTo(
      timingMetrics(parsed.data.cueMs, parsed.data.onsetMs).interOnsetCv,
      12,
    );
    for (const key of Object.keys(out)) expect(MEASURE_DIRECTIONS).toHaveProperty([key]);
  });

  it("parses force trials and reports slope deviation from 1", () => {
    const rows = table(
      ["target", "produced"],
      [
        [10, 11],
        [20, 19.5],
        [30, 27],
        [40, 35.5],
      ],
    );
    const parsed = parseTrace("force", rows);
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    const out = computeTrace("force", parsed);
    const direct = forceGrading([10, 20, 30, 40], [11, 19.5, 27, 35.5]);
    expect(out["force.slope"]).toBeCloseTo(direct.slope, 12);
    expect(out["force.slopeDeviation"]).toBeCloseTo(Math.abs(direct.slope - 1), 12);
    expect(out["force.rSquared"]).toBeCloseTo(direct.rSquared, 12);
    for (const key of Object.keys(out)) expect(MEASURE_DIRECTIONS).toHaveProperty([key]);
  });
});

describe("parseTrace: refused files name the row and column", () => {
  it("values beyond ±1e12 (which would overflow sums of squares into Infinity/NaN)", () => {
    const errors = errorsOf(
      parseTrace(
        "force",
        table(
          ["target", "produced"],
          [
            [10, 11],
            ["1e200", 20],
            [30, "-1e309"],
            [40, 1e12],
          ],
        ),
      ),
    );
    expect(errors).toEqual([
      { row: 3, column: "target", message: '"1e200" is outside the accepted range (±1e12)' },
      { row: 4, column: "produced", message: '"-1e309" is outside the accepted range (±1e12)' },
    ]);
  });

  it("missing column", () => {
    const errors = errorsOf(parseTrace("sway", table(["t", "x"], [[0, 1]])));
    expect(errors).toContainEqual(
      expect.objectContaining({ row: 1, column: "y", message: expect.stringMatching(/missing column "y"/) }),
    );
  });

  it("unexpected and duplicate columns", () => {
    const errors = errorsOf(parseTrace("force", table(["target", "produced", "produced", "notes"], [[1, 2, 2, 3]])));
    expect(errors).toContainEqual(
      expect.objectContaining({ row: 1, column: "produced", message: expect.stringMatching(/more than once/) }),
    );
    expect(errors).toContainEqual(
      expect.objectContaining({ row: 1, column: "notes", message: expect.stringMatching(/unexpected column/) }),
    );
  });

  it("glove trace without joint columns", () => {
    expect(errorsOf(parseTrace("glove", table(["t"], [[0], [1]])))[0].message).toMatch(
      /at least one joint-angle column/,
    );
  });

  it("non-numeric and empty cells", () => {
    const rows = table(["t", "x", "y"], swayRows(1200));
    rows[5][1] = "abc"; // file row 6
    rows[8][2] = "3,5"; // file row 9
    rows[10][2] = " "; // file row 11
    const errors = errorsOf(parseTrace("sway", rows));
    expect(errors).toContainEqual({ row: 6, column: "x", message: '"abc" is not a number' });
    expect(errors).toContainEqual({
      row: 9,
      column: "y",
      message: '"3,5" is not a number (use a decimal point, not a comma)',
    });
    expect(errors).toContainEqual({ row: 11, column: "y", message: "empty cell; a number is needed" });
  });

  it("rows with too few or too many cells", () => {
    const rows = table(["t", "x", "y"], swayRows(1200));
    rows[3] = ["0.02", "1"];
    rows[4] = [...rows[4], "7"];
    const errors = errorsOf(parseTrace("sway", rows));
    expect(errors).toContainEqual(
      expect.objectContaining({ row: 4, message: expect.stringMatching(/2 cells; the header names 3/) }),
    );
    expect(errors).toContainEqual(
      expect.objectContaining({ row: 5, message: expect.stringMatching(/4 cells; the header names 3/) }),
    );
  });

  it("time that does not increase", () => {
    const rows = table(["t", "x", "y"], swayRows(1200));
    rows[50][0] = rows[49][0]; // file row 51 repeats row 50's time
    const errors = errorsOf(parseTrace("sway", rows));
    expect(errors).toContainEqual(
      expect.objectContaining({
        row: 51,
        column: "t",
        message: expect.stringMatching(/not after the previous time .*row 50/),
      }),
    );
  });

  it("recording too short, by rows and by duration (configurable; sway's minimum only upwards)", () => {
    const fewRows = errorsOf(parseTrace("sway", table(["t", "x", "y"], swayRows(10))));
    expect(fewRows[0].message).toMatch(/10 rows; at least 20/);
    const short = errorsOf(parseTrace("sway", table(["t", "x", "y"], swayRows(2000)))); // 19.99 s
    expect(short).toContainEqual({ column: "t", message: "the sway recording lasts 19.99 s; at least 20 s is needed" });
    expect(SWAY_PROCESSING.minDurationSeconds).toBe(20);
    // Sway traces are processed and measured alike: a lower minimum is not taken, a higher one is.
    expect(parseTrace("sway", table(["t", "x", "y"], swayRows(500)), { minDurationSeconds: 4 }).ok).toBe(false);
    expect(errorsOf(parseTrace("sway", table(["t", "x", "y"], swayRows(2101)), { minDurationSeconds: 30 }))).toEqual([
      { column: "t", message: "the sway recording lasts 21 s; at least 30 s is needed" },
    ]);
    const trackingRows = table(
      ["t", "target", "cursor"],
      swayRows(500).map((r) => [r[0], r[1], r[2]]),
    );
    expect(errorsOf(parseTrace("tracking", trackingRows))[0].message).toMatch(
      /tracking recording lasts 4.99 s; at least 5 s/,
    );
    expect(parseTrace("tracking", trackingRows, { minDurationSeconds: 4 }).ok).toBe(true);
    expect(
      errorsOf(
        parseTrace(
          "force",
          table(
            ["target", "produced"],
            [
              [1, 1],
              [2, 2],
            ],
          ),
        ),
      )[0].message,
    ).toMatch(/2 trials; at least 3/);
  });

  it("sway recorded too slowly for the low-pass", () => {
    const errors = errorsOf(parseTrace("sway", table(["t", "x", "y"], swayRows(601, 20)))); // 30 s at 20 Hz
    expect(errors).toEqual([
      {
        column: "t",
        message: "the sway recording is sampled at about 20 Hz; at least 25 Hz is needed for the 10 Hz low-pass",
      },
    ]);
  });

  it("time steps inconsistent with the sample rate (dropped samples)", () => {
    const data = swayRows(2200);
    data.splice(600, 3); // three samples lost: the step before file row 602 is 0.04 s
    const errors = errorsOf(parseTrace("sway", table(["t", "x", "y"], data)));
    expect(errors).toHaveLength(1);
    expect(errors[0]).toMatchObject({ row: 602, column: "t" });
    expect(errors[0].message).toMatch(/0.04 s .* typical 0.01 s by more than 10 %/);
  });

  it("declared sample rate that disagrees with the timestamps", () => {
    const errors = errorsOf(parseTrace("sway", table(["t", "x", "y"], swayRows(1200)), { declaredSampleRateHz: 200 }));
    expect(errors).toContainEqual(
      expect.objectContaining({
        column: "t",
        message: expect.stringMatching(/declared sample rate 200 Hz disagrees .*about 100 Hz/),
      }),
    );
  });

  it("row cap, checked before any cell is read", () => {
    const rows = table(["t", "x", "y"], swayRows(1200));
    rows[7][1] = "junk";
    const errors = errorsOf(parseTrace("sway", rows, { maxRows: 1000 }));
    expect(errors).toEqual([{ message: expect.stringMatching(/more than 1000 data rows/) }]);
  });

  it("timing cues out of order, and too few onsets", () => {
    const errors = errorsOf(
      parseTrace("timing", [
        ["cue_ms", "onset_ms"],
        ["1000", "990"],
        ["900", ""],
        ["1500", ""],
      ]),
    );
    expect(errors).toContainEqual(
      expect.objectContaining({
        row: 3,
        column: "cue_ms",
        message: expect.stringMatching(/cue 900 is not after the previous cue 1000/),
      }),
    );
    expect(errors).toContainEqual(
      expect.objectContaining({ column: "onset_ms", message: expect.stringMatching(/1 response onsets; at least 2/) }),
    );
  });

  it("lists at most maxErrors problems and summarises the rest", () => {
    const rows = table(
      ["t", "x", "y"],
      swayRows(1200).map((r) => [r[0], "?", r[2]]),
    );
    const errors = errorsOf(parseTrace("sway", rows, { maxErrors: 5 }));
    expect(errors).toHaveLength(6);
    expect(errors[4]).toMatchObject({ row: 6, column: "x" });
    expect(errors[5].message).toMatch(/1195 more problem\(s\) not listed/);
  });

  it("empty file and unknown kind", () => {
    expect(errorsOf(parseTrace("sway", []))[0]).toMatchObject({ row: 1, message: expect.stringMatching(/empty/) });
    expect(errorsOf(parseTrace("eeg" as "sway", [["t"]]))[0].message).toMatch(/unknown trace kind "eeg"/);
  });
});

describe("computeTrace", () => {
  it("refuses a trace parsed as another kind", () => {
    const parsed = parseTrace(
      "force",
      table(
        ["target", "produced"],
        [
          [1, 1],
          [2, 2.1],
          [3, 2.9],
        ],
      ),
    );
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    expect(() => computeTrace("sway", parsed)).toThrow(/parsed as "force"/);
  });
});
