import type { Knex } from "knex";
import type { Scope } from "~/auth/scope";
import { effectiveThreshold, type ProtectedTable, protectMedian, protectTable } from "~/compute/disclosure";
import {
  chooseGrouping,
  type GroupingCandidate,
  hiddenShare,
  type OverTimeResult,
  type PublishedPair,
  type StoredPublication,
  sameCounts,
  sameLayout,
  type TableCounts,
} from "~/compute/disclosure-history";
import {
  columnSlice,
  cumulativeFromProtected,
  departmentSlice,
  derivedSum,
  mergeWeeks,
  type OrgLayout,
  siteSlice,
  type Viewer,
  weekRange,
  weekStart,
} from "~/compute/readiness-views";
import { round1 } from "~/compute/rounding";
import { nowInstant } from "~/dates";
import { type Db, db } from "~/db.server";
import { STAGE_BAND_LABELS, STAGE_BAND_OF, STAGE_BANDS, STAGE_LABELS, STAGES } from "~/domain/stages";
import { protectOverTimeOffThread } from "~/jobs/disclosure.server";
import { type Grouping, type OrganisationSettings, parseStoredGroupings } from "~/schemas/readiness";
import { whereWorkerInScope } from "./workers.server";

// Readiness for managers (docs/architecture.md, docs/consent-and-disclosure.md). Every number leaves this module only after disclosure
// control. The database does the counting (GROUP BY); the only per-person values read here are
// forecast hours for medians, without any identifier, and they never leave the function that reads them.
// Labels are site and department names; no worker id, name, e-mail or employee number is selected.

export interface LinkedViews {
  department: ProtectedTable | null;
  site: ProtectedTable | null;
  /** Which grouping the figures use and why, and which stored publication they come from. */
  grouping: GroupingUsed;
}

export interface GroupingUsed {
  key: string;
  label: string;
  /** Set when the board chose a coarser grouping, or when even the chosen one hides a lot. */
  reason: string | null;
  /** Share of the organisation's cells hidden in this grouping. */
  hiddenShare: number;
  publicationId: number;
  /** E.g. why this publication is not linked to the previous one. */
  note: string | null;
  /** Set while these are the earlier figures and the new ones are being protected. */
  updating: string | null;
}

/** Who received a publication (recorded so the over-time guarantee can be stated per viewer). */
export type BoardViewer = { kind: "user" | "apiKey"; id: number };

export function boardViewer(
  p: { kind: "user"; user: { id: number } } | { kind: "apiKey"; key: { id: number } },
): BoardViewer {
  return p.kind === "user" ? { kind: "user", id: p.user.id } : { kind: "apiKey", id: p.key.id };
}

export type Panel<T> = { status: "off" } | { status: "empty"; reason: string } | ({ status: "ok" } & T);

export interface MedianTable {
  rows: string[];
  columns: string[];
  /** Median forecast hours, or null where the group has fewer people than the threshold. */
  cells: (number | null)[][];
  threshold: number;
}

export interface ReadinessBoard {
  threshold: number;
  groupings: Grouping[];
  scopeLabel: string;
  wholeSites: string[];
  stage: Panel<LinkedViews>;
  ready: Panel<LinkedViews>;
  /** weeks: the first day of the last week of each period (the chart's x axis). */
  planned: Panel<{
    table: ProtectedTable;
    cumulative: { columns: (number | null)[][]; total: (number | null)[] };
    weeks: string[];
  }>;
  medians: Panel<{ department: MedianTable | null; site: MedianTable | null }>;
}

// ── organisation settings ────────────────────────────────────────────────────────────────────────

export async function organisationSettings(conn: Db = db()): Promise<{
  id: number;
  name: string;
  threshold: number;
  storedThreshold: number;
  groupings: Grouping[];
  maxHiddenShare: number;
}> {
  const org = await conn("organisations")
    .orderBy("id")
    .first("id", "name", "disclosure_threshold", "manager_groupings", "max_hidden_share");
  if (!org) throw new Error("No organisation is set up.");
  return {
    id: org.id,
    name: org.name,
    storedThreshold: Number(org.disclosure_threshold),
    threshold: effectiveThreshold(Number(org.disclosure_threshold)),
    groupings: parseStoredGroupings(org.manager_groupings),
    maxHiddenShare: Number(org.max_hidden_share ?? DEFAULT_MAX_HIDDEN_SHARE),
  };
}

