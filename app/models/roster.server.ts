import { createHash } from "node:crypto";
import type { Knex } from "knex";
import type { Principal } from "~/auth/guard.server";
import type { Scope } from "~/auth/scope";
import { formatInstant, nowInstant } from "~/dates";
import { type Db, db, type TableInsert, type TableRow } from "~/db.server";
import { conflict, notFound, UserError } from "~/errors";
import { readRosterFileOffThread, withUploadReadSlot } from "~/jobs/upload-read.server";
import {
  guessMapping,
  ROSTER_FIELD_LABELS,
  ROSTER_FIELDS,
  ROSTER_FILE_FIELD,
  type RosterMapping,
  type RosterRowIssue,
  type RosterSite,
  type ValidRosterRow,
  validateRoster,
} from "~/schemas/roster";
import type { TableQuery } from "~/schemas/table-query";
import { checkXlsxArchive } from "~/xlsx.server";
import { type ConsentState, consentStates } from "./consent.server";
import { isUniqueViolation } from "./locks.server";
import { paged } from "./paging.server";
import { isXlsx, readRosterFile } from "./roster-file.server";
import { viewerTimeZone } from "./sites.server";
import { WORKER_HEADER, whereWorkerInScope, workersWithPlace } from "./workers.server";

// Roster import and export, and the worker list.

export type { RosterTable } from "./roster-file.server";
export { readRosterFile } from "./roster-file.server";

export async function rosterSites(k: Db = db()): Promise<RosterSite[]> {
  const sites = await k("sites").select("id", "code", "name").orderBy("id");
  const depts = await k("departments").select("id", "site_id", "code", "name").orderBy("id");
  return sites.map((s) => ({
    ...s,
    departments: depts.filter((d) => d.site_id === s.id).map((d) => ({ id: d.id, code: d.code, name: d.name })),
  }));
}

function allowedSites(scope: Scope): Set<number> | null {
  return scope.allSites ? null : new Set(scope.siteIds);
}
function inScope(scope: Scope, siteId: number, departmentId: number): boolean {
  return scope.allSites || scope.siteIds.includes(siteId) || scope.departmentIds.includes(departmentId);
}

/** Saves an uploaded roster file (read, not yet imported) for mapping its columns; refusals name the file field. */
export async function saveRosterUpload(
  principal: Principal & { kind: "user" },
  file: { name: string; bytes: Uint8Array } | null,
): Promise<number> {
  if (!file || file.bytes.byteLength === 0)
    throw new UserError("choose a CSV or XLSX file (the file was empty or missing).", { field: ROSTER_FILE_FIELD });
  if (!/\.(csv|xlsx|txt)$/i.test(file.name))
    throw new UserError(`${file.name} is neither .csv nor .xlsx.`, { field: ROSTER_FILE_FIELD });
  const { name: filename, bytes } = file;
  // A workbook's zip directory is checked here, before anything is inflated; the workbook is then parsed in
  // a worker thread within time and memory limits. CSV (no compression, capped in size and rows) is parsed
  // here in small chunks. Either way in one of the organisation's reading slots.
  const xlsx = isXlsx(filename, bytes);
  if (xlsx) await checkXlsxArchive(bytes);
  const table = await withUploadReadSlot(() =>
    xlsx ? readRosterFileOffThread(filename, bytes) : readRosterFile(filename, bytes),
  );
  const [r] = await db()("roster_imports")
    .insert({
      filename: filename.slice(0, 255),
      sha256: createHash("sha256").update(bytes).digest("hex"),
      size_bytes: bytes.byteLength,
      row_count: table.rows.length,
      headers: JSON.stringify(table.headers),
      rows: JSON.stringify(table.rows),
      mapping: JSON.stringify(guessMapping(table.headers)),
      status: "uploaded",
      created_by: principal.user.id,
      created_at: nowInstant(),
    })
    .returning("id");
  return r.id;
}

export interface RosterUpload {
  id: number;
  filename: string;
  sha256: string;
  sizeBytes: number;
  rowCount: number;
  headers: string[];
  rows: string[][] | null;
  mapping: RosterMapping;
  status: "uploaded" | "imported" | "discarded";
  summary: RosterSummary | null;
  createdAt: string;
  /** When it was imported or discarded. */
  finishedAt: string | null;
  /** Who uploaded it; only they may import or discard it, so also who did. */
  createdByName: string;
}

