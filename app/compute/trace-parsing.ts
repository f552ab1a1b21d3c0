// Uploaded trace files → checked numeric series → baseline measures.
// The CSV text has already been split into cells (rows of strings, header first); this module only
// judges the content and says exactly where a file is wrong, so an assessor can fix and re-upload it.
// Row numbers in messages are 1-based file rows with the header as row 1, as a spreadsheet shows them.
import { median } from "simple-statistics";
import { forceGrading, handDimensionality, swayMetrics, timingMetrics, trackingError } from "./features";
import { processSwayTrace, SWAY_PROCESSING, type SwayProcessing } from "./features/sway-processing";

export type TraceKind = "sway" | "tracking" | "glove" | "timing" | "force";
export const TRACE_KINDS: readonly TraceKind[] = ["sway", "tracking", "glove", "timing", "force"];

export interface TraceIssue {
  row?: number;
  column?: string;
  message: string;
}

export interface TraceDataByKind {
  /** Time (s) and centre-of-pressure position (mm). */
  sway: { t: number[]; x: number[]; y: number[] };
  /** Time (s), target and cursor positions. */
  tracking: { t: number[]; target: number[]; cursor: number[] };
  /** Time (s), joint names in file order, and samples[row][joint] angles. */
  glove: { t: number[]; joints: string[]; samples: number[][] };
  /** Cue and response-onset times (ms); the two lists are independent and may differ in length. */
  timing: { cueMs: number[]; onsetMs: number[] };
  /** Target and produced level per trial. */
  force: { target: number[]; produced: number[] };
}

export type ParsedTrace<K extends TraceKind = TraceKind> = {
  [P in K]: { ok: true; kind: P; sampleRateHz?: number; data: TraceDataByKind[P] };
}[K];
export interface TraceParseFailure {
  ok: false;
  errors: TraceIssue[];
}
export type TraceParseResult<K extends TraceKind = TraceKind> = ParsedTrace<K> | TraceParseFailure;

export interface TraceParseOptions {
  /** Fewest data rows (timing: fewest cues; force: fewest trials). Default per kind, see TRACE_DEFAULTS. */
  minRows?: number;
  /**
   * Fewest seconds from first to last timestamp (time-series kinds). Default per kind. For sway it can be raised
   * but not lowered below SWAY_PROCESSING.minDurationSeconds: every sway trace is processed and measured alike.
   */
  minDurationSeconds?: number;
  /** Most data rows accepted; larger files are refused before any cell is read. Default 200,000. */
  maxRows?: number;
  /** Sample rate stated by the device or the assessor; checked against the timestamps. */
  declaredSampleRateHz?: number;
  /** Largest accepted relative deviation of a time step (and of a declared rate) from the median step. Default 0.10. */
  sampleRateTolerance?: number;
  /** Problems listed before the rest are summarised in one line. Default 50. */
  maxErrors?: number;
}

/**
 * Product defaults, overridable per upload (sway's duration only upwards). Sway: the common processing's
 * minimum trial (docs/methods.md); the others are chosen so each measure is defined.
 */
export const TRACE_DEFAULTS: Record<TraceKind, { minRows: number; minDurationSeconds: number }> = {
  sway: { minRows: 20, minDurationSeconds: SWAY_PROCESSING.minDurationSeconds },
  tracking: { minRows: 20, minDurationSeconds: 5 },
  glove: { minRows: 20, minDurationSeconds: 2 },
  timing: { minRows: 3, minDurationSeconds: 0 },
  force: { minRows: 3, minDurationSeconds: 0 },
};
export const DEFAULT_MAX_ROWS = 200_000;
export const DEFAULT_SAMPLE_RATE_TOLERANCE = 0.1;

const REQUIRED_COLUMNS: Record<TraceKind, readonly string[]> = {
  sway: ["t", "x", "y"],
  tracking: ["t", "target", "cursor"],
  glove: ["t"],
  timing: ["cue_ms", "onset_ms"],
  force: ["target", "produced"],
};

/**
 * Largest magnitude accepted in a recording cell or a typed score. Far above any real unit used (ms timestamps
 * of a day, newtons, millimetres), and small enough that sums of squares over the largest file stay finite
 * (1e12² × 200,000 ≈ 2e29, far below Number.MAX_VALUE ≈ 1.8e308).
 */
export const MAX_ABS_VALUE = 1e12;

/** Plain decimal or scientific notation; no thousands separators, no "NaN"/"Infinity". */
const NUMBER_PATTERN = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

class IssueList {
  readonly issues: TraceIssue[] = [];
  private dropped = 0;
  constructor(private readonly limit: number) {}
  add(issue: TraceIssue): void {
    if (this.issues.length < this.limit) this.issues.push(issue);
    else this.dropped++;
  }
  get count(): number {
    return this.issues.length + this.dropped;
  }
  finish(): TraceIssue[] {
    if (this.dropped > 0)
      this.issues.push({ message: `${this.dropped} more problem(s) not listed; fix the ones above and upload again` });
    return this.issues;
  }
}