/** Share of a table protection may hide before the board switches to a coarser grouping. */
export const DEFAULT_MAX_HIDDEN_SHARE = 0.25;

export async function updateOrganisationSettings(v: OrganisationSettings): Promise<void> {
  await db().transaction(async (trx) => {
    const org = await trx("organisations").orderBy("id").first("id");
    if (!org) throw new Error("No organisation is set up.");
    await trx("organisations")
      .where({ id: org.id })
      .update({
        disclosure_threshold: effectiveThreshold(v.disclosureThreshold),
        manager_groupings: JSON.stringify(v.groupings),
        max_hidden_share: v.maxHiddenSharePercent / 100,
      });
  });
}

// ── groups: the whole organisation, and the viewer's part of it ───────────────────────────────────

export interface Groups {
  /** Every department, ordered by site then department name (ids stay on the server). */
  departments: { id: number; name: string; siteId: number; siteName: string; label: string }[];
  org: OrgLayout;
  viewer: Viewer;
}

export async function readinessGroups(scope: Scope): Promise<Groups> {
  const rows: { id: number; name: string; siteId: number; siteName: string }[] = await db()("departments as d")
    .join("sites as s", "s.id", "d.site_id")
    .select("d.id", "d.name", "d.site_id as siteId", "s.name as siteName")
    .orderBy([{ column: "s.name" }, { column: "d.name" }, { column: "d.id" }]);
  const departments = rows.map((r) => ({ ...r, label: `${r.siteName} · ${r.name}` }));
  const sites: OrgLayout["sites"] = [];
  for (const d of departments)
    if (!sites.some((s) => s.key === `${d.siteId}`)) sites.push({ key: `${d.siteId}`, label: d.siteName });
  const org: OrgLayout = { departments: departments.map((d) => ({ label: d.label, siteKey: `${d.siteId}` })), sites };
  const inScope = (d: { id: number; siteId: number }) =>
    scope.allSites || scope.siteIds.includes(d.siteId) || scope.departmentIds.includes(d.id);
  const viewer: Viewer = {
    departments: departments.map((d, i) => (inScope(d) ? i : -1)).filter((i) => i >= 0),
    wholeSites: sites.filter((s) => scope.allSites || scope.siteIds.includes(Number(s.key))).map((s) => s.key),
    allSites: scope.allSites,
  };
  return { departments, org, viewer };
}

function scopeLabelOf(g: Groups): string {
  const whole = new Set(g.viewer.wholeSites);
  if (g.viewer.allSites) return "the whole organisation";
  return g.org.sites
    .map((s) => {
      if (whole.has(s.key)) return `${s.label} (whole site)`;
      const names = g.viewer.departments
        .filter((i) => g.org.departments[i].siteKey === s.key)
        .map((i) => g.departments[i].name);
      return names.length ? `${s.label}: ${names.join(", ")}` : null;
    })
    .filter(Boolean)
    .join("; ");
}

/** The viewer's department and site rows of one organisation-wide publication. */
export function sliceForViewer(g: Groups, pair: PublishedPair, groupings: Grouping[]): Omit<LinkedViews, "grouping"> {
  const labelOf = new Map(g.org.sites.map((x) => [x.key, x.label]));
  const pub = {
    detail: pair.detail,
    parent: { ...pair.parent, rows: pair.parent.rows.map((k) => labelOf.get(k) ?? k) },
    threshold: pair.detail.threshold,
  };
  return {
    department: groupings.includes("department") ? departmentSlice(g.org, pub, g.viewer) : null,
    site: groupings.includes("site") ? siteSlice(g.org, pub, g.viewer) : null,
  };
}

// ── publications over time ───────────────────────────────────────────────────────────────────────

