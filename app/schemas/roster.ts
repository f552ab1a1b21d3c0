import { z } from "zod";
import { intents } from "~/schemas/form";

// Roster rows: one zod schema per row, shared by the import preview, the import itself and
// the tests. Pure: sites and departments are passed in, so this runs without a database.

export const ROSTER_FIELDS = ["employeeNumber", "givenName", "familyName", "email", "site", "department"] as const;
export type RosterField = (typeof ROSTER_FIELDS)[number];
export const ROSTER_FIELD_LABELS: Record<RosterField, string> = {
  employeeNumber: "Employee number",
  givenName: "Given name",
  familyName: "Family name",
  email: "E-mail",
  site: "Site",
  department: "Department",
};
const REQUIRED_FIELDS: RosterField[] = ["employeeNumber", "givenName", "familyName", "site", "department"];

/** Field → index of the file column that holds it (null: not in the file). */
export type RosterMapping = Record<RosterField, number | null>;

export const MAX_ROSTER_ROWS = 50_000;
export const MAX_ROSTER_BYTES = 20 * 1024 * 1024;
/** The upload form's file field; the reader's refusals name it. */
export const ROSTER_FILE_FIELD = "roster";

const HEADER_GUESSES: Record<RosterField, RegExp> = {
  employeeNumber: /^(employee|emp|staff|payroll|personnel)[ _.-]*(no|nr|num|number|id|#)?$|^employee_?number$|^id$/i,
  givenName: /^(given|first|fore)[ _-]*name$|^first$|^given$/i,
  familyName: /^(family|last|sur)[ _-]*name$|^surname$|^last$/i,
  email: /^e[ _-]?mail([ _-]*address)?$/i,
  site: /^site([ _-]*(code|name))?$|^location$|^plant$/i,
  department: /^(department|dept)([ _-]*(code|name))?$|^team$/i,
};

/** A first guess at the mapping from the header row; the assessor confirms or changes it. */
export function guessMapping(headers: string[]): RosterMapping {
  const m = Object.fromEntries(ROSTER_FIELDS.map((f) => [f, null])) as RosterMapping;
  const used = new Set<number>();
  for (const f of ROSTER_FIELDS) {
    const i = headers.findIndex((h, idx) => !used.has(idx) && HEADER_GUESSES[f].test(h.replace(/^\uFEFF/, "").trim()));
    if (i >= 0) {
      m[f] = i;
      used.add(i);
    }
  }
  return m;
}

/**
 * The column mapping (field → column index, "" for "not in the file") of a file with `columnCount`
 * columns: required fields need a column, an index must exist, and no column serves two fields.
 */
export function mappingSchema(columnCount: number) {
  const raw = z.object(Object.fromEntries(ROSTER_FIELDS.map((f) => [f, z.string().optional()])));
  return z.preprocess(
    (v) => v ?? {},
    raw.transform((form, ctx): RosterMapping => {
      const mapping = {} as RosterMapping;
      const seen = new Map<number, RosterField>();
      const problem = (f: RosterField, message: string) => ctx.addIssue({ code: "custom", path: [f], message });
      for (const f of ROSTER_FIELDS) {
        const text = String(form[f] ?? "").trim();
        mapping[f] = null;
        if (text === "") {
          if (REQUIRED_FIELDS.includes(f)) problem(f, `${ROSTER_FIELD_LABELS[f]}: choose the column that holds it`);
          continue;
        }
        const i = Number(text);
        if (!Number.isInteger(i) || i < 0 || i >= columnCount) {
          problem(f, `${ROSTER_FIELD_LABELS[f]}: no such column`);
          continue;
        }
        const other = seen.get(i);
        if (other)
          problem(f, `${ROSTER_FIELD_LABELS[f]}: that column is already mapped to ${ROSTER_FIELD_LABELS[other]}`);
        seen.set(i, f);
        mapping[f] = i;
      }
      return mapping;
    }),
  );
}

/** The roster preview page: save the mapping (`map.<field>`), import the valid rows, or discard the upload. */
export function rosterPageSchema(columnCount: number) {
  return intents(
    z.object({ intent: z.literal("map"), map: mappingSchema(columnCount) }),
    z.object({ intent: z.literal("import") }),
    z.object({ intent: z.literal("discard") }),
  );
}

/** The mapping from flat `map.<field>` form values; errors keyed by those names. */
export function mappingFromForm(
  form: Record<string, unknown>,
  columnCount: number,
): { ok: true; mapping: RosterMapping } | { ok: false; errors: Record<string, string> } {
  const nested = Object.fromEntries(ROSTER_FIELDS.map((f) => [f, form[`map.${f}`]]));
  const r = mappingSchema(columnCount).safeParse(nested);
  if (r.success) return { ok: true, mapping: r.data };
  const errors: Record<string, string> = {};
  for (const issue of r.error.issues) errors[`map.${issue.path.join(".")}`] ??= issue.message;
  return { ok: false, errors };
}

export const rosterRowSchema = z.object({
  employeeNumber: z
    .string()
    .trim()
    .min(1, "employee number is missing")
    .max(40, "employee number is longer than 40 characters")
    .regex(/^[A-Za-z0-9][A-Za-z0-9._/-]*$/, "employee number may hold only letters, digits and . _ / -")
    .transform((s) => s.toUpperCase()),
  givenName: z.string().trim().min(1, "given name is missing").max(120, "given name is longer than 120 characters"),
  familyName: z.string().trim().min(1, "family name is missing").max(120, "family name is longer than 120 characters"),
  email: z
    .union([z.literal(""), z.email("not a valid e-mail address").max(320)])
    .transform((s) => (s === "" ? null : s.toLowerCase())),
  site: z.string().trim().min(1, "site is missing"),
  department: z.string().trim().min(1, "department is missing"),
});

export interface RosterSite {
  id: number;
  code: string;
  name: string;
  departments: { id: number; code: string; name: string }[];
}
export interface RosterRowIssue {
  row: number;
  field?: RosterField;
  message: string;
}
export interface ValidRosterRow {
  row: number;
  employeeNumber: string;
  givenName: string;
  familyName: string;
  email: string | null;
  siteId: number;
  departmentId: number;
}
export interface RosterValidation {
  rowCount: number;
  valid: ValidRosterRow[];
  issues: RosterRowIssue[];
  invalidRows: number;
}

const norm = (s: string) => s.trim().toLowerCase().replace(/\s+/g, " ");

/**
 * Checks every data row; rows are numbered as a spreadsheet shows them (header = row 1).
 * `allowedSiteIds` null means every site; otherwise a row at another site is refused.
 */
export function validateRoster(
  rows: string[][],
  mapping: RosterMapping,
  sites: RosterSite[],
  allowedSiteIds: Set<number> | null,
): RosterValidation {
  const siteByKey = new Map<string, RosterSite>();
  for (const s of sites) {
    siteByKey.set(norm(s.code), s);
    siteByKey.set(norm(s.name), s);
  }
  const issues: RosterRowIssue[] = [];
  const candidates: ValidRosterRow[] = [];
  const firstRowOf = new Map<string, number>();
  const badRows = new Set<number>();
  let rowCount = 0;
  rows.forEach((cells, i) => {
    const rowNumber = i + 2;
    if (cells.every((c) => String(c ?? "").trim() === "")) return; // blank line
    rowCount++;
    const get = (f: RosterField) => (mapping[f] == null ? "" : String(cells[mapping[f]!] ?? ""));
    const parsed = rosterRowSchema.safeParse(Object.fromEntries(ROSTER_FIELDS.map((f) => [f, get(f)])));
    const rowIssues: RosterRowIssue[] = [];
    if (!parsed.success) {
      const seenField = new Set<string>();
      for (const is of parsed.error.issues) {
        const field = String(is.path[0]) as RosterField;
        if (seenField.has(field)) continue;
        seenField.add(field);
        rowIssues.push({ row: rowNumber, field, message: is.message });
      }
    }
    const siteRaw = get("site");
    const site = siteRaw.trim() ? siteByKey.get(norm(siteRaw)) : undefined;
    let departmentId: number | undefined;
    if (siteRaw.trim() && !site) {
      rowIssues.push({
        row: rowNumber,
        field: "site",
        message: `unknown site "${siteRaw.trim()}"; use a site code or name (${sites.map((s) => s.code).join(", ")})`,
      });
    } else if (site) {
      if (allowedSiteIds && !allowedSiteIds.has(site.id)) {
        rowIssues.push({
          row: rowNumber,
          field: "site",
          message: `site "${site.name}" is outside the sites you may manage`,
        });
      }
      const deptRaw = get("department");
      if (deptRaw.trim()) {
        const d = site.departments.find((x) => norm(x.code) === norm(deptRaw) || norm(x.name) === norm(deptRaw));
        if (!d)
          rowIssues.push({
            row: rowNumber,
            field: "department",
            message: `unknown department "${deptRaw.trim()}" at ${site.name}`,
          });
        else departmentId = d.id;
      }
    }
    const empNo = get("employeeNumber").trim().toUpperCase();
    if (empNo) {
      const first = firstRowOf.get(empNo);
      if (first !== undefined) {
        rowIssues.push({
          row: rowNumber,
          field: "employeeNumber",
          message: `employee number ${empNo} appears twice in the file (first on row ${first})`,
        });
      } else firstRowOf.set(empNo, rowNumber);
    }
    if (rowIssues.length) {
      issues.push(...rowIssues);
      badRows.add(rowNumber);
      return;
    }
    const d = parsed.data!;
    candidates.push({
      row: rowNumber,
      employeeNumber: d.employeeNumber,
      givenName: d.givenName,
      familyName: d.familyName,
      email: d.email,
      siteId: site!.id,
      departmentId: departmentId!,
    });
  });
  // A duplicated employee number makes both rows doubtful: keep neither, name the first one too.
  const dupFirsts = new Set(
    issues
      .filter((x) => x.message.includes("appears twice"))
      .map((x) => /first on row (\d+)/.exec(x.message)![1])
      .map(Number),
  );
  for (const r of dupFirsts) {
    if (!badRows.has(r)) {
      const c = candidates.find((x) => x.row === r)!;
      issues.push({
        row: r,
        field: "employeeNumber",
        message: `employee number ${c.employeeNumber} appears again later in the file`,
      });
      badRows.add(r);
    }
  }
  issues.sort((a, b) => a.row - b.row);
  return { rowCount, valid: candidates.filter((c) => !badRows.has(c.row)), issues, invalidRows: badRows.size };
}
