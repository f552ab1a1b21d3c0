// Complementary suppression for a flat two-way table with margins, as a graph problem.
//
// Read the (m+1) × (n+1) grid (cells plus totals) as a bipartite graph: one node per grid row, one per
// grid column, one edge per number. After flipping the sign of the totals every line of the grid sums
// to zero, so the hidden numbers can move together exactly along cycles of hidden edges (alternating
// +1/−1). A hidden number that lies on no such cycle — a bridge — is pinned by what is published.
// Every hidden number must at least lie on such a cycle, so closing a cycle through each bridge is a
// cheap first pattern. It is not enough for the informed reader (hidden ≥ 1: a cycle through two 1s
// of opposite sign cannot move; small counts must reach the threshold), so the LP audit and repair in
// protection-lp.ts always follow. The cheapest cycle is a shortest path between its two ends with
// already-hidden edges free (the "network flow" view of two-way cell suppression; Kelly, Golden &
// Assad 1992 and Castro 2002 — from memory).

import type { TableSystem } from "./table-system";

/** What hiding one more number costs: its count; totals also cost the grand total, so cells come first. */
export function suppressionCost(system: TableSystem, entry: number, grandTotal: number): number {
  const { kind, value } = system.entries[entry];
  return kind === "cell" ? value : value + grandTotal;
}

/** Entries (edge ids) that are bridges of the hidden-edge graph, in ascending order. */
export function bridges(m: number, n: number, suppressed: boolean[]): number[] {
  const width = n + 1;
  const nodeCount = m + 1 + n + 1;
  const adjacency: { to: number; edge: number }[][] = Array.from({ length: nodeCount }, () => []);
  suppressed.forEach((hidden, e) => {
    if (!hidden) return;
    const i = Math.floor(e / width);
    const j = e % width;
    adjacency[i].push({ to: m + 1 + j, edge: e });
    adjacency[m + 1 + j].push({ to: i, edge: e });
  });
  const order = new Array<number>(nodeCount).fill(-1);
  const low = new Array<number>(nodeCount).fill(0);
  const found: number[] = [];
  let clock = 0;
  // Tarjan's bridge test; the graph has at most a few dozen nodes, so recursion depth is small.
  const visit = (node: number, viaEdge: number) => {
    order[node] = low[node] = clock++;
    for (const { to, edge } of adjacency[node]) {
      if (edge === viaEdge) continue;
      if (order[to] < 0) {
        visit(to, edge);
        low[node] = Math.min(low[node], low[to]);
        if (low[to] > order[node]) found.push(edge);
      } else low[node] = Math.min(low[node], order[to]);
    }
  };
  for (let v = 0; v < nodeCount; v++) if (order[v] < 0) visit(v, -1);
  return found.sort((a, b) => a - b);
}

/**
 * Cheapest set of still-published entries that closes a cycle through `bridge`. Zero counts are never
 * used: a hidden zero could not move down, so it would not give the ±1 freedom promised above.
 */
export function cheapestCycle(
  system: TableSystem,
  m: number,
  n: number,
  suppressed: boolean[],
  bridge: number,
  grandTotal: number,
): number[] {
  const width = n + 1;
  const nodeCount = m + 1 + n + 1;
  const start = Math.floor(bridge / width);
  const goal = m + 1 + (bridge % width);
  const distance = new Array<number>(nodeCount).fill(Infinity);
  const viaEdge = new Array<number>(nodeCount).fill(-1);
  const viaNode = new Array<number>(nodeCount).fill(-1);
  const done = new Array<boolean>(nodeCount).fill(false);
  distance[start] = 0;
  for (;;) {
    let node = -1;
    for (let v = 0; v < nodeCount; v++)
      if (!done[v] && distance[v] < Infinity && (node < 0 || distance[v] < distance[node])) node = v;
    if (node < 0 || node === goal) break;
    done[node] = true;
    const isRow = node <= m;
    const neighbours = isRow ? n + 1 : m + 1;
    for (let k = 0; k < neighbours; k++) {
      const edge = isRow ? node * width + k : k * width + (node - m - 1);
      const other = isRow ? m + 1 + k : k;
      if (edge === bridge || done[other]) continue;
      let step: number;
      if (suppressed[edge]) step = 0;
      else if (system.entries[edge].value > 0) step = suppressionCost(system, edge, grandTotal);
      else continue;
      if (distance[node] + step < distance[other]) {
        distance[other] = distance[node] + step;
        viaEdge[other] = edge;
        viaNode[other] = node;
      }
    }
  }
  if (distance[goal] === Infinity) return [];
  const added: number[] = [];
  for (let v = goal; v !== start; v = viaNode[v]) if (!suppressed[viaEdge[v]]) added.push(viaEdge[v]);
  return added.sort((a, b) => a - b);
}

/** Closes cycles through bridges, first bridge first, until the hidden-edge graph has none. */
export function protectByCycles(system: TableSystem, m: number, n: number, primary: boolean[]): boolean[] {
  const suppressed = [...primary];
  const grandTotal = system.entries[m * (n + 1) + n].value;
  for (;;) {
    const open = bridges(m, n, suppressed);
    if (open.length === 0) return suppressed;
    const added = cheapestCycle(system, m, n, suppressed, open[0], grandTotal);
    if (added.length === 0) return suppressed; // cannot happen for positive counts; the LP audit decides
    for (const e of added) suppressed[e] = true;
  }
}
