// Progress curves (docs/methods.md): task score against cumulative practice hours.
// Exponential: score = asymptote − (asymptote − start) · exp(−rate · hours).
// Power law:   score = asymptote − (asymptote − start) · (1 + hours)^(−rate)  (one hour of prior practice).
// Both are fitted by Levenberg–Marquardt (nonlinear-least-squares.ts) and the one with the lower AICc is
// used (Heathcote, Brown & Mewhort 2000; Burnham & Anderson 2002). With fixStart = 0 the exponential is
// y = a(1 − e^(−c·x)), NIST StRD "Misra1a"; the power function y = b1·x^b2 underneath is NIST StRD "DanWood".
//
// Starting values come from the curves' separable structure: for a fixed rate (exponent) the model is linear
// in asymptote and start, so a coarse scan over the rate with a linear fit at each point gives a start near
// the global minimum (variable projection, Golub & Pereyra 1973).

import { Matrix, QrDecomposition } from "ml-matrix";
import { aicc, akaikeWeights, leastSquaresAic } from "./model-selection";
import { levenbergMarquardt } from "./nonlinear-least-squares";

export type CurveKind = "exponential" | "power";

export interface SaturatingExponentialOptions {
  fixStart?: number;
  initial?: { asymptote: number; start?: number; rate: number };
  maxIterations?: number; // default 500
}

/** A fitted progress curve of either kind. */
export interface CurveFit {
  kind: CurveKind;
  asymptote: number;
  start: number;
  rate: number;
  standardErrors: { asymptote: number; start?: number; rate: number };
  residualSS: number;
  converged: boolean;
  iterations: number;
  // --- extensions beyond the public contract (docs/methods.md) ---
  n: number;
  dfResidual: number;
  residualSD: number;
  /** Whether `start` was held fixed (then it has no standard error or covariance row). */
  startFixed: boolean;
  /** Names in the order of `covariance`: ["asymptote", "start", "rate"] or ["asymptote", "rate"]. */
  parameterNames: string[];
  /** Covariance of the estimates, (JᵀJ)⁻¹ · RSS/(n − p); NaN when n ≤ p. */
  covariance: number[][];
}

export type SaturatingExponentialFit = CurveFit & { kind: "exponential" };
export type PowerLawFit = CurveFit & { kind: "power" };

/** Curve parameters; `kind` absent means exponential (forecasts stored before the power law existed). */
export type CurveParameters = { kind?: CurveKind; asymptote: number; start: number; rate: number };

/** The curve's value at `hours` cumulative practice. */
export function curveScore(fit: CurveParameters, hours: number): number {
  const decay = fit.kind === "power" ? (1 + hours) ** -fit.rate : Math.exp(-fit.rate * hours);
  return fit.asymptote - (fit.asymptote - fit.start) * decay;
}

interface Model {
  /** Parameter vector θ → (asymptote, start, rate). */
  unpack(theta: number[]): { a: number; s: number; c: number };
  residuals(theta: number[], out: Float64Array): void;
  jacobian(theta: number[], J: Matrix): void;
}

function buildModel(x: number[], y: number[], fixedStart: number | undefined): Model {
  const n = x.length;
  const free = fixedStart === undefined;
  const unpack = (t: number[]) =>
    free ? { a: t[0], s: t[1], c: t[2] } : { a: t[0], s: fixedStart as number, c: t[1] };
  return {
    unpack,
    residuals(theta, out) {
      const { a, s, c } = unpack(theta);
      for (let i = 0; i < n; i++) out[i] = y[i] - (a - (a - s) * Math.exp(-c * x[i]));
    },
    jacobian(theta, J) {
      // Derivatives of the model value (not the residual).
      const { a, s, c } = unpack(theta);
      for (let i = 0; i < n; i++) {
        const e = Math.exp(-c * x[i]);
        J.set(i, 0, 1 - e);
        if (free) J.set(i, 1, e);
        J.set(i, free ? 2 : 1, (a - s) * x[i] * e);
      }
    },
  };
}

