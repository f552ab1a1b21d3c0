// Several measures tested at once (docs/methods.md): with m tests at level α each, some "real changes" are
// chance. Holm (1979, Scand J Statist 6:65–70) controls the family-wise error rate (the chance of any false
// flag) and is uniformly more powerful than Bonferroni; Benjamini & Hochberg (1995, J R Statist Soc B
// 57:289–300) control the false discovery rate (the expected share of false flags among the flags).

function checkPValues(pValues: number[], level: number): void {
  if (!Array.isArray(pValues)) throw new RangeError("p-values must be a list");
  pValues.forEach((p, i) => {
    if (!(typeof p === "number" && p >= 0 && p <= 1))
      throw new RangeError(`p-value ${i + 1} must be in [0, 1], got ${p}`);
  });
  if (!(level > 0 && level < 1)) throw new RangeError(`level must be between 0 and 1, got ${level}`);
}

/** Benjamini–Hochberg step-up: reject the k smallest, k = max{i : p₍ᵢ₎ ≤ i·q/m}. Same order as the input. */
export function benjaminiHochberg(pValues: number[], q = 0.05): { rejected: boolean[]; adjusted: number[] } {
  checkPValues(pValues, q);
  const m = pValues.length;
  const order = pValues.map((_, i) => i).sort((a, b) => pValues[a] - pValues[b] || a - b);
  let cut = -1;
  order.forEach((idx, rank) => {
    if (pValues[idx] <= ((rank + 1) * q) / m) cut = rank;
  });
  const adjusted = new Array<number>(m);
  let running = 1;
  for (let rank = m - 1; rank >= 0; rank--) {
    running = Math.min(running, (pValues[order[rank]] * m) / (rank + 1));
    adjusted[order[rank]] = running;
  }
  const rejected = new Array<boolean>(m).fill(false);
  for (let rank = 0; rank <= cut; rank++) rejected[order[rank]] = true;
  return { rejected, adjusted };
}

/** Holm step-down: reject p₍ᵢ₎ while p₍ᵢ₎ ≤ α/(m − i + 1), stopping at the first that is not. */
export function holm(pValues: number[], alpha = 0.05): { rejected: boolean[]; adjusted: number[] } {
  checkPValues(pValues, alpha);
  const m = pValues.length;
  const order = pValues.map((_, i) => i).sort((a, b) => pValues[a] - pValues[b] || a - b);
  const rejected = new Array<boolean>(m).fill(false);
  const adjusted = new Array<number>(m);
  let running = 0;
  let stopped = false;
  order.forEach((idx, rank) => {
    running = Math.max(running, Math.min(1, pValues[idx] * (m - rank)));
    adjusted[idx] = running;
    if (!stopped && pValues[idx] <= alpha / (m - rank)) rejected[idx] = true;
    else stopped = true;
  });
  return { rejected, adjusted };
}
