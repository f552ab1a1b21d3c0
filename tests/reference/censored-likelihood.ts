// An independent route to the censored log-normal fit, for checks: the log likelihood written directly
// (normal density, and the normal CDF for the censored tail) and a general-purpose optimiser
// (Nelder–Mead) to maximise it. Shared by the reference and integration tests.
import { normalCdf } from "~/compute/student-t";

/** The same log likelihood, written independently: normal density and jStat's normal CDF for the tail. */
export function independentLogLikelihood(x: number[][], time: number[], event: boolean[], params: number[]): number {
  const p = params.length - 1;
  const sigma = Math.exp(params[p]);
  let total = 0;
  for (let i = 0; i < time.length; i++) {
    let mean = params[0];
    for (let j = 1; j < p; j++) mean += params[j] * x[i][j - 1];
    const z = (Math.log(time[i]) - mean) / sigma;
    total += event[i] ? -0.5 * z * z - 0.5 * Math.log(2 * Math.PI) - Math.log(sigma) : Math.log(normalCdf(-z)); // fine for the moderate z of these cohorts
  }
  return total;
}

/** Nelder–Mead (Lagarias et al. 1998 coefficients) maximising f, restarted until it stops moving. */
export function nelderMeadMaximise(f: (v: number[]) => number, start: number[]): number[] {
  const d = start.length;
  const g = (v: number[]) => -f(v);
  let best = start.slice();
  for (let restart = 0; restart < 12; restart++) {
    const scale = restart === 0 ? 0.2 : 1e-3 / 2 ** restart;
    let simplex = [best.slice()];
    for (let j = 0; j < d; j++) {
      const v = best.slice();
      v[j] += scale;
      simplex.push(v);
    }
    let values = simplex.map(g);
    for (let iter = 0; iter < 20000; iter++) {
      const order = values.map((_, i) => i).sort((a, b) => values[a] - values[b]);
      simplex = order.map((i) => simplex[i]);
      values = order.map((i) => values[i]);
      const spread = Math.max(
        ...simplex.slice(1).map((v) => Math.max(...v.map((c, j) => Math.abs(c - simplex[0][j])))),
      );
      if (spread < 1e-11) break;
      const centroid = Array.from({ length: d }, (_, j) => simplex.slice(0, d).reduce((s, v) => s + v[j], 0) / d);
      const along = (t: number) => centroid.map((c, j) => c + t * (simplex[d][j] - c));
      const reflected = along(-1);
      const fr = g(reflected);
      if (fr < values[0]) {
        const expanded = along(-2);
        const fe = g(expanded);
        if (fe < fr) [simplex[d], values[d]] = [expanded, fe];
        else [simplex[d], values[d]] = [reflected, fr];
      } else if (fr < values[d - 1]) {
        [simplex[d], values[d]] = [reflected, fr];
      } else {
        const contracted = fr < values[d] ? along(-0.5) : along(0.5);
        const fc = g(contracted);
        if (fc < Math.min(fr, values[d])) [simplex[d], values[d]] = [contracted, fc];
        else {
          for (let i = 1; i <= d; i++) {
            simplex[i] = simplex[i].map((c, j) => simplex[0][j] + 0.5 * (c - simplex[0][j]));
            values[i] = g(simplex[i]);
          }
        }
      }
    }
    const bestIndex = values.indexOf(Math.min(...values));
    const moved = Math.max(...simplex[bestIndex].map((c, j) => Math.abs(c - best[j])));
    best = simplex[bestIndex].slice();
    if (restart > 2 && moved < 1e-10) break;
  }
  return best;
}