interface Candidate {
  key: string;
  label: string;
  counts: TableCounts;
}

interface StoredRow {
  id: number;
  grouping: string;
  counts: string;
  published: string;
  note: string | null;
  created_at: string;
}

function parseStored(row: StoredRow): StoredPublication & { createdAt: string } {
  return {
    id: Number(row.id),
    grouping: row.grouping,
    counts: JSON.parse(row.counts),
    published: JSON.parse(row.published),
    note: row.note ?? null,
    createdAt: row.created_at,
  };
}

async function latestPublication(
  tableKey: string,
  grouping?: string,
): Promise<(StoredPublication & { createdAt: string }) | null> {
  const q = db()("readiness_publications").where({ table_key: tableKey });
  if (grouping) q.where({ grouping });
  const row = await q.orderBy("id", "desc").first("id", "grouping", "counts", "published", "note", "created_at");
  return row ? parseStored(row) : null;
}

type TablePublication =
  | { status: "ok"; pair: PublishedPair; grouping: GroupingUsed }
  | { status: "empty"; reason: string };

const UPDATING_TEXT =
  "The figures under this table changed; the new ones are being protected and replace these shortly. Until then these are the figures published before.";

/**
 * The organisation-wide publication of one table: per candidate grouping (fine to coarse) the stored
 * publication when its counts are unchanged, otherwise a new one protected against the latest earlier
 * publication in that grouping; the finest within the organisation's hidden share is used. Withheld when
 * no grouping can be published safely.
 *
 * On the request path (`background` false) no new protection is computed while an earlier publication
 * of the same layout and threshold can be shown instead: that one is served, marked as being updated, and
 * the new one is protected in the background (`refreshInBackground`), which stores it and bumps the
 * readiness generation in one transaction so the next request picks it up. Only a table that has no such
 * earlier publication (the first one, or departments, columns or the threshold changed) is protected
 * while the request waits — off the request thread too.
 */
async function publishTable(
  tableKey: string,
  candidates: Candidate[],
  maxShare: number,
  background: boolean,
): Promise<TablePublication> {
  const latest = await latestPublication(tableKey);
  const results: { c: Candidate; prev: StoredPublication | null; r: OverTimeResult; reused: boolean }[] = [];
  for (const c of candidates) {
    const prev = latest?.grouping === c.key ? latest : await latestPublication(tableKey, c.key);
    const reused = prev !== null && sameCounts(prev.counts, c.counts);
    if (!reused && !background && latest) {
      const stale = servePrevious(tableKey, latest, candidates, maxShare);
      if (stale) return stale;
    }
    const r: OverTimeResult =
      reused && prev
        ? { status: "ok", published: prev.published, linkedTo: prev.id, note: prev.note }
        : await protectOverTimeOffThread(c.counts, prev);
    results.push({ c, prev, r, reused });
    // The finest grouping within the share is the one used: nothing coarser needs computing.
    if (r.status === "ok" && hiddenShare(r.published.detail) <= maxShare) break;
  }
  const ok: GroupingCandidate<(typeof results)[number] & { r: { status: "ok" } }>[] = results.flatMap((x) =>
    x.r.status === "ok"
      ? [{ key: x.c.key, table: x as typeof x & { r: { status: "ok" } }, share: hiddenShare(x.r.published.detail) }]
      : [],
  );
  if (ok.length === 0) {
    const first = results.find((x) => x.r.status === "withheld")?.r;
    return { status: "empty", reason: first && first.status === "withheld" ? first.reason : "Nothing can be shown." };
  }
  const { chosen, withinShare } = chooseGrouping(ok, maxShare);
  const x = chosen.table;
  const finest = candidates[0];
  const pct = (v: number) => `${Math.round(v * 100)} %`;
  const reasons: string[] = [];
  if (x.c.key !== finest.key) {
    const fine = results.find((y) => y.c.key === finest.key);
    reasons.push(
      fine?.r.status === "ok"
        ? `${finest.label} would hide ${pct(hiddenShare(fine.r.published.detail))} of the cells (more than ${pct(maxShare)}), so the board shows ${x.c.label.toLowerCase()}.`
        : `${finest.label} cannot be shown safely this time, so the board shows ${x.c.label.toLowerCase()}.`,
    );
  }
  if (!withinShare) reasons.push(`Even so ${pct(chosen.share)} of the cells are hidden: the groups are small.`);
  let id = x.prev?.id ?? 0;
  let note = x.r.note;
  // In the background nothing new may be needed after all (the coarser grouping's counts did not
  // change): the boards cached as "being updated" must still be dropped.
  if (x.reused && background) await db().transaction(bumpReadinessGeneration);
  if (!x.reused) {
    if (latest && latest.grouping !== x.c.key)
      note =
        note ??
        "The grouping changed since the last publication; this one is linked to the last one in the same grouping only.";
    id = await db().transaction(async (trx) => {
      const [row] = await trx("readiness_publications")
        .insert({
          table_key: tableKey,
          grouping: x.c.key,
          counts: JSON.stringify(x.c.counts),
          published: JSON.stringify(x.r.published),
          linked_to: x.r.linkedTo,
          note,
          created_at: nowInstant(),
        })
        .returning("id");
      // A publication made in the background changes what cached boards should show.
      if (background) await bumpReadinessGeneration(trx);
      return Number(typeof row === "object" ? row.id : row);
    });
  }
  return {
    status: "ok",
    pair: x.r.published,
    grouping: {
      key: x.c.key,
      label: x.c.label,
      reason: reasons.join(" ") || null,
      hiddenShare: chosen.share,
      publicationId: id,
      note,
      updating: null,
    },
  };
}