/** An upload, only for the person who made it. */
export async function getRosterUpload(id: number, userId: number, k: Db = db()): Promise<RosterUpload | null> {
  const r = await k("roster_imports as ri")
    .join("users as u", "u.id", "ri.created_by")
    .where({ "ri.id": id, "ri.created_by": userId })
    .first("ri.*", "u.display_name as created_by_name");
  if (!r) return null;
  return {
    id: r.id,
    filename: r.filename,
    sha256: r.sha256,
    sizeBytes: r.size_bytes,
    rowCount: r.row_count,
    headers: JSON.parse(r.headers),
    rows: r.rows ? JSON.parse(r.rows) : null,
    mapping: JSON.parse(r.mapping ?? "null"),
    status: r.status,
    summary: r.summary ? JSON.parse(r.summary) : null,
    createdAt: String(r.created_at),
    finishedAt: r.finished_at ? String(r.finished_at) : null,
    createdByName: r.created_by_name,
  };
}

/** What became of a finished upload, in the viewer's zone: "Imported on 3 Dec 2026, 14:05 CET by …". */
export function rosterOutcome(up: RosterUpload, zone: string): string | null {
  if (up.status === "uploaded" || !up.finishedAt) return null;
  const when = formatInstant(up.finishedAt, zone);
  return `${up.status === "imported" ? "Imported" : "Discarded"} on ${when} by ${up.createdByName}`;
}

/** The answer to importing an upload that is no longer waiting: what happened to it, and that nothing more was. */
function alreadyFinished(up: RosterUpload, zone: string): string {
  const when = up.finishedAt ? formatInstant(up.finishedAt, zone) : "an earlier date";
  if (up.status === "imported") {
    const s = up.summary;
    const counts = s ? `: ${s.created} new, ${s.updated} updated, ${s.unchanged} unchanged, ${s.skipped} skipped` : "";
    return `This import was already completed on ${when} by ${up.createdByName}${counts}. Nothing more was written.`;
  }
  return `This upload was discarded on ${when}, so nothing from it was imported; upload the file again to import it.`;
}

export async function recentRosterUploads(userId: number, limit = 10) {
  const rows = await db()("roster_imports")
    .where({ created_by: userId })
    .orderBy("id", "desc")
    .limit(limit)
    .select("id", "filename", "row_count", "status", "summary", "created_at", "finished_at");
  return rows.map((r) => ({
    id: r.id,
    filename: r.filename,
    rowCount: r.row_count,
    status: r.status,
    summary: r.summary ? (JSON.parse(r.summary) as RosterSummary) : null,
    createdAt: String(r.created_at),
    finishedAt: r.finished_at ? String(r.finished_at) : null,
  }));
}

export async function saveMapping(id: number, userId: number, mapping: RosterMapping) {
  await db()("roster_imports")
    .where({ id, created_by: userId, status: "uploaded" })
    .update({ mapping: JSON.stringify(mapping) });
}

export async function discardRosterUpload(id: number, userId: number) {
  await db()("roster_imports")
    .where({ id, created_by: userId, status: "uploaded" })
    .update({ status: "discarded", rows: null, finished_at: nowInstant() });
}

export interface RosterChange {
  row: number;
  employeeNumber: string;
  kind: "create" | "update";
  fields: string[];
}
export interface RosterPlan {
  rowCount: number;
  issues: RosterRowIssue[];
  invalidRows: number;
  creates: ValidRosterRow[];
  updates: { row: ValidRosterRow; id: number; fields: string[]; patch: Record<string, unknown> }[];
  unchanged: number;
}
export interface RosterSummary {
  created: number;
  updated: number;
  unchanged: number;
  skipped: number;
  changes: RosterChange[];
}

/** A stored worker as the import compares it with a row of the file. */
type ExistingWorker = Pick<
  TableRow<"workers">,
  "id" | "employee_number" | "given_name" | "family_name" | "email" | "site_id" | "department_id"
>;