/** Linear least squares for (asymptote, start) at a fixed rate; returns RSS and the estimates. */
function profileAtRate(x: number[], y: number[], rate: number, fixedStart: number | undefined) {
  const n = x.length;
  if (fixedStart !== undefined) {
    // y − s₀ = A·u with u = 1 − e^(−c x), A = a − s₀.
    let uu = 0;
    let uy = 0;
    for (let i = 0; i < n; i++) {
      const u = 1 - Math.exp(-rate * x[i]);
      uu += u * u;
      uy += u * (y[i] - fixedStart);
    }
    if (!(uu > 0)) return null;
    const a = fixedStart + uy / uu;
    let rss = 0;
    for (let i = 0; i < n; i++) rss += (y[i] - (a - (a - fixedStart) * Math.exp(-rate * x[i]))) ** 2;
    return { a, s: fixedStart, rss };
  }
  // y = a·u + s·(1 − u): two-column least squares via QR.
  const A = new Matrix(n, 2);
  const b = new Matrix(n, 1);
  for (let i = 0; i < n; i++) {
    const e = Math.exp(-rate * x[i]);
    A.set(i, 0, 1 - e);
    A.set(i, 1, e);
    b.set(i, 0, y[i]);
  }
  const qr = new QrDecomposition(A);
  const R = qr.upperTriangularMatrix;
  if (!(Math.abs(R.get(1, 1)) > 1e-12 * Math.abs(R.get(0, 0)))) return null;
  const sol = qr.solve(b);
  const a = sol.get(0, 0);
  const s = sol.get(1, 0);
  let rss = 0;
  for (let i = 0; i < n; i++) rss += (y[i] - (a - (a - s) * Math.exp(-rate * x[i]))) ** 2;
  return { a, s, rss };
}

/** Automatic start values: scan rates 10⁻²…10² per span of hours, linear fit at each, keep the best. */
export function automaticStart(
  x: number[],
  y: number[],
  fixStart?: number,
): { asymptote: number; start: number; rate: number } {
  const span = Math.max(...x.map(Math.abs));
  const unit = span > 0 ? 1 / span : 1;
  let best: { a: number; s: number; c: number; rss: number } | null = null;
  const steps = 81;
  for (let k = 0; k < steps; k++) {
    const c = unit * 10 ** (-2 + (4 * k) / (steps - 1));
    const p = profileAtRate(x, y, c, fixStart);
    if (p && Number.isFinite(p.rss) && (!best || p.rss < best.rss)) best = { ...p, c };
  }
  if (!best) {
    // Degenerate data (e.g. all hours equal): a flat curve at the mean score.
    const mean = y.reduce((s, v) => s + v, 0) / y.length;
    return { asymptote: mean, start: fixStart ?? mean, rate: unit };
  }
  return { asymptote: best.a, start: best.s, rate: best.c };
}

/** Fit the saturating-exponential progress curve by Levenberg–Marquardt. */
export function fitSaturatingExponential(
  x: number[],
  y: number[],
  options?: {
    fixStart?: number;
    initial?: { asymptote: number; start?: number; rate: number };
    maxIterations?: number;
  },
): SaturatingExponentialFit {
  const n = x.length;
  checkSeries(x, y);
  const fixedStart = options?.fixStart;
  const free = fixedStart === undefined;
  const p = free ? 3 : 2;
  if (n < p) throw new RangeError(`need at least ${p} sessions to fit ${p} curve parameters, got ${n}`);

  const init = options?.initial ?? automaticStart(x, y, fixedStart);
  const startGuess = init.start ?? (free ? automaticStart(x, y).start : (fixedStart as number));
  const theta0 = free ? [init.asymptote, startGuess, init.rate] : [init.asymptote, init.rate];
  const model = buildModel(x, y, fixedStart);
  const solution = levenbergMarquardt(
    { n, p, residuals: model.residuals, jacobian: model.jacobian },
    theta0,
    options?.maxIterations ?? 500,
  );
  const { a, s, c } = model.unpack(solution.theta);
  const se = solution.covariance.map((row, j) => Math.sqrt(row[j]));
  return {
    kind: "exponential",
    asymptote: a,
    start: s,
    rate: c,
    standardErrors: free ? { asymptote: se[0], start: se[1], rate: se[2] } : { asymptote: se[0], rate: se[1] },
    residualSS: solution.residualSS,
    converged: solution.converged,
    iterations: solution.iterations,
    n,
    dfResidual: solution.dfResidual,
    residualSD: Math.sqrt(solution.dfResidual > 0 ? solution.residualSS / solution.dfResidual : NaN),
    startFixed: !free,
    parameterNames: free ? ["asymptote", "start", "rate"] : ["asymptote", "rate"],
    covariance: solution.covariance,
  };
}

function checkSeries(x: number[], y: number[]) {
  if (y.length !== x.length) throw new RangeError(`x has ${x.length} values but y has ${y.length}`);
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) throw new RangeError(`session ${i} has a non-finite value`);
  }
}