const fail = (issues: IssueList): TraceParseFailure => ({ ok: false, errors: issues.finish() });

export function parseTrace<K extends TraceKind>(
  kind: K,
  rows: string[][],
  options: TraceParseOptions = {},
): TraceParseResult<K> {
  if (!TRACE_KINDS.includes(kind)) {
    return {
      ok: false,
      errors: [{ message: `unknown trace kind "${String(kind)}"; expected one of ${TRACE_KINDS.join(", ")}` }],
    };
  }
  const defaults = TRACE_DEFAULTS[kind];
  const minRows = options.minRows ?? defaults.minRows;
  const minDuration =
    kind === "sway"
      ? Math.max(options.minDurationSeconds ?? 0, SWAY_PROCESSING.minDurationSeconds)
      : (options.minDurationSeconds ?? defaults.minDurationSeconds);
  const maxRows = options.maxRows ?? DEFAULT_MAX_ROWS;
  const tolerance = options.sampleRateTolerance ?? DEFAULT_SAMPLE_RATE_TOLERANCE;
  const issues = new IssueList(options.maxErrors ?? 50);

  if (!Array.isArray(rows) || rows.length === 0 || !Array.isArray(rows[0])) {
    issues.add({ row: 1, message: "the file is empty; the first row must name the columns" });
    return fail(issues);
  }

  // ── header ──
  const header = rows[0].map((cell, i) => normaliseHeader(cell, i === 0));
  const required = REQUIRED_COLUMNS[kind];
  const seen = new Map<string, number>();
  header.forEach((name, i) => {
    if (name === "") {
      // Trailing empty header cells come from a trailing separator; anything else is a nameless column.
      if (header.slice(i).some((h) => h !== "")) issues.add({ row: 1, message: `column ${i + 1} has no name` });
      return;
    }
    if (seen.has(name)) issues.add({ row: 1, column: name, message: `column "${name}" appears more than once` });
    seen.set(name, i);
    if (kind !== "glove" && !required.includes(name)) {
      issues.add({
        row: 1,
        column: name,
        message: `unexpected column "${name}"; a ${kind} trace has columns ${required.join(", ")}`,
      });
    }
  });
  for (const name of required) {
    if (!seen.has(name))
      issues.add({
        row: 1,
        column: name,
        message: `missing column "${name}"; a ${kind} trace has columns ${describeColumns(kind)}`,
      });
  }
  const jointColumns = kind === "glove" ? header.filter((h) => h !== "" && h !== "t") : [];
  if (kind === "glove" && jointColumns.length === 0) {
    issues.add({ row: 1, message: "a glove trace needs at least one joint-angle column after t" });
  }
  if (issues.count > 0) return fail(issues);
  const width = header.reduce((w, h, i) => (h !== "" ? i + 1 : w), 0);

  // ── row cap before reading any cell ──
  const dataRows: { rowNumber: number; cells: string[] }[] = [];
  for (let r = 1; r < rows.length; r++) {
    const cells = Array.isArray(rows[r]) ? rows[r] : [];
    if (cells.every((c) => String(c ?? "").trim() === "")) continue; // blank lines, e.g. the file's last newline
    dataRows.push({ rowNumber: r + 1, cells });
    if (dataRows.length > maxRows) {
      issues.add({
        message: `the trace has more than ${maxRows} data rows, the most accepted; split or downsample the recording`,
      });
      return fail(issues);
    }
  }

  // ── cells ──
  const allowBlank = kind === "timing";
  const columns = new Map<string, { values: number[]; rows: number[] }>();
  for (const name of header) if (name !== "") columns.set(name, { values: [], rows: [] });
  for (const { rowNumber, cells } of dataRows) {
    const extra = cells.slice(width).some((c) => String(c ?? "").trim() !== "");
    // A timing row may stop early when its last cells are blank; other kinds need every cell.
    if ((cells.length < width && !allowBlank) || extra) {
      issues.add({ row: rowNumber, message: `row has ${countFilled(cells)} cells; the header names ${width} columns` });
      continue;
    }
    header.forEach((name, i) => {
      if (name === "") return;
      const raw = String(cells[i] ?? "").trim();
      if (raw === "") {
        if (!allowBlank) issues.add({ row: rowNumber, column: name, message: "empty cell; a number is needed" });
        return;
      }
      if (!NUMBER_PATTERN.test(raw)) {
        const hint = /^[+-]?\d+,\d+$/.test(raw) ? " (use a decimal point, not a comma)" : "";
        issues.add({ row: rowNumber, column: name, message: `"${raw}" is not a number${hint}` });
        return;
      }
      const value = Number(raw);
      if (!(Math.abs(value) <= MAX_ABS_VALUE)) {
        issues.add({ row: rowNumber, column: name, message: `"${raw}" is outside the accepted range (±1e12)` });
        return;
      }
      const column = columns.get(name)!;
      column.values.push(value);
      column.rows.push(rowNumber);
    });
  }
  if (issues.count > 0) return fail(issues);

  // ── kinds without a clock ──
  if (kind === "timing") {
    const cues = columns.get("cue_ms")!;
    const onsets = columns.get("onset_ms")!;
    checkIncreasing(cues, "cue_ms", "cue", issues);
    checkIncreasing(onsets, "onset_ms", "onset", issues);
    if (cues.values.length < Math.max(minRows, 2)) {
      issues.add({
        column: "cue_ms",
        message: `the trace has ${cues.values.length} cues; at least ${Math.max(minRows, 2)} are needed`,
      });
    }
    if (onsets.values.length < 2) {
      issues.add({
        column: "onset_ms",
        message: `the trace has ${onsets.values.length} response onsets; at least 2 are needed`,
      });
    }
    if (issues.count > 0) return fail(issues);
    return { ok: true, kind: "timing", data: { cueMs: cues.values, onsetMs: onsets.values } } as ParsedTrace<K>;
  }
  if (kind === "force") {
    const n = dataRows.length;
    if (n < minRows) issues.add({ message: `the trace has ${n} trials; at least ${minRows} are needed` });
    if (issues.count > 0) return fail(issues);
    return {
      ok: true,
      kind: "force",
      data: { target: columns.get("target")!.values, produced: columns.get("produced")!.values },
    } as ParsedTrace<K>;
  }

  // ── time series: sway, tracking, glove ──
  const t = columns.get("t")!;
  const n = t.values.length;
  if (n < Math.max(minRows, 2)) {
    issues.add({ message: `the recording has ${n} rows; at least ${Math.max(minRows, 2)} are needed` });
    return fail(issues);
  }
  checkIncreasing(t, "t", "time", issues);
  if (issues.count > 0) return fail(issues);
  const duration = t.values[n - 1] - t.values[0];
  if (duration < minDuration) {
    issues.add({
      column: "t",
      message: `the ${kind} recording lasts ${round(duration)} s; at least ${minDuration} s is needed`,
    });
  }
  const steps = t.values.slice(1).map((v, i) => v - t.values[i]);
  const medianStep = median(steps);
  const estimatedRate = 1 / medianStep;
  steps.forEach((dt, i) => {
    if (Math.abs(dt - medianStep) > tolerance * medianStep) {
      issues.add({
        row: t.rows[i + 1],
        column: "t",
        message: `time step of ${round(dt)} s before this row differs from the typical ${round(medianStep)} s by more than ${round(tolerance * 100)} % (dropped or repeated samples?)`,
      });
    }
  });
  const declared = options.declaredSampleRateHz;
  if (declared !== undefined) {
    if (!(Number.isFinite(declared) && declared > 0)) {
      issues.add({ message: `declared sample rate ${String(declared)} Hz is not a positive number` });
    } else if (Math.abs(declared * medianStep - 1) > tolerance) {
      issues.add({
        column: "t",
        message: `declared sample rate ${declared} Hz disagrees with the timestamps (about ${round(estimatedRate)} Hz)`,
      });
    }
  }
  if (issues.count > 0) return fail(issues);
  const sampleRateHz = declared ?? estimatedRate;
  if (kind === "sway" && sampleRateHz < SWAY_PROCESSING.minRecordedRateHz) {
    issues.add({
      column: "t",
      message: `the sway recording is sampled at about ${round(sampleRateHz)} Hz; at least ${SWAY_PROCESSING.minRecordedRateHz} Hz is needed for the ${SWAY_PROCESSING.cutoffHz} Hz low-pass`,
    });
    return fail(issues);
  }

  if (kind === "sway") {
    return {
      ok: true,
      kind,
      sampleRateHz,
      data: { t: t.values, x: columns.get("x")!.values, y: columns.get("y")!.values },
    } as ParsedTrace<K>;
  }
  if (kind === "tracking") {
    return {
      ok: true,
      kind,
      sampleRateHz,
      data: { t: t.values, target: columns.get("target")!.values, cursor: columns.get("cursor")!.values },
    } as ParsedTrace<K>;
  }
  const jointValues = jointColumns.map((name) => columns.get(name)!.values);
  const samples = t.values.map((_, r) => jointValues.map((col) => col[r]));
  return {
    ok: true,
    kind: "glove",
    sampleRateHz,
    data: { t: t.values, joints: jointColumns, samples },
  } as ParsedTrace<K>;
}

