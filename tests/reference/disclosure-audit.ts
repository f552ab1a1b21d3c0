// Independent attacker audit for the disclosure tests, solved with HiGHS (npm `highs`, reference only).
// It reads ONLY what is published (nulls are unknown), writes every additivity relation — redundant
// ones included, which HiGHS tolerates — as a CPLEX LP-format model, and asks for the min and max of
// each hidden number over all tables that agree (Hundepool et al. 2012, Statistical Disclosure Control,
// Wiley, ch. 7: the "attacker problem" — from memory). The reader is the informed one: they know zeros
// are always shown, so every hidden number is at least 1 (HIDDEN_AT_LEAST). It shares no code with
// app/compute/disclosure*, so agreement with the product's javascript-lp-solver audit is a real check.

import loadHighs from "highs";
import { mulberry32 } from "../../app/compute/seeded-random";

/** What the informed reader knows of every hidden number: zeros are shown, so it is ≥ 1. */
export const HIDDEN_AT_LEAST = 1;

type Highs = Awaited<ReturnType<typeof loadHighs>>;
let highsPromise: Promise<Highs> | null = null;
export const highs = () => (highsPromise ??= loadHighs());

export interface PublishedTable {
  cells: (number | null)[][];
  rowTotals: (number | null)[];
  columnTotals: (number | null)[];
  grandTotal: number | null;
}

/** A named published quantity: its value, or null when hidden. */
type Quantity = { name: string; shown: number | null };
/** Σ coefficient · quantity = 0. */
type Relation = { name: string; coefficient: number }[];

export interface HiddenBound {
  name: string;
  min: number;
  max: number;
}

function lpModel(
  sense: "Maximize" | "Minimize",
  target: string,
  quantities: Map<string, Quantity>,
  relations: Relation[],
) {
  const lines: string[] = [sense, ` obj: ${target}`, "Subject To"];
  relations.forEach((relation, r) => {
    let constant = 0;
    const terms: string[] = [];
    for (const { name, coefficient } of relation) {
      const q = quantities.get(name)!;
      if (q.shown === null) terms.push(`${coefficient < 0 ? "-" : "+"} ${Math.abs(coefficient)} ${name}`);
      else constant += coefficient * q.shown;
    }
    if (terms.length === 0) {
      if (constant !== 0) throw new Error(`published relation ${r} does not add up`);
      return;
    }
    lines.push(` e${r}: ${terms.join(" ")} = ${-constant}`);
  });
  lines.push("Bounds");
  for (const q of quantities.values()) if (q.shown === null) lines.push(` ${q.name} >= ${HIDDEN_AT_LEAST}`);
  lines.push("End");
  return lines.join("\n");
}

async function boundsOf(quantities: Quantity[], relations: Relation[]): Promise<HiddenBound[]> {
  const solver = await highs();
  const byName = new Map(quantities.map((q) => [q.name, q]));
  const out: HiddenBound[] = [];
  for (const q of quantities) {
    if (q.shown !== null) continue;
    const solve = (sense: "Maximize" | "Minimize") => {
      const result = solver.solve(lpModel(sense, q.name, byName, relations), { output_flag: false });
      if (result.Status === "Unbounded") return sense === "Maximize" ? Infinity : -Infinity;
      if (result.Status !== "Optimal") throw new Error(`HiGHS status ${result.Status} for ${q.name}`);
      return (result.Columns as Record<string, { Primal: number }>)[q.name].Primal;
    };
    out.push({ name: q.name, min: solve("Minimize"), max: solve("Maximize") });
  }
  return out;
}

const cellName = (prefix: string, i: number, j: number) => `${prefix}c_${i}_${j}`;
const rowTotalName = (prefix: string, i: number) => `${prefix}r_${i}`;
const columnTotalName = (j: number) => `k_${j}`;
const GRAND = "g";

function tableQuantities(prefix: string, t: PublishedTable, withMargins: boolean): Quantity[] {
  const qs: Quantity[] = [];
  t.cells.forEach((line, i) => {
    line.forEach((v, j) => {
      qs.push({ name: cellName(prefix, i, j), shown: v });
    });
  });
  t.rowTotals.forEach((v, i) => {
    qs.push({ name: rowTotalName(prefix, i), shown: v });
  });
  if (withMargins) {
    t.columnTotals.forEach((v, j) => {
      qs.push({ name: columnTotalName(j), shown: v });
    });
    qs.push({ name: GRAND, shown: t.grandTotal });
  }
  return qs;
}