/**
 * Cumulative hours at which the curve reaches `threshold`:
 * t = ln((asymptote − start) / (asymptote − threshold)) / rate (exponential),
 * t = ((asymptote − start) / (asymptote − threshold))^(1/rate) − 1 (power law).
 * null when the curve never gets there (asymptote not above the threshold, or rate ≤ 0);
 * 0 when it already starts at or above the threshold.
 */
export function timeToReach(fit: CurveParameters, threshold: number): number | null {
  const { asymptote, start, rate } = fit;
  if (!(rate > 0) || !(asymptote > threshold)) return null;
  if (start >= threshold) return 0;
  const logRatio = Math.log((asymptote - start) / (asymptote - threshold));
  return fit.kind === "power" ? Math.expm1(logRatio / rate) : logRatio / rate;
}

/**
 * Time to reach with its delta-method standard deviation, Var(t) ≈ ∇tᵀ Σ ∇t (Casella & Berger 2002, §5.5.4),
 * using the fit's parameter covariance. Gradient of t = ln((a − s)/(a − T))/c:
 * ∂t/∂a = (1/(a − s) − 1/(a − T))/c, ∂t/∂s = −1/((a − s)c), ∂t/∂c = −t/c.
 */
export function timeToReachWithUncertainty(
  fit: SaturatingExponentialFit,
  threshold: number,
): { hours: number; sd: number } | null {
  const hours = timeToReach(fit, threshold);
  if (hours === null) return null;
  if (hours === 0) return { hours: 0, sd: 0 };
  const { asymptote: a, start: s, rate: c } = fit;
  const gradA = (1 / (a - s) - 1 / (a - threshold)) / c;
  const gradS = -1 / ((a - s) * c);
  const gradC = -hours / c;
  const grad = fit.startFixed ? [gradA, gradC] : [gradA, gradS, gradC];
  let variance = 0;
  for (let i = 0; i < grad.length; i++) {
    for (let j = 0; j < grad.length; j++) variance += grad[i] * fit.covariance[i][j] * grad[j];
  }
  return { hours, sd: Math.sqrt(variance) };
}

/**
 * Plateau below criterion: the curve's asymptote is confidently under the threshold, taken as
 * asymptote + z·SE(asymptote) < threshold with z = 2 by default (about a one-sided 97.7 % bound under
 * normality). Such a trainee is flagged for review; the curve is never extrapolated past its plateau.
 */
export function plateausBelowCriterion(fit: CurveFit, threshold: number, z = 2): boolean {
  const se = fit.standardErrors.asymptote;
  if (!Number.isFinite(se)) return fit.asymptote < threshold;
  return fit.asymptote + z * se < threshold;
}

// ---------------------------------------------------------------------------------------------------------
// Power law

export interface PowerFunctionFit {
  /** y = level + scale · (x + offset)^exponent */
  level: number;
  scale: number;
  exponent: number;
  offset: number;
  levelFixed: boolean;
  /** Names in the order of `covariance`: ["level", "scale", "exponent"] or ["scale", "exponent"]. */
  parameterNames: string[];
  standardErrors: { level?: number; scale: number; exponent: number };
  covariance: number[][];
  residualSS: number;
  residualSD: number;
  dfResidual: number;
  converged: boolean;
  iterations: number;
  n: number;
}

/**
 * Least-squares fit of the power function y = level + scale · (x + offset)^exponent by Levenberg–Marquardt.
 * `fixLevel` holds the level (with fixLevel 0 and offset 0 this is y = b1·x^b2, NIST StRD "DanWood").
 * Every x + offset must be positive.
 */