/** Validates the rows and compares them with the workers on file (upsert by employee number). */
export async function planRoster(
  rows: string[][],
  mapping: RosterMapping,
  scope: Scope,
  k: Db = db(),
): Promise<RosterPlan> {
  const v = validateRoster(rows, mapping, await rosterSites(k), allowedSites(scope));
  const existing = new Map<string, ExistingWorker>();
  const numbers = v.valid.map((r) => r.employeeNumber);
  for (let i = 0; i < numbers.length; i += 500) {
    const found = await k("workers")
      .whereIn("employee_number", numbers.slice(i, i + 500))
      .select("id", "employee_number", "given_name", "family_name", "email", "site_id", "department_id");
    for (const w of found) existing.set(w.employee_number, w);
  }
  const issues = [...v.issues];
  const creates: ValidRosterRow[] = [];
  const updates: RosterPlan["updates"] = [];
  let unchanged = 0;
  let invalidRows = v.invalidRows;
  for (const r of v.valid) {
    if (!inScope(scope, r.siteId, r.departmentId)) {
      issues.push({
        row: r.row,
        field: "department",
        message: "this department is outside the part of the organisation you may manage",
      });
      invalidRows++;
      continue;
    }
    const w = existing.get(r.employeeNumber);
    if (!w) {
      creates.push(r);
      continue;
    }
    if (!inScope(scope, w.site_id, w.department_id)) {
      issues.push({
        row: r.row,
        field: "employeeNumber",
        message: `employee number ${r.employeeNumber} belongs to a worker outside the sites you may manage`,
      });
      invalidRows++;
      continue;
    }
    const patch: Record<string, unknown> = {};
    const fields: string[] = [];
    const cmp = (field: string, col: keyof ExistingWorker, val: unknown) => {
      if (val !== w[col]) {
        patch[col] = val;
        fields.push(field);
      }
    };
    cmp(ROSTER_FIELD_LABELS.givenName, "given_name", r.givenName);
    cmp(ROSTER_FIELD_LABELS.familyName, "family_name", r.familyName);
    if (r.email) cmp(ROSTER_FIELD_LABELS.email, "email", r.email); // an empty cell keeps the e-mail on file
    cmp(ROSTER_FIELD_LABELS.site, "site_id", r.siteId);
    cmp(ROSTER_FIELD_LABELS.department, "department_id", r.departmentId);
    if (fields.length) updates.push({ row: r, id: w.id, fields, patch });
    else unchanged++;
  }
  issues.sort((a, b) => a.row - b.row);
  return { rowCount: v.rowCount, issues, invalidRows, creates, updates, unchanged };
}

/** Applies a plan inside the caller's transaction: all of it or (on any failure) nothing. */
export async function applyRosterPlan(
  trx: Knex.Transaction,
  plan: RosterPlan,
  actorUserId: number | null,
): Promise<RosterSummary> {
  const at = nowInstant();
  const newRows = plan.creates.map(
    (r): TableInsert<"workers"> => ({
      employee_number: r.employeeNumber,
      given_name: r.givenName,
      family_name: r.familyName,
      email: r.email,
      site_id: r.siteId,
      department_id: r.departmentId,
      stage: "invited",
      created_at: at,
      updated_at: at,
    }),
  );
  for (let i = 0; i < newRows.length; i += 200) await trx("workers").insert(newRows.slice(i, i + 200));
  if (plan.creates.length) {
    const numbers = plan.creates.map((r) => r.employeeNumber);
    const stageRows: TableInsert<"stage_changes">[] = [];
    for (let i = 0; i < numbers.length; i += 500) {
      const ids = await trx("workers")
        .whereIn("employee_number", numbers.slice(i, i + 500))
        .pluck("id");
      for (const id of ids)
        stageRows.push({ worker_id: id, from_stage: null, to_stage: "invited", actor_user_id: actorUserId, at });
    }
    for (let i = 0; i < stageRows.length; i += 200) await trx("stage_changes").insert(stageRows.slice(i, i + 200));
  }
  for (const u of plan.updates)
    await trx("workers")
      .where({ id: u.id })
      .update({ ...u.patch, updated_at: at });
  const changes: RosterChange[] = [
    ...plan.creates.map((r) => ({ row: r.row, employeeNumber: r.employeeNumber, kind: "create" as const, fields: [] })),
    ...plan.updates.map((u) => ({
      row: u.row.row,
      employeeNumber: u.row.employeeNumber,
      kind: "update" as const,
      fields: u.fields,
    })),
  ].sort((a, b) => a.row - b.row);
  return {
    created: plan.creates.length,
    updated: plan.updates.length,
    unchanged: plan.unchanged,
    skipped: plan.invalidRows,
    changes: changes.slice(0, 1000),
  };
}

/**
 * Imports the valid rows of an upload in one transaction, records the summary and clears the rows. The
 * upload's row is locked first, so the same upload imported twice at once runs once (the second finds it
 * imported); two different uploads adding the same employee numbers at once end with one import and a 409
 * for the other (the unique key on employee numbers decides), never with half of either.
 */