/**
 * The latest publication as it was, marked as being updated, with the new one started in the background;
 * null when it cannot stand in (its layout or threshold differs from the current counts: its figures
 * would not be protected under the current rules).
 */
function servePrevious(
  tableKey: string,
  latest: StoredPublication & { createdAt: string },
  candidates: Candidate[],
  maxShare: number,
): TablePublication | null {
  const same = candidates.find((c) => c.key === latest.grouping);
  if (!same || !sameLayout(same.counts, latest.counts) || same.counts.threshold !== latest.counts.threshold)
    return null;
  refreshInBackground(tableKey, candidates, maxShare);
  return {
    status: "ok",
    pair: latest.published,
    grouping: {
      key: same.key,
      label: same.label,
      reason: null,
      hiddenShare: hiddenShare(latest.published.detail),
      publicationId: latest.id,
      note: latest.note,
      updating: UPDATING_TEXT,
    },
  };
}

// One background protection per table at a time on this instance; counts that arrive meanwhile run next.
interface Refresh {
  next: { candidates: Candidate[]; maxShare: number } | null;
  done: Promise<void>;
}
const refreshing = new Map<string, Refresh>();

function refreshInBackground(tableKey: string, candidates: Candidate[], maxShare: number): void {
  const running = refreshing.get(tableKey);
  if (running) {
    running.next = { candidates, maxShare };
    return;
  }
  const state: Refresh = { next: { candidates, maxShare }, done: Promise.resolve() };
  refreshing.set(tableKey, state);
  state.done = (async () => {
    while (state.next) {
      const job = state.next;
      state.next = null;
      try {
        await publishTable(tableKey, job.candidates, job.maxShare, true);
      } catch (e) {
        console.error(`Protecting the readiness table "${tableKey}" in the background failed:`, e);
      }
    }
    refreshing.delete(tableKey);
  })();
}

/** Resolves once this instance protects no readiness table in the background (tests, benches). */
export async function readinessRefreshesSettled(): Promise<void> {
  while (refreshing.size > 0) await Promise.all([...refreshing.values()].map((r) => r.done));
}

function tableCounts(g: Groups, columns: string[], counts: number[][], threshold: number): TableCounts {
  return {
    rows: g.org.departments.map((d) => d.label),
    parentOf: g.org.departments.map((d) => d.siteKey),
    columns,
    counts,
    threshold,
  };
}