export function fitPowerFunction(
  x: number[],
  y: number[],
  options?: {
    offset?: number; // default 0
    fixLevel?: number;
    initial?: { level?: number; scale: number; exponent: number };
    maxIterations?: number;
  },
): PowerFunctionFit {
  const n = x.length;
  checkSeries(x, y);
  const offset = options?.offset ?? 0;
  const fixedLevel = options?.fixLevel;
  const free = fixedLevel === undefined;
  const p = free ? 3 : 2;
  if (n < p) throw new RangeError(`need at least ${p} points to fit ${p} power-law parameters, got ${n}`);
  const logBase = x.map((xi, i) => {
    const base = xi + offset;
    if (!(base > 0))
      throw new RangeError(`x + offset must be positive for a power law: point ${i} has x = ${xi}, offset ${offset}`);
    return Math.log(base);
  });
  const unpack = (t: number[]) =>
    free ? { level: t[0], scale: t[1], exponent: t[2] } : { level: fixedLevel as number, scale: t[0], exponent: t[1] };
  const init = options?.initial ?? powerStart(logBase, y, fixedLevel);
  const theta0 = free
    ? [init.level ?? powerStart(logBase, y).level, init.scale, init.exponent]
    : [init.scale, init.exponent];
  const solution = levenbergMarquardt(
    {
      n,
      p,
      residuals(theta, out) {
        const { level, scale, exponent } = unpack(theta);
        for (let i = 0; i < n; i++) out[i] = y[i] - (level + scale * Math.exp(exponent * logBase[i]));
      },
      jacobian(theta, J) {
        const { scale, exponent } = unpack(theta);
        for (let i = 0; i < n; i++) {
          const u = Math.exp(exponent * logBase[i]);
          if (free) J.set(i, 0, 1);
          J.set(i, free ? 1 : 0, u);
          J.set(i, free ? 2 : 1, scale * u * logBase[i]);
        }
      },
    },
    theta0,
    options?.maxIterations ?? 500,
  );
  const { level, scale, exponent } = unpack(solution.theta);
  const se = solution.covariance.map((row, j) => Math.sqrt(row[j]));
  return {
    level,
    scale,
    exponent,
    offset,
    levelFixed: !free,
    parameterNames: free ? ["level", "scale", "exponent"] : ["scale", "exponent"],
    standardErrors: free ? { level: se[0], scale: se[1], exponent: se[2] } : { scale: se[0], exponent: se[1] },
    covariance: solution.covariance,
    residualSS: solution.residualSS,
    residualSD: Math.sqrt(solution.dfResidual > 0 ? solution.residualSS / solution.dfResidual : NaN),
    dfResidual: solution.dfResidual,
    converged: solution.converged,
    iterations: solution.iterations,
    n,
  };
}

/** Start values: scan exponents −10…10, linear least squares for (level, scale) at each, keep the best. */
function powerStart(logBase: number[], y: number[], fixedLevel?: number) {
  const n = y.length;
  let best: { level: number; scale: number; exponent: number; rss: number } | null = null;
  for (let k = 0; k <= 200; k++) {
    const exponent = -10 + k * 0.1;
    if (Math.abs(exponent) < 1e-9) continue; // u ≡ 1 is the level itself
    const u = logBase.map((l) => Math.exp(exponent * l));
    let level: number;
    let scale: number;
    if (fixedLevel !== undefined) {
      let uu = 0;
      let uy = 0;
      for (let i = 0; i < n; i++) {
        uu += u[i] * u[i];
        uy += u[i] * (y[i] - fixedLevel);
      }
      if (!(uu > 0) || !Number.isFinite(uu)) continue;
      level = fixedLevel;
      scale = uy / uu;
    } else {
      const uMean = u.reduce((s, v) => s + v, 0) / n;
      const yMean = y.reduce((s, v) => s + v, 0) / n;
      let suu = 0;
      let suy = 0;
      for (let i = 0; i < n; i++) {
        suu += (u[i] - uMean) ** 2;
        suy += (u[i] - uMean) * (y[i] - yMean);
      }
      if (!(suu > 1e-300) || !Number.isFinite(suu)) continue;
      scale = suy / suu;
      level = yMean - scale * uMean;
    }
    let rss = 0;
    for (let i = 0; i < n; i++) rss += (y[i] - level - scale * u[i]) ** 2;
    if (Number.isFinite(rss) && (!best || rss < best.rss)) best = { level, scale, exponent, rss };
  }
  if (!best) {
    const mean = y.reduce((s, v) => s + v, 0) / n;
    return { level: fixedLevel ?? mean, scale: 0, exponent: -1 };
  }
  return best;
}

/**
 * The power-law progress curve score = asymptote − (asymptote − start)·(1 + hours)^(−rate): the power function
 * with offset 1, level = asymptote, scale = start − asymptote, exponent = −rate. The covariance is carried over
 * through that linear map.
 */