export async function importRosterUpload(id: number, principal: Principal & { kind: "user" }): Promise<RosterSummary> {
  const zone = await viewerTimeZone(principal);
  try {
    return await db().transaction(async (trx) => {
      await trx("roster_imports").where({ id, created_by: principal.user.id }).forUpdate().first("id");
      const up = await getRosterUpload(id, principal.user.id, trx);
      if (!up) throw notFound("That roster upload does not exist.");
      if (up.status !== "uploaded" || !up.rows) throw conflict(alreadyFinished(up, zone));
      const plan = await planRoster(up.rows, up.mapping, principal.scope, trx);
      const summary = await applyRosterPlan(trx, plan, principal.user.id);
      await trx("roster_imports")
        .where({ id })
        .update({
          status: "imported",
          rows: null,
          summary: JSON.stringify(summary),
          finished_at: nowInstant(),
        });
      return summary;
    });
  } catch (e) {
    if (isUniqueViolation(e))
      throw conflict(
        "Another import added some of these employee numbers at the same moment, so nothing from this file was imported. Open the preview again: it now shows what is still new.",
      );
    throw e;
  }
}

// ── Worker list ────────────────────────────────────────────────────────────────────────────────
export interface WorkerListRow {
  id: number;
  employeeNumber: string;
  name: string;
  site: string;
  department: string;
  stage: string;
  lastBaseline: string | null;
  consent: ConsentState | null;
}

export function listWorkers(scope: Scope, q: TableQuery, filters: { site?: string; stage?: string }) {
  const k = db();
  // Last baseline as a correlated subquery (index assessment_sessions(worker_id, assessed_on)): computed only
  // for the page's rows, and the count query (which drops the select) does not touch sessions at all.
  const query = workersWithPlace(k).select(
    ...WORKER_HEADER,
    k("assessment_sessions").max("assessed_on").whereRaw("assessment_sessions.worker_id = workers.id").as("last_on"),
  );
  whereWorkerInScope(query, scope);
  if (q.q) {
    const like = `%${q.q.toLowerCase()}%`;
    query.where((w) =>
      w
        .whereRaw("lower(workers.employee_number) like ?", [like])
        .orWhereRaw("lower(workers.given_name) like ?", [like])
        .orWhereRaw("lower(workers.family_name) like ?", [like]),
    );
  }
  if (filters.site && /^\d+$/.test(filters.site)) query.where("workers.site_id", Number(filters.site));
  if (filters.stage) query.where("workers.stage", filters.stage);
  return paged(
    query,
    q,
    {
      employeeNumber: "workers.employee_number",
      name: "workers.family_name",
      site: "s.name",
      department: "d.name",
      stage: "workers.stage",
      lastBaseline: "last_on",
    },
    "employeeNumber",
    "workers.id",
    (r): WorkerListRow => ({
      id: r.id as number,
      employeeNumber: r.employee_number as string,
      name: `${r.family_name}, ${r.given_name}`,
      site: r.site as string,
      department: r.department as string,
      stage: r.stage as string,
      lastBaseline: r.last_on ? (r.last_on as string) : null,
      consent: null,
    }),
  ).then(async (page) => {
    const states = await consentStates(page.rows.map((r) => r.id));
    for (const r of page.rows) r.consent = states.get(r.id) ?? null;
    return page;
  });
}

// ── Export ─────────────────────────────────────────────────────────────────────────────────────
export const ROSTER_EXPORT_COLUMNS = [
  { header: "employee_number", key: "employee_number", width: 16 },
  { header: "given_name", key: "given_name", width: 18 },
  { header: "family_name", key: "family_name", width: 18 },
  { header: "email", key: "email", width: 34 },
  { header: "site", key: "site", width: 10 },
  { header: "department", key: "department", width: 12 },
  { header: "stage", key: "stage", width: 12 },
];

/**
 * Roster rows in the import's own column names (site and department codes), so an export re-imports as is:
 * one page at a time in employee-number order (keyset paging on the unique number), so that an export of
 * any size holds only a page in memory.
 */
export async function* rosterExportPages(scope: Scope, pageSize = 1000): AsyncGenerator<Record<string, unknown>[]> {
  let after: string | null = null;
  for (;;) {
    const q = workersWithPlace()
      .select(
        "workers.employee_number",
        "workers.given_name",
        "workers.family_name",
        "workers.email",
        "s.code as site",
        "d.code as department",
        "workers.stage",
      )
      .orderBy("workers.employee_number")
      .limit(pageSize);
    if (after !== null) q.where("workers.employee_number", ">", after);
    const page: Record<string, unknown>[] = await whereWorkerInScope(q, scope);
    if (page.length) yield page;
    if (page.length < pageSize) return;
    after = page[page.length - 1].employee_number as string;
  }
}

export { ROSTER_FIELDS };