/** Stage counts summed into the coarser bands. */
function bandCounts(counts: number[][]): number[][] {
  return counts.map((line) =>
    STAGE_BANDS.map((b) => line.reduce((s, v, j) => s + (STAGE_BAND_OF[STAGES[j]] === b ? v : 0), 0)),
  );
}

// ── grouped counts (SQL) ─────────────────────────────────────────────────────────────────────────

function isSqlite(k: Knex): boolean {
  return String(k.client.config.client).includes("sqlite");
}

async function stageCounts(g: Groups): Promise<number[][]> {
  const rows = (await db()("workers")
    .select("workers.department_id as dept", "workers.stage as stage")
    .count({ n: "*" })
    .groupBy("workers.department_id", "workers.stage")) as unknown as {
    dept: number;
    stage: string;
    n: number | string;
  }[];
  const index = new Map(g.departments.map((d, i) => [d.id, i]));
  const counts = g.departments.map(() => STAGES.map(() => 0));
  for (const r of rows) {
    const i = index.get(Number(r.dept));
    const j = (STAGES as readonly string[]).indexOf(r.stage);
    if (i !== undefined && j >= 0) counts[i][j] += Number(r.n);
  }
  return counts;
}

async function deviceTypes(): Promise<{ id: number; name: string }[]> {
  return db()("device_types").select("id", "name").orderBy("id");
}

async function readyCounts(g: Groups, devices: { id: number }[]): Promise<number[][]> {
  const rows = (await db()("device_courses as dc")
    .join("workers", "workers.id", "dc.worker_id")
    .select("workers.department_id as dept", "dc.device_type_id as device")
    .count({ n: "*" })
    .where("dc.status", "proficient")
    .whereNot("workers.stage", "withdrawn")
    .groupBy("workers.department_id", "dc.device_type_id")) as unknown as {
    dept: number;
    device: number;
    n: number | string;
  }[];
  const di = new Map(g.departments.map((d, i) => [d.id, i]));
  const vi = new Map(devices.map((d, j) => [d.id, j]));
  const counts = g.departments.map(() => devices.map(() => 0));
  for (const r of rows) {
    const i = di.get(Number(r.dept));
    const j = vi.get(Number(r.device));
    if (i !== undefined && j !== undefined) counts[i][j] += Number(r.n);
  }
  return counts;
}

/**
 * Planned ready week per worker × device type = week of the last scheduled session of the latest
 * published plan (sessions created by publishing carry allocation_run_id). Counted in SQL per
 * department and day; days are summed into weeks here. Rows: weeks; columns: every department.
 */
async function plannedCounts(g: Groups): Promise<{ weeks: string[]; counts: number[][] }> {
  const k = db();
  const lastSession = k("training_sessions as ts")
    .select("ts.worker_id", "ts.device_type_id")
    .max({ last: "ts.scheduled_start" })
    .whereNotNull("ts.allocation_run_id")
    .whereNotNull("ts.scheduled_start")
    .whereNot("ts.status", "cancelled")
    .whereRaw(
      "ts.allocation_run_id = (select max(t2.allocation_run_id) from training_sessions t2 where t2.worker_id = ts.worker_id and t2.device_type_id = ts.device_type_id and t2.allocation_run_id is not null and t2.status <> 'cancelled')",
    )
    .groupBy("ts.worker_id", "ts.device_type_id");
  // Only sessions of published runs count.
  lastSession.whereIn("ts.allocation_run_id", k("allocation_runs").select("id").whereNotNull("published_at"));
  // Session times are zone-less wall-clock times on both engines (text on SQLite, timestamp on PostgreSQL).
  const day = isSqlite(k) ? "substr(p.last, 1, 10)" : "to_char(p.last, 'YYYY-MM-DD')";
  const rows = (await k
    .from(lastSession.as("p"))
    .join("workers", "workers.id", "p.worker_id")
    .leftJoin("device_courses as dc", (j) => {
      j.on("dc.worker_id", "p.worker_id").andOn("dc.device_type_id", "p.device_type_id");
    })
    .select("workers.department_id as dept", k.raw(`${day} as day`))
    .count({ n: "*" })
    .whereNot("workers.stage", "withdrawn")
    .where((w) => {
      w.whereNull("dc.status").orWhereNot("dc.status", "stopped");
    })
    .groupBy("workers.department_id")
    .groupByRaw(day)) as unknown as { dept: number; day: string; n: number | string }[];
  if (rows.length === 0) return { weeks: [], counts: [] };
  const days = rows.map((r) => String(r.day)).sort();
  const weeks = weekRange(days[0], days[days.length - 1]);
  const di = new Map(g.departments.map((d, i) => [d.id, i]));
  const counts = weeks.map(() => g.departments.map(() => 0));
  for (const r of rows) {
    const i = di.get(Number(r.dept));
    const w = weeks.indexOf(weekStart(String(r.day)));
    if (i !== undefined && w >= 0) counts[w][i] += Number(r.n);
  }
  return { weeks, counts };
}

