// Timing: synchronising responses (taps, presses) to a sequence of cues (beeps, lights).
import { median } from "simple-statistics";
import { assertFiniteSeries, assertMinimumLength, mean } from "./input-checks";

export interface TimingMetrics {
  /** Mean of |onset − cue| over matched cues (ms). */
  meanAbsoluteAsynchronyMs: number;
  /** Sample SD (n − 1) of onset − cue over matched cues (ms). */
  sdAsynchronyMs: number;
  /** SD / mean of the intervals between onsets matched to consecutive cues (unitless). */
  interOnsetCv: number;
  /** Cues with no onset inside the matching window. */
  missed: number;
}

/** One cue–onset pairing; exported so the assessor screen can show how each cue was scored. */
export interface CueMatch {
  cueIndex: number;
  cueMs: number;
  onsetMs: number | null;
  asynchronyMs: number | null;
}

/**
 * Pairs each cue with the nearest onset no further than half the median cue interval away; each
 * onset serves at most one cue. Pairs are taken closest-first over the whole trial, so a stray
 * onset between two cues goes to the cue it is nearer to. `cueTimesMs` must be strictly increasing.
 */
export function matchCuesToOnsets(
  cueTimesMs: number[],
  onsetTimesMs: number[],
): { matches: CueMatch[]; windowMs: number } {
  assertMinimumLength(cueTimesMs, 2, "cueTimesMs");
  assertFiniteSeries(cueTimesMs, "cueTimesMs");
  assertFiniteSeries(onsetTimesMs, "onsetTimesMs");
  for (let i = 1; i < cueTimesMs.length; i++) {
    if (!(cueTimesMs[i] > cueTimesMs[i - 1])) {
      throw new RangeError(
        `cueTimesMs must be strictly increasing (cue ${i} at ${cueTimesMs[i]} ms follows ${cueTimesMs[i - 1]} ms)`,
      );
    }
  }
  const onsets = [...onsetTimesMs].sort((p, q) => p - q);
  const intervals = cueTimesMs.slice(1).map((c, i) => c - cueTimesMs[i]);
  const medianInterval = median(intervals);
  const windowMs = medianInterval / 2;

  const candidates: { cue: number; onset: number; distance: number }[] = [];
  for (let c = 0; c < cueTimesMs.length; c++) {
    const cue = cueTimesMs[c];
    let lo = lowerBound(onsets, cue - windowMs);
    for (; lo < onsets.length && onsets[lo] <= cue + windowMs; lo++) {
      candidates.push({ cue: c, onset: lo, distance: Math.abs(onsets[lo] - cue) });
    }
  }
  candidates.sort((p, q) => p.distance - q.distance || p.cue - q.cue || p.onset - q.onset);

  const onsetForCue = new Array<number>(cueTimesMs.length).fill(-1);
  const onsetUsed = new Uint8Array(onsets.length);
  for (const { cue, onset } of candidates) {
    if (onsetForCue[cue] !== -1 || onsetUsed[onset]) continue;
    onsetForCue[cue] = onset;
    onsetUsed[onset] = 1;
  }
  const matches = cueTimesMs.map((cueMs, cueIndex): CueMatch => {
    const o = onsetForCue[cueIndex];
    return o === -1
      ? { cueIndex, cueMs, onsetMs: null, asynchronyMs: null }
      : { cueIndex, cueMs, onsetMs: onsets[o], asynchronyMs: onsets[o] - cueMs };
  });
  return { matches, windowMs };
}

export function timingMetrics(cueTimesMs: number[], onsetTimesMs: number[]): TimingMetrics {
  const { matches } = matchCuesToOnsets(cueTimesMs, onsetTimesMs);
  const asynchronies = matches.filter((m) => m.asynchronyMs !== null).map((m) => m.asynchronyMs as number);
  if (asynchronies.length < 2) {
    throw new RangeError(
      `only ${asynchronies.length} of ${cueTimesMs.length} cues had a response in the matching window; at least 2 are needed`,
    );
  }
  // Intervals only between onsets answering consecutive cues: a missed cue would otherwise count a
  // double-length interval as irregular tapping.
  const interOnset: number[] = [];
  for (let i = 1; i < matches.length; i++) {
    const prev = matches[i - 1].onsetMs;
    const curr = matches[i].onsetMs;
    if (prev !== null && curr !== null) interOnset.push(curr - prev);
  }
  if (interOnset.length < 2) {
    throw new RangeError("fewer than 2 intervals between responses to consecutive cues; inter-onset CV is undefined");
  }
  const interOnsetMean = mean(interOnset);
  if (!(interOnsetMean > 0))
    throw new RangeError("mean inter-onset interval is not positive; inter-onset CV is undefined");

  return {
    meanAbsoluteAsynchronyMs: mean(asynchronies.map(Math.abs)),
    sdAsynchronyMs: sampleSd(asynchronies),
    interOnsetCv: sampleSd(interOnset) / interOnsetMean,
    missed: matches.length - asynchronies.length,
  };
}

function sampleSd(values: number[]): number {
  const m = mean(values);
  let ss = 0;
  for (const v of values) ss += (v - m) ** 2;
  return Math.sqrt(ss / (values.length - 1));
}

/** First index whose value is ≥ x in an ascending array. */
function lowerBound(sorted: number[], x: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