export function fitPowerLaw(x: number[], y: number[], options?: { maxIterations?: number }): PowerLawFit {
  for (let i = 0; i < x.length; i++) {
    if (x[i] < 0) throw new RangeError(`session ${i} has negative cumulative hours (${x[i]})`);
  }
  const f = fitPowerFunction(x, y, { offset: 1, maxIterations: options?.maxIterations });
  // (asymptote, start, rate) = T · (level, scale, exponent) with T = [[1,0,0],[1,1,0],[0,0,−1]].
  const T = [
    [1, 0, 0],
    [1, 1, 0],
    [0, 0, -1],
  ];
  const S = f.covariance;
  const covariance = T.map((ti) =>
    T.map((tj) => {
      let sum = 0;
      for (let a = 0; a < 3; a++) for (let b = 0; b < 3; b++) sum += ti[a] * S[a][b] * tj[b];
      return sum;
    }),
  );
  return {
    kind: "power",
    asymptote: f.level,
    start: f.level + f.scale,
    rate: -f.exponent,
    standardErrors: {
      asymptote: Math.sqrt(covariance[0][0]),
      start: Math.sqrt(covariance[1][1]),
      rate: Math.sqrt(covariance[2][2]),
    },
    residualSS: f.residualSS,
    converged: f.converged,
    iterations: f.iterations,
    n: f.n,
    dfResidual: f.dfResidual,
    residualSD: f.residualSD,
    startFixed: false,
    parameterNames: ["asymptote", "start", "rate"],
    covariance,
  };
}

// ---------------------------------------------------------------------------------------------------------
// Choosing the curve

export interface CurveCandidate {
  kind: CurveKind;
  converged: boolean;
  residualSS: number;
  /** AICc; null when the fit failed or n is too small for it (n ≤ K + 1). */
  aicc: number | null;
  /** Akaike weight among the candidates with an AICc (null without one). */
  weight: number | null;
}

export interface CurveChoice {
  fit: CurveFit;
  candidates: CurveCandidate[];
  /** Why this curve: "lower AICc", or why there was no comparison. */
  basis: string;
}

/**
 * Fit the exponential and the power-law curve and keep the one with the lower AICc (least-squares form,
 * K = curve parameters + 1 for the residual variance; Burnham & Anderson 2002, ch. 2). With too few
 * sessions for AICc (n ≤ K + 1), or when only one fit converges, the exponential is kept unless it alone
 * failed. Heathcote, Brown & Mewhort (2000) found the exponential fits individual learners better more
 * often, so it is the default on a tie.
 */
export function chooseProgressCurve(x: number[], y: number[]): CurveChoice {
  const exponential = fitSaturatingExponential(x, y);
  let power: PowerLawFit | null = null;
  try {
    power = fitPowerLaw(x, y);
  } catch {
    power = null;
  }
  const scored = [exponential, power].map((f, i) => {
    const kind: CurveKind = i === 0 ? "exponential" : "power";
    if (!f) return { kind, converged: false, residualSS: NaN, aicc: null as number | null, fit: null };
    const K = f.parameterNames.length + 1;
    // A learning curve rises towards its asymptote: a fit with a non-positive rate is not one.
    const usable = f.converged && Number.isFinite(f.residualSS) && f.rate > 0;
    const value = usable && f.n > K + 1 ? aicc(leastSquaresAic(f.residualSS, f.n, K), f.n, K) : null;
    return { kind, converged: f.converged, residualSS: f.residualSS, aicc: value, fit: f as CurveFit };
  });
  const withAicc = scored.filter((s) => s.aicc !== null);
  const weights = withAicc.length ? akaikeWeights(withAicc.map((s) => s.aicc as number)) : [];
  const candidates: CurveCandidate[] = scored.map((s) => {
    const at = withAicc.indexOf(s);
    return {
      kind: s.kind,
      converged: s.converged,
      residualSS: s.residualSS,
      aicc: s.aicc,
      weight: at >= 0 ? weights[at] : null,
    };
  });
  if (withAicc.length === 2) {
    const [e, p] = withAicc;
    return (p.aicc as number) < (e.aicc as number)
      ? { fit: p.fit as CurveFit, candidates, basis: "lower AICc" }
      : { fit: exponential, candidates, basis: "lower AICc" };
  }
  const isLearningCurve = (f: CurveFit | null) => Boolean(f?.converged && f.rate > 0);
  const K = exponential.parameterNames.length + 1;
  if (exponential.n <= K + 1) {
    return {
      fit: exponential,
      candidates,
      basis: `too few sessions to compare curves by AICc (needs more than ${K + 1})`,
    };
  }
  if (!isLearningCurve(exponential) && power && isLearningCurve(power)) {
    return { fit: power, candidates, basis: "the exponential fit did not converge to a rising curve" };
  }
  if (isLearningCurve(exponential)) {
    return { fit: exponential, candidates, basis: "the power-law fit did not converge to a rising curve" };
  }
  // Neither is a learning curve: the exponential is returned marked as not converged, so it is not used.
  return { fit: { ...exponential, converged: false }, candidates, basis: "neither curve converged to a rising curve" };
}