/** Current forecast median hours per department × device type of the viewer, read without identifiers. */
async function forecastValues(scope: Scope, g: Groups): Promise<Map<string, number[]>> {
  const k = db();
  // Only forecasts of an approved model version count: drafts are not for decisions (docs/methods.md).
  const q = k("forecasts as f")
    .join("workers", "workers.id", "f.worker_id")
    .join("model_versions as mv", "mv.id", "f.model_version_id")
    .where("mv.status", "approved")
    .select("workers.department_id as dept", "f.device_type_id as device", "f.median_hours as hours")
    .whereNot("workers.stage", "withdrawn")
    .whereIn(
      "workers.department_id",
      g.viewer.departments.map((i) => g.departments[i].id),
    );
  const rows = (await whereWorkerInScope(q, scope)) as unknown as { dept: number; device: number; hours: number }[];
  const out = new Map<string, number[]>();
  for (const r of rows) {
    const key = `${r.dept}:${r.device}`;
    const list = out.get(key) ?? [];
    list.push(Number(r.hours));
    out.set(key, list);
  }
  return out;
}

/** Medians are published to 0.1 h: enough for planning, no more precision than that. */
function roundHours(v: number | null): number | null {
  return v === null ? null : round1(v);
}

function medianTables(
  g: Groups,
  devices: { id: number; name: string }[],
  values: Map<string, number[]>,
  groupings: Grouping[],
  threshold: number,
): { department: MedianTable | null; site: MedianTable | null } {
  const columns = devices.map((d) => d.name);
  const mine = g.viewer.departments.map((i) => g.departments[i]);
  const whole = new Set(g.viewer.wholeSites);
  const department = groupings.includes("department")
    ? {
        rows: mine.map((d) => d.label),
        columns,
        threshold,
        cells: mine.map((d) =>
          devices.map((v) => roundHours(protectMedian(values.get(`${d.id}:${v.id}`) ?? [], threshold))),
        ),
      }
    : null;
  const siteGroups = g.org.sites
    .map((s) => ({ s, depts: mine.filter((d) => `${d.siteId}` === s.key) }))
    .filter((x) => x.depts.length > 0);
  const site = groupings.includes("site")
    ? {
        rows: siteGroups.map(({ s }) =>
          whole.has(s.key) || g.viewer.allSites ? s.label : `${s.label} (your departments)`,
        ),
        columns,
        threshold,
        cells: siteGroups.map(({ depts }) =>
          devices.map((v) =>
            roundHours(
              protectMedian(
                depts.flatMap((d) => values.get(`${d.id}:${v.id}`) ?? []),
                threshold,
              ),
            ),
          ),
        ),
      }
    : null;
  return { department, site };
}

function periodLabel(p: { first: string; last: string; weeks: number }): string {
  return p.weeks === 1 ? `Week of ${p.first}` : `Weeks of ${p.first} to ${p.last}`;
}