export interface ComputeTraceOptions {
  /** Variance share for hand.componentsToThreshold (default 0.90). */
  handThreshold?: number;
}

/**
 * The baseline measures of a parsed trace as a flat record with stable keys (the keys of
 * MEASURE_DIRECTIONS in features.ts). Throws RangeError when a measure is undefined for the data.
 */
export function computeTrace(
  kind: TraceKind,
  parsed: ParsedTrace,
  options: ComputeTraceOptions = {},
): Record<string, number> {
  return analyseTrace(kind, parsed, options).measures;
}

/**
 * computeTrace's measures with the processing that preceded them: sway traces go through the common
 * processing (processSwayTrace: low-pass, resampling, minimum duration) first; other kinds have none (null).
 */
export function analyseTrace(
  kind: TraceKind,
  parsed: ParsedTrace,
  options: ComputeTraceOptions = {},
): { measures: Record<string, number>; processing: SwayProcessing | null } {
  if (parsed?.ok !== true) throw new RangeError("computeTrace needs a successfully parsed trace");
  if (parsed.kind !== kind) throw new RangeError(`trace was parsed as "${parsed.kind}", not "${kind}"`);
  if (parsed.kind === "sway") {
    const p = processSwayTrace(parsed.data.t, parsed.data.x, parsed.data.y, requireRate(parsed.sampleRateHz));
    const m = swayMetrics(p.x, p.y, p.sampleRateHz);
    return {
      measures: {
        "sway.pathLength": m.pathLength,
        "sway.meanVelocity": m.meanVelocity,
        "sway.rmsDistance": m.rmsDistance,
        "sway.ellipseArea95": m.ellipseArea95,
      },
      processing: p.processing,
    };
  }
  return { measures: measuresWithoutProcessing(parsed, options), processing: null };
}

