import { createHash } from "node:crypto";
import { Readable } from "node:stream";
import { parse as parseCsv } from "csv-parse";
import ExcelJS from "exceljs";
import type { Knex } from "knex";
import type { Principal } from "~/auth/guard.server";
import type { Scope } from "~/auth/scope";
import { dateIn } from "~/dates";
import { type Db, db, type TableInsert } from "~/db.server";
import { conflict, notFound, UserError } from "~/errors";
import {
  guessMapping,
  MAX_ROSTER_ROWS,
  ROSTER_FIELD_LABELS,
  ROSTER_FIELDS,
  type RosterMapping,
  type RosterRowIssue,
  type RosterSite,
  type ValidRosterRow,
  validateRoster,
} from "~/schemas/roster";
import type { TableQuery } from "~/schemas/table-query";
import { type ConsentState, consentStates } from "./consent.server";
import { isUniqueViolation } from "./locks.server";
import { paged } from "./paging.server";
import { WORKER_HEADER, whereWorkerInScope, workersWithPlace } from "./workers.server";

// Roster import and export, and the worker list.

export interface RosterTable {
  headers: string[];
  rows: string[][];
}

function cellText(v: ExcelJS.CellValue): string {
  if (v == null) return "";
  // Spreadsheet date cells come back as Dates at UTC midnight of the day typed.
  if (v instanceof Date) return dateIn(v, "UTC");
  if (typeof v === "object") {
    if ("richText" in v) return v.richText.map((t) => t.text).join("");
    if ("text" in v) return String((v as { text: unknown }).text ?? "");
    if ("result" in v) return cellText((v as { result: ExcelJS.CellValue }).result);
    if ("error" in v) return "";
    return "";
  }
  return String(v);
}

/** Reads CSV (streamed through csv-parse, stops past the row cap) or XLSX (exceljs, first sheet). */
export async function readRosterFile(
  filename: string,
  bytes: Uint8Array,
  maxRows = MAX_ROSTER_ROWS,
): Promise<RosterTable> {
  const isXlsx = /\.xlsx$/i.test(filename) || (bytes[0] === 0x50 && bytes[1] === 0x4b);
  const rows: string[][] = [];
  if (isXlsx) {
    const wb = new ExcelJS.Workbook();
    try {
      await wb.xlsx.load(Buffer.from(bytes) as unknown as ArrayBuffer);
    } catch {
      throw new UserError("The file is not a readable XLSX workbook. Save it again as .xlsx or as CSV.");
    }
    const ws = wb.worksheets[0];
    if (!ws) throw new UserError("The workbook has no sheet.");
    if (ws.actualRowCount > maxRows + 1)
      throw new UserError(`The sheet has more than ${maxRows} data rows, the most one import takes; split the file.`);
    ws.eachRow({ includeEmpty: true }, (row) => {
      const vals = (row.values as ExcelJS.CellValue[]).slice(1); // exceljs rows are 1-based
      rows.push(vals.map(cellText).map((s) => s.trim()));
    });
  } else {
    const parser = Readable.from([Buffer.from(bytes)]).pipe(
      parseCsv({ bom: true, relax_column_count: true, skip_empty_lines: true, trim: true }),
    );
    try {
      for await (const record of parser as AsyncIterable<string[]>) {
        rows.push(record);
        if (rows.length > maxRows + 1) {
          parser.destroy();
          throw new UserError(
            `The file has more than ${maxRows} data rows, the most one import takes; split the file.`,
          );
        }
      }
    } catch (e) {
      if (e instanceof UserError) throw e;
      const err = e as { lines?: number; message: string };
      throw new UserError(`The file is not readable CSV${err.lines ? ` (line ${err.lines})` : ""}: ${err.message}`);
    }
  }
  while (rows.length && rows[rows.length - 1].every((c) => c === "")) rows.pop();
  if (rows.length === 0 || rows[0].every((c) => c === ""))
    throw new UserError("The file is empty; the first row must name the columns.");
  const headers = rows[0].map((h) => h.replace(/^\uFEFF/, "").trim());
  return { headers, rows: rows.slice(1) };
}

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

export async function saveRosterUpload(
  principal: Principal & { kind: "user" },
  filename: string,
  bytes: Uint8Array,
): Promise<number> {
  const table = await readRosterFile(filename, bytes);
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
      created_at: new Date().toISOString(),
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
}

/** An upload, only for the person who made it. */
export async function getRosterUpload(id: number, userId: number, k: Db = db()): Promise<RosterUpload | null> {
  const r = await k("roster_imports").where({ id, created_by: userId }).first();
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
  };
}

export async function recentRosterUploads(userId: number, limit = 10) {
  const rows = await db()("roster_imports")
    .where({ created_by: userId })
    .orderBy("id", "desc")
    .limit(limit)
    .select("id", "filename", "row_count", "status", "summary", "created_at");
  return rows.map((r) => ({
    id: r.id,
    filename: r.filename,
    rowCount: r.row_count,
    status: r.status,
    summary: r.summary ? (JSON.parse(r.summary) as RosterSummary) : null,
    createdAt: String(r.created_at),
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
    .update({ status: "discarded", rows: null, finished_at: new Date().toISOString() });
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

/** Validates the rows and compares them with the workers on file (upsert by employee number). */
export async function planRoster(
  rows: string[][],
  mapping: RosterMapping,
  scope: Scope,
  k: Db = db(),
): Promise<RosterPlan> {
  const v = validateRoster(rows, mapping, await rosterSites(k), allowedSites(scope));
  const existing = new Map<string, Record<string, unknown>>();
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
    if (!inScope(scope, w.site_id as number, w.department_id as number)) {
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
    const cmp = (field: string, col: string, val: unknown) => {
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
    if (fields.length) updates.push({ row: r, id: w.id as number, fields, patch });
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
  const at = new Date().toISOString();
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
  try {
    return await db().transaction(async (trx) => {
      await trx("roster_imports").where({ id, created_by: principal.user.id }).forUpdate().first("id");
      const up = await getRosterUpload(id, principal.user.id, trx);
      if (!up) throw notFound("That roster upload does not exist.");
      if (up.status !== "uploaded" || !up.rows) throw conflict(`That roster upload was already ${up.status}.`);
      const plan = await planRoster(up.rows, up.mapping, principal.scope, trx);
      const summary = await applyRosterPlan(trx, plan, principal.user.id);
      await trx("roster_imports")
        .where({ id })
        .update({
          status: "imported",
          rows: null,
          summary: JSON.stringify(summary),
          finished_at: new Date().toISOString(),
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

/** Roster rows in the import's own column names (site and department codes), so an export re-imports as is. */
export async function rosterExportRows(scope: Scope): Promise<Record<string, unknown>[]> {
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
    .orderBy("workers.employee_number");
  return whereWorkerInScope(q, scope);
}

export { ROSTER_FIELDS };