/** Department columns of the viewer added up per site group, where the sums follow from published cells. */
function siteColumns(g: Groups, t: ProtectedTable): ProtectedTable {
  const keys = [...new Set(g.viewer.departments.map((i) => g.org.departments[i].siteKey))];
  const whole = new Set(g.viewer.wholeSites);
  const members = keys.map((k) =>
    g.viewer.departments.map((i, c) => (g.org.departments[i].siteKey === k ? c : -1)).filter((c) => c >= 0),
  );
  const label = (k: string) => {
    const site = g.org.sites.find((s) => s.key === k)?.label ?? k;
    return whole.has(k) || g.viewer.allSites ? site : `${site} (your departments)`;
  };
  return {
    ...t,
    columns: keys.map(label),
    cells: t.cells.map((line) => members.map((cs) => derivedSum(cs.map((c) => line[c])))),
    columnTotals: members.map((cs) => derivedSum(cs.map((c) => t.columnTotals[c]))),
  };
}

// ── the board ────────────────────────────────────────────────────────────────────────────────────

// ── the readiness generation and the board cache ─────────────────────────────────────────────────

/**
 * The readiness generation: database triggers bump it in the transaction of every write to the data
 * under the board (migration 20261205040000 lists the tables and columns), and a background publication
 * bumps it with its insert. Equal generation, equal figures — on every app instance.
 */
export async function readinessGeneration(conn: Db = db()): Promise<number> {
  const row = await conn("readiness_generation").where({ id: 1 }).first("value");
  return Number(row?.value ?? 0);
}

async function bumpReadinessGeneration(trx: Db): Promise<void> {
  await trx("readiness_generation")
    .where({ id: 1 })
    .update({ value: trx.raw("value + 1") });
}

interface CachedBoard {
  generation: number;
  board: ReadinessBoard;
  publicationIds: number[];
}

/**
 * Per database handle (one in the app; tests may swap it) and scope, the board of the latest generation
 * this instance computed (protected figures only), and the computations under way.
 */
const caches = new WeakMap<
  object,
  { boards: Map<string, CachedBoard>; computing: Map<string, Promise<CachedBoard>> }
>();
function cacheOf(conn: Db) {
  let c = caches.get(conn);
  if (!c) {
    c = { boards: new Map(), computing: new Map() };
    caches.set(conn, c);
  }
  return c;
}
/** Receipts this instance has already written (publication × viewer), so a cached board costs no write. */
const receipted = new Set<string>();
const MAX_CACHED_SCOPES = 1000;

function scopeKey(scope: Scope): string {
  const sorted = (v: number[]) => [...v].sort((a, b) => a - b).join(",");
  return scope.allSites ? "all" : `s${sorted(scope.siteIds)}d${sorted(scope.departmentIds)}`;
}

function publicationIdsOf(board: ReadinessBoard): number[] {
  return [board.stage, board.ready].flatMap((p) => (p.status === "ok" ? [p.grouping.publicationId] : []));
}

async function recordReceipts(ids: number[], viewer: BoardViewer): Promise<void> {
  for (const id of ids) {
    const key = `${id}:${viewer.kind}:${viewer.id}`;
    if (receipted.has(key)) continue;
    await db()("readiness_receipts")
      .insert({
        publication_id: id,
        viewer_kind: viewer.kind,
        viewer_id: viewer.id,
        received_at: nowInstant(),
      })
      .onConflict(["publication_id", "viewer_kind", "viewer_id"])
      .ignore();
    receipted.add(key);
  }
}

/**
 * Everything a manager's pages, export and API publish: protected figures only. Computed once per scope
 * and readiness generation (concurrent requests share the computation) and kept until the generation
 * changes; requests in between read one row and get the stored board. The board is shared: never mutate it.
 */
export async function readinessBoard(scope: Scope, viewer?: BoardViewer): Promise<ReadinessBoard> {
  const { boards, computing } = cacheOf(db());
  const generation = await readinessGeneration();
  const key = scopeKey(scope);
  let entry = boards.get(key);
  if (!entry || entry.generation !== generation) {
    const flight = `${key}@${generation}`;
    let pending = computing.get(flight);
    if (!pending) {
      pending = computeBoard(scope)
        .then((board) => ({ generation, board, publicationIds: publicationIdsOf(board) }))
        .finally(() => computing.delete(flight));
      computing.set(flight, pending);
    }
    entry = await pending;
    const current = boards.get(key);
    if (!current || current.generation <= entry.generation) {
      if (!current && boards.size >= MAX_CACHED_SCOPES) boards.delete(boards.keys().next().value as string);
      boards.set(key, entry);
    }
  }
  if (viewer) await recordReceipts(entry.publicationIds, viewer);
  return entry.board;
}