function measuresWithoutProcessing(
  parsed: Exclude<ParsedTrace, { kind: "sway" }>,
  options: ComputeTraceOptions,
): Record<string, number> {
  switch (parsed.kind) {
    case "tracking": {
      const m = trackingError(parsed.data.target, parsed.data.cursor, requireRate(parsed.sampleRateHz));
      return {
        "tracking.rmse": m.rmse,
        "tracking.lagSeconds": m.lagSeconds,
        "tracking.lagMagnitudeSeconds": Math.abs(m.lagSeconds),
      };
    }
    case "glove": {
      const m = handDimensionality(parsed.data.samples, options.handThreshold);
      return {
        "hand.pc1Ratio": m.explainedVarianceRatio[0],
        "hand.componentsToThreshold": m.componentsToThreshold,
        "hand.participationRatio": m.participationRatio,
        "hand.joints": parsed.data.joints.length,
      };
    }
    case "timing": {
      const m = timingMetrics(parsed.data.cueMs, parsed.data.onsetMs);
      return {
        "timing.meanAbsoluteAsynchronyMs": m.meanAbsoluteAsynchronyMs,
        "timing.sdAsynchronyMs": m.sdAsynchronyMs,
        "timing.interOnsetCv": m.interOnsetCv,
        "timing.missed": m.missed,
        "timing.cues": parsed.data.cueMs.length,
      };
    }
    case "force": {
      const m = forceGrading(parsed.data.target, parsed.data.produced);
      return {
        "force.rmse": m.rmse,
        "force.slope": m.slope,
        "force.slopeDeviation": Math.abs(m.slope - 1),
        "force.rSquared": m.rSquared,
      };
    }
  }
}

function requireRate(rate: number | undefined): number {
  if (rate === undefined) throw new RangeError("parsed trace has no sample rate");
  return rate;
}

function normaliseHeader(cell: unknown, first: boolean): string {
  let s = String(cell ?? "");
  if (first) s = s.replace(/^\uFEFF/, ""); // byte-order mark left by spreadsheet exports
  return s.trim().toLowerCase();
}

function describeColumns(kind: TraceKind): string {
  return kind === "glove" ? "t followed by one column per joint angle" : REQUIRED_COLUMNS[kind].join(", ");
}

function checkIncreasing(
  column: { values: number[]; rows: number[] },
  name: string,
  what: string,
  issues: IssueList,
): void {
  for (let i = 1; i < column.values.length; i++) {
    if (!(column.values[i] > column.values[i - 1])) {
      issues.add({
        row: column.rows[i],
        column: name,
        message: `${what} ${column.values[i]} is not after the previous ${what} ${column.values[i - 1]} (row ${column.rows[i - 1]}); times must increase`,
      });
    }
  }
}

function countFilled(cells: string[]): number {
  let last = 0;
  cells.forEach((c, i) => {
    if (String(c ?? "").trim() !== "") last = i + 1;
  });
  return last;
}

function round(v: number): number {
  return Number(v.toPrecision(4));
}