/** Row sums, column sums and both grand-total sums of one table (column totals shared by name). */
function tableRelations(prefix: string, m: number, n: number): Relation[] {
  const rel: Relation[] = [];
  for (let i = 0; i < m; i++) {
    rel.push([
      ...Array.from({ length: n }, (_, j) => ({ name: cellName(prefix, i, j), coefficient: 1 })),
      { name: rowTotalName(prefix, i), coefficient: -1 },
    ]);
  }
  for (let j = 0; j < n; j++) {
    rel.push([
      ...Array.from({ length: m }, (_, i) => ({ name: cellName(prefix, i, j), coefficient: 1 })),
      { name: columnTotalName(j), coefficient: -1 },
    ]);
  }
  rel.push([
    ...Array.from({ length: m }, (_, i) => ({ name: rowTotalName(prefix, i), coefficient: 1 })),
    { name: GRAND, coefficient: -1 },
  ]);
  rel.push([
    ...Array.from({ length: n }, (_, j) => ({ name: columnTotalName(j), coefficient: 1 })),
    { name: GRAND, coefficient: -1 },
  ]);
  return rel;
}

/** HiGHS bounds for every hidden number of one published two-way table with margins. */
export async function highsFlatBounds(t: PublishedTable): Promise<HiddenBound[]> {
  const m = t.cells.length;
  const n = t.columnTotals.length;
  return boundsOf(tableQuantities("", t, true), tableRelations("", m, n));
}

/**
 * HiGHS bounds for a department table and a site table published together: each site cell and site
 * total is the sum of its departments; both tables share column totals and the grand total (their
 * published values must agree, which is asserted).
 */
export async function highsLinkedBounds(
  detail: PublishedTable,
  parent: PublishedTable,
  parentOfRow: number[],
): Promise<HiddenBound[]> {
  const n = detail.columnTotals.length;
  const same = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b);
  if (!same(detail.columnTotals, parent.columnTotals) || detail.grandTotal !== parent.grandTotal) {
    throw new Error("linked tables publish different column totals");
  }
  const quantities = [...tableQuantities("d", detail, true), ...tableQuantities("p", parent, false)];
  const relations = [...tableRelations("d", detail.cells.length, n), ...tableRelations("p", parent.cells.length, n)];
  parent.cells.forEach((_, p) => {
    const members = parentOfRow.map((q, d) => (q === p ? d : -1)).filter((d) => d >= 0);
    for (let j = 0; j < n; j++) {
      relations.push([
        ...members.map((d) => ({ name: cellName("d", d, j), coefficient: 1 })),
        { name: cellName("p", p, j), coefficient: -1 },
      ]);
    }
    relations.push([
      ...members.map((d) => ({ name: rowTotalName("d", d), coefficient: 1 })),
      { name: rowTotalName("p", p), coefficient: -1 },
    ]);
  });
  return boundsOf(quantities, relations);
}

/** Names the helpers use, so tests can map product audit rows onto HiGHS rows. */
export const auditNames = { cellName, rowTotalName, columnTotalName, GRAND };

export const seeded = mulberry32;

/** Counts with many small cells: ~20 % zeros, ~40 % 1–4, ~40 % 5–24. */
export function smallCountTable(random: () => number, m: number, n: number): number[][] {
  return Array.from({ length: m }, () =>
    Array.from({ length: n }, () => {
      const u = random();
      if (u < 0.2) return 0;
      if (u < 0.6) return 1 + Math.floor(random() * 4);
      return 5 + Math.floor(random() * 20);
    }),
  );
}

/**
 * The seeded random tables of the informed-attacker check: `count` tables of 2–8 rows × 2–6 columns
 * with zeros, many small counts and some large ones (smallCountTable).
 */
export function randomTables(seed: number, count: number): number[][][] {
  const random = mulberry32(seed);
  return Array.from({ length: count }, () => {
    const m = 2 + Math.floor(random() * 7);
    const n = 2 + Math.floor(random() * 5);
    return smallCountTable(random, m, n);
  });
}

/**
 * HiGHS bounds for two publications of the same table at two times (prefixes "b" before, "a" after),
 * when the reader knows Σ |after − before| over the cells is at most `budget`. Returns the bounds of
 * every hidden number of both tables and, per cell hidden in `after`, of its change ("dc_i_j").
 */