async function computeBoard(scope: Scope): Promise<ReadinessBoard> {
  const [org, g, devices] = await Promise.all([organisationSettings(), readinessGroups(scope), deviceTypes()]);
  const { threshold, groupings } = org;
  const board: ReadinessBoard = {
    threshold,
    groupings,
    scopeLabel: g.viewer.departments.length ? scopeLabelOf(g) : "no departments",
    wholeSites: g.org.sites.filter((s) => g.viewer.allSites || g.viewer.wholeSites.includes(s.key)).map((s) => s.label),
    stage: { status: "off" },
    ready: { status: "off" },
    planned: { status: "off" },
    medians: { status: "off" },
  };
  if (g.viewer.departments.length === 0) {
    const empty = {
      status: "empty" as const,
      reason:
        "No departments are assigned to you yet. An administrator assigns departments or a whole site to your manager role.",
    };
    return { ...board, stage: empty, ready: empty, planned: empty, medians: empty };
  }
  const show = async (tableKey: string, candidates: Candidate[]): Promise<Panel<LinkedViews>> => {
    const p = await publishTable(tableKey, candidates, org.maxHiddenShare, false);
    if (p.status === "empty") return p;
    return { status: "ok", ...sliceForViewer(g, p.pair, groupings), grouping: p.grouping };
  };
  if (groupings.includes("stage")) {
    const counts = await stageCounts(g);
    board.stage = await show("stage", [
      {
        key: "stages",
        label: "Single stages",
        counts: tableCounts(
          g,
          STAGES.map((s) => STAGE_LABELS[s]),
          counts,
          threshold,
        ),
      },
      {
        key: "stageBands",
        label: "Stage bands",
        counts: tableCounts(
          g,
          STAGE_BANDS.map((b) => STAGE_BAND_LABELS[b]),
          bandCounts(counts),
          threshold,
        ),
      },
    ]);
  }
  if (groupings.includes("deviceType")) {
    if (devices.length === 0) board.ready = { status: "empty", reason: "No device types are set up yet." };
    else
      board.ready = await show("ready", [
        {
          key: "deviceTypes",
          label: "Device types",
          counts: tableCounts(
            g,
            devices.map((d) => d.name),
            await readyCounts(g, devices),
            threshold,
          ),
        },
      ]);
    const values = devices.length ? await forecastValues(scope, g) : new Map<string, number[]>();
    if (values.size === 0)
      board.medians = { status: "empty", reason: "No forecasts have been made for people in your departments yet." };
    else board.medians = { status: "ok", ...medianTables(g, devices, values, groupings, threshold) };
  }
  if (groupings.includes("week")) {
    const { weeks, counts } = await plannedCounts(g);
    const mineHaveAny = weeks.length > 0 && counts.some((line) => g.viewer.departments.some((i) => line[i] > 0));
    if (!mineHaveAny) {
      board.planned = {
        status: "empty",
        reason: "No published training plan schedules anyone in your departments yet.",
      };
    } else {
      // Weeks × every department, protected once for the organisation; the viewer sees their columns.
      const { periods, counts: merged } = mergeWeeks(weeks, counts, threshold);
      const full = protectTable(
        periods.map(periodLabel),
        g.org.departments.map((d) => d.label),
        merged,
        { threshold },
      );
      const mine = columnSlice(full, g.viewer.departments);
      const table = groupings.includes("department") ? mine : siteColumns(g, mine);
      board.planned = {
        status: "ok",
        table,
        cumulative: cumulativeFromProtected(table),
        weeks: periods.map((p) => p.last),
      };
    }
  }
  return board;
}
