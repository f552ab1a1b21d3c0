import { Readable } from "node:stream";
import { parse as parseCsv } from "csv-parse";
import type ExcelJS from "exceljs";
import { dateIn } from "~/dates";
import { UserError } from "~/errors";
import { MAX_ROSTER_ROWS, ROSTER_FILE_FIELD } from "~/schemas/roster";
import { readFirstSheetRows, UNREADABLE_XLSX, unescapeCellText, verifyXlsxEntries } from "~/xlsx.server";

// Reading an uploaded roster file into a table of strings. No database: a workbook is read in the
// upload-reading worker thread (app/jobs/upload-read.server.ts), after the request checked its zip directory;
// CSV is read on the request thread in chunks.

/** A file that cannot be imported: a UserError (400) at the upload form's file field. */
const fileError = (message: string) => new UserError(message, { field: ROSTER_FILE_FIELD });

export interface RosterTable {
  headers: string[];
  rows: string[][];
}

export function isXlsx(filename: string, bytes: Uint8Array): boolean {
  return /\.xlsx$/i.test(filename) || (bytes[0] === 0x50 && bytes[1] === 0x4b);
}

function cellText(v: ExcelJS.CellValue): string {
  if (v == null) return "";
  // Spreadsheet date cells come back as Dates at UTC midnight of the day typed.
  if (v instanceof Date) return dateIn(v, "UTC");
  if (typeof v === "object") {
    if ("richText" in v) return v.richText.map((t) => t.text).join("");
    if ("text" in v) return String((v as { text: unknown }).text ?? "");
    if ("result" in v) return cellText((v as { result: ExcelJS.CellValue }).result);
    return "";
  }
  return String(v);
}

const CHUNK = 64 * 1024;

const tooMany = (maxRows: number, what: string) =>
  fileError(`The ${what} has more than ${maxRows} data rows, the most one import takes; split the file.`);

/** Reads CSV (streamed through csv-parse, stops past the row cap) or XLSX (first sheet, after verifying its entries). */
export async function readRosterFile(
  filename: string,
  bytes: Uint8Array,
  maxRows = MAX_ROSTER_ROWS,
): Promise<RosterTable> {
  let rows: string[][] = [];
  if (isXlsx(filename, bytes)) {
    await verifyXlsxEntries(bytes);
    let cells: ExcelJS.CellValue[][];
    try {
      cells = await readFirstSheetRows(bytes, maxRows + 1, () => tooMany(maxRows, "sheet"));
    } catch (e) {
      if (e instanceof UserError) throw e;
      throw fileError(UNREADABLE_XLSX);
    }
    rows = cells.map((r) => Array.from(r, (v) => unescapeCellText(cellText(v).trim())));
  } else {
    // 64 kB chunks, so that parsing a large file yields to other requests between them.
    const chunks = Array.from({ length: Math.ceil(bytes.byteLength / CHUNK) }, (_, i) =>
      Buffer.from(bytes.buffer, bytes.byteOffset + i * CHUNK, Math.min(CHUNK, bytes.byteLength - i * CHUNK)),
    );
    const parser = Readable.from(chunks).pipe(
      parseCsv({ bom: true, relax_column_count: true, skip_empty_lines: true, trim: true }),
    );
    try {
      for await (const record of parser as AsyncIterable<string[]>) {
        rows.push(record.map(unescapeCellText));
        if (rows.length > maxRows + 1) {
          parser.destroy();
          throw tooMany(maxRows, "file");
        }
      }
    } catch (e) {
      if (e instanceof UserError) throw e;
      const err = e as { lines?: number; message: string };
      throw fileError(`The file is not readable CSV${err.lines ? ` (line ${err.lines})` : ""}: ${err.message}`);
    }
  }
  while (rows.length && rows[rows.length - 1].every((c) => c === "")) rows.pop();
  if (rows.length === 0 || rows[0].every((c) => c === ""))
    throw fileError("The file is empty; the first row must name the columns.");
  const headers = rows[0].map((h) => h.replace(/^\uFEFF/, "").trim());
  return { headers, rows: rows.slice(1) };
}