export async function highsTwoTimesBounds(
  before: PublishedTable,
  after: PublishedTable,
  budget: number,
): Promise<HiddenBound[]> {
  const solver = await highs();
  const m = before.cells.length;
  const n = before.columnTotals.length;
  const named = (prefix: string, t: PublishedTable): Quantity[] => [
    ...t.cells.flatMap((line, i) => line.map((v, j) => ({ name: `${prefix}c_${i}_${j}`, shown: v }))),
    ...t.rowTotals.map((v, i) => ({ name: `${prefix}r_${i}`, shown: v })),
    ...t.columnTotals.map((v, j) => ({ name: `${prefix}k_${j}`, shown: v })),
    { name: `${prefix}g`, shown: t.grandTotal },
  ];
  const quantities = [...named("b", before), ...named("a", after)];
  const byName = new Map(quantities.map((q) => [q.name, q]));
  // Each table's own sums, with its own margins.
  const relations: Relation[] = [];
  for (const p of ["b", "a"]) {
    for (let i = 0; i < m; i++)
      relations.push([
        ...Array.from({ length: n }, (_, j) => ({ name: `${p}c_${i}_${j}`, coefficient: 1 })),
        { name: `${p}r_${i}`, coefficient: -1 },
      ]);
    for (let j = 0; j < n; j++)
      relations.push([
        ...Array.from({ length: m }, (_, i) => ({ name: `${p}c_${i}_${j}`, coefficient: 1 })),
        { name: `${p}k_${j}`, coefficient: -1 },
      ]);
    relations.push([
      ...Array.from({ length: m }, (_, i) => ({ name: `${p}r_${i}`, coefficient: 1 })),
      { name: `${p}g`, coefficient: -1 },
    ]);
  }
  const term = (name: string, coefficient: number, constant: { value: number }) => {
    const q = byName.get(name)!;
    if (q.shown === null) return `${coefficient < 0 ? "-" : "+"} ${Math.abs(coefficient)} ${name}`;
    constant.value += coefficient * q.shown;
    return "";
  };
  const body: string[] = [];
  relations.forEach((relation, r) => {
    const constant = { value: 0 };
    const terms = relation.map((x) => term(x.name, x.coefficient, constant)).filter(Boolean);
    if (terms.length) body.push(` s${r}: ${terms.join(" ")} = ${-constant.value}`);
  });
  // after − before = up − down per cell; Σ up + down ≤ budget.
  const moves: string[] = [];
  for (let i = 0; i < m; i++)
    for (let j = 0; j < n; j++) {
      const constant = { value: 0 };
      const terms = [term(`ac_${i}_${j}`, 1, constant), term(`bc_${i}_${j}`, -1, constant)].filter(Boolean);
      body.push(` m_${i}_${j}: ${terms.join(" ")} - up_${i}_${j} + dn_${i}_${j} = ${-constant.value}`);
      moves.push(`up_${i}_${j}`, `dn_${i}_${j}`);
    }
  body.push(` budget: ${moves.join(" + ")} <= ${budget}`);
  const bounds = [
    "Bounds",
    ...quantities.filter((q) => q.shown === null).map((q) => ` ${q.name} >= ${HIDDEN_AT_LEAST}`),
  ];
  const solve = (
    sense: "Maximize" | "Minimize",
    objective: string,
    column: (c: Record<string, { Primal: number }>) => number,
  ) => {
    const model = [sense, ` obj: ${objective}`, "Subject To", ...body, ...bounds, "End"].join("\n");
    const result = solver.solve(model, { output_flag: false });
    if (result.Status === "Unbounded") return sense === "Maximize" ? Infinity : -Infinity;
    if (result.Status !== "Optimal") throw new Error(`HiGHS status ${result.Status} for ${objective}`);
    return column(result.Columns as Record<string, { Primal: number }>);
  };
  const out: HiddenBound[] = [];
  for (const q of quantities) {
    if (q.shown !== null) continue;
    const value = (c: Record<string, { Primal: number }>) => c[q.name].Primal;
    out.push({ name: q.name, min: solve("Minimize", q.name, value), max: solve("Maximize", q.name, value) });
  }
  for (let i = 0; i < m; i++)
    for (let j = 0; j < n; j++) {
      if (after.cells[i][j] !== null) continue;
      const change = (c: Record<string, { Primal: number }>) =>
        (c[`up_${i}_${j}`]?.Primal ?? 0) - (c[`dn_${i}_${j}`]?.Primal ?? 0);
      const objective = `up_${i}_${j} - dn_${i}_${j}`;
      out.push({
        name: `dc_${i}_${j}`,
        min: solve("Minimize", objective, change),
        max: solve("Maximize", objective, change),
      });
    }
  return out;
}
