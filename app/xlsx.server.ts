import { once } from "node:events";
import { PassThrough, Readable } from "node:stream";
import ExcelJS from "exceljs";
import yauzl from "yauzl";
import { UserError } from "~/errors";

// Spreadsheets in and out: the one owner of the formula rule (exports never hold a cell a spreadsheet would
// run, and what they hold re-imports unchanged), of the limits an uploaded workbook's zip archive must keep,
// and of writing a workbook to a response (buffered for small exports, streamed for large ones).

// ── Formula-like text ──────────────────────────────────────────────────────────────────────────────
// Text that a spreadsheet would take for a formula when typed (=, +, -, @, tab, CR first; OWASP's
// "CSV injection" list) is written as-is into a string cell formatted as Text ("@"): opening the file never
// evaluates it and editing the cell keeps it text, and the value reads back unchanged. Text that already
// starts with apostrophes followed by such a character gets one more apostrophe, and import takes one off:
// that keeps every string exact and also undoes the apostrophe that older exports put before formula-like text.
const FORMULA_LIKE = /^[=+\-@\t\r]/;
const ESCAPED = /^'+[=+\-@\t\r]/;

/** The value to write for a cell, and whether the cell must be a Text cell. */
export function safeCell(v: unknown): { value: unknown; text: boolean } {
  if (typeof v !== "string") return { value: v, text: false };
  if (ESCAPED.test(v)) return { value: `'${v}`, text: true };
  return { value: v, text: FORMULA_LIKE.test(v) };
}

/** An imported cell's text with the export's escape taken off. */
export function unescapeCellText(s: string): string {
  return ESCAPED.test(s) ? s.slice(1) : s;
}

export interface SheetColumn {
  header: string;
  key: string;
  width?: number;
}
export interface SheetSpec {
  name: string;
  columns: SheetColumn[];
  rows: Record<string, unknown>[];
  note?: string;
}

function startSheet(ws: ExcelJS.Worksheet, columns: SheetColumn[]) {
  ws.columns = columns.map((c) => ({ header: c.header, key: c.key, width: c.width ?? 18 }));
  ws.getRow(1).font = { bold: true };
}

function addSafeRow(ws: ExcelJS.Worksheet, columns: SheetColumn[], record: Record<string, unknown>): ExcelJS.Row {
  const cells = columns.map((c) => safeCell(record[c.key]));
  const row = ws.addRow(cells.map((c) => c.value));
  cells.forEach((c, i) => {
    if (c.text) row.getCell(i + 1).numFmt = "@";
  });
  return row;
}

export async function workbookBuffer(sheets: SheetSpec[]): Promise<Buffer> {
  const wb = new ExcelJS.Workbook();
  wb.creator = "Limberly";
  wb.created = new Date(0); // deterministic files: the export time is in the file name instead
  for (const s of sheets) {
    const ws = wb.addWorksheet(s.name.slice(0, 31));
    startSheet(ws, s.columns);
    for (const r of s.rows) addSafeRow(ws, s.columns, r);
    if (s.note) ws.addRow([]);
    if (s.note) ws.addRow([s.note]);
  }
  return Buffer.from(await wb.xlsx.writeBuffer());
}

function xlsxHeaders(filename: string): HeadersInit {
  return {
    "Content-Type": "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet",
    "Content-Disposition": `attachment; filename="${filename.replace(/[^A-Za-z0-9._-]/g, "_")}"`,
    "Cache-Control": "no-store",
  };
}

export function xlsxResponse(buffer: Buffer, filename: string): Response {
  return new Response(new Uint8Array(buffer), { headers: xlsxHeaders(filename) });
}

/**
 * One sheet written while its rows are read: exceljs's streaming writer (inline strings, each row committed
 * as it is added) into the response body, one page of rows at a time. The next page waits until the last one
 * has been zipped and the body has drained (the client reads slower), so memory stays flat whatever the row count.
 * A client that goes away stops the reading.
 */
export function streamedXlsxResponse(
  spec: { name: string; columns: SheetColumn[]; pages: AsyncIterable<Record<string, unknown>[]> },
  filename: string,
): Response {
  const out = new PassThrough();
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: out, useStyles: true, useSharedStrings: false });
  wb.creator = "Limberly";
  wb.created = new Date(0);
  void (async () => {
    const ws = wb.addWorksheet(spec.name.slice(0, 31));
    startSheet(ws, spec.columns);
    for await (const page of spec.pages) {
      if (out.destroyed) return;
      for (const r of page) addSafeRow(ws, spec.columns, r).commit();
      await drained(ws, out);
    }
    ws.commit();
    await wb.commit();
  })().catch((e: unknown) => out.destroy(e instanceof Error ? e : new Error(String(e))));
  return new Response(Readable.toWeb(out) as ReadableStream<Uint8Array>, { headers: xlsxHeaders(filename) });
}

/**
 * Waits until the committed rows have moved on. exceljs's sheet stream hands its data to the zip archiver
 * without waiting (exceljs 4.4 internals: the sheet's `stream.pipes[0]`), so the rows would pile up in front
 * of the deflate step; waiting for that pipe (and for the response body) to drain keeps the backlog to one page.
 */
async function drained(ws: ExcelJS.Worksheet, out: PassThrough) {
  const pipe = (ws as unknown as { stream?: { pipes?: (NodeJS.EventEmitter & WithState)[] } }).stream?.pipes?.[0];
  const waiting = () => !out.destroyed && (pipe?._writableState?.needDrain || out.writableNeedDrain);
  if (!waiting()) return;
  const stop = new AbortController();
  const closed = once(out, "close", { signal: stop.signal }).catch(() => undefined);
  try {
    while (waiting()) {
      const target = pipe?._writableState?.needDrain ? pipe : out;
      await Promise.race([once(target, "drain", { signal: stop.signal }).catch(() => undefined), closed]);
    }
  } finally {
    stop.abort();
  }
}
type WithState = { _writableState?: { needDrain?: boolean } };

// ── Uploaded workbooks: zip limits ─────────────────────────────────────────────────────────────────
// An XLSX file is a zip archive. Its central directory states each entry's packed and unpacked size, so an
// archive that would unpack to far more than its size (a "zip bomb") is refused from the directory alone,
// before anything is inflated. A roster of the most rows an import takes unpacks to some 30 MB with a
// ratio near 10 to 1; the limits leave room for formatting and stay far below what would tie a server up.
export const XLSX_LIMITS = {
  maxEntries: 1000,
  maxUnpackedBytes: 200 * 1024 * 1024,
  /** Unpacked ÷ packed size of one entry, checked for entries over `ratioFloorBytes`. */
  maxRatio: 100,
  ratioFloorBytes: 1024 * 1024,
};

const NOTHING_SAVED = "Nothing was saved.";
const fmtMb = (n: number) => `${Math.round(n / 1024 / 1024).toLocaleString("en")} MB`;

function openZip(bytes: Uint8Array): Promise<yauzl.ZipFile> {
  return new Promise((resolve, reject) =>
    yauzl.fromBuffer(
      Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength),
      { lazyEntries: true, autoClose: true, strictFileNames: false, validateEntrySizes: true },
      (err, zip) => (err || !zip ? reject(err ?? new Error("no zip")) : resolve(zip)),
    ),
  );
}

/** Each entry of the archive in directory order; `visit` returning false stops the walk. */
async function walkEntries(zip: yauzl.ZipFile, visit: (e: yauzl.Entry) => Promise<boolean> | boolean) {
  await new Promise<void>((resolve, reject) => {
    zip.on("error", reject);
    zip.on("end", () => resolve());
    zip.on("entry", (e: yauzl.Entry) => {
      Promise.resolve(visit(e)).then(
        (go) => {
          if (go) zip.readEntry();
          else {
            zip.close();
            resolve();
          }
        },
        (err) => {
          zip.close();
          reject(err);
        },
      );
    });
    zip.readEntry();
  });
}

export const UNREADABLE_XLSX = "The file is not a readable XLSX workbook. Save it again as .xlsx or as CSV.";

/**
 * Checks an uploaded workbook's zip directory against XLSX_LIMITS without inflating anything; throws a
 * UserError (413) naming the limit.
 */
export async function checkXlsxArchive(bytes: Uint8Array): Promise<void> {
  let zip: yauzl.ZipFile;
  try {
    zip = await openZip(bytes);
  } catch {
    throw new UserError(UNREADABLE_XLSX);
  }
  const L = XLSX_LIMITS;
  if (zip.entryCount > L.maxEntries) {
    zip.close();
    throw new UserError(
      `The workbook has ${zip.entryCount.toLocaleString("en")} entries; the most accepted is ${L.maxEntries.toLocaleString("en")}. Save the sheet again on its own or as CSV. ${NOTHING_SAVED}`,
      { status: 413 },
    );
  }
  let total = 0;
  let worst: { name: string; ratio: number } | null = null;
  try {
    await walkEntries(zip, (e) => {
      total += e.uncompressedSize;
      const ratio = e.uncompressedSize / Math.max(1, e.compressedSize);
      if (e.uncompressedSize > L.ratioFloorBytes && ratio > L.maxRatio && (!worst || ratio > worst.ratio))
        worst = { name: e.fileName, ratio };
      return total <= L.maxUnpackedBytes;
    });
  } catch {
    throw new UserError(UNREADABLE_XLSX);
  }
  if (total > L.maxUnpackedBytes)
    throw new UserError(
      `The workbook unpacks to more than ${fmtMb(L.maxUnpackedBytes)} (its zip directory states at least ${fmtMb(total)}); the most accepted is ${fmtMb(L.maxUnpackedBytes)}. Split the file or save it as CSV. ${NOTHING_SAVED}`,
      { status: 413 },
    );
  const w = worst as { name: string; ratio: number } | null;
  if (w)
    throw new UserError(
      `The workbook's entry ${w.name} expands ${Math.round(w.ratio).toLocaleString("en")} times its packed size; the most accepted is ${L.maxRatio} times, so it is refused as a possible zip bomb. Save the sheet again or as CSV. ${NOTHING_SAVED}`,
      { status: 413 },
    );
}

/**
 * Inflates every entry once, counting bytes and keeping nothing: an entry that holds more than the directory
 * states (a crafted or damaged archive) is refused, so later reading is bounded by the checked sizes. Runs
 * off the request thread (it inflates up to the unpacked limit).
 */
export async function verifyXlsxEntries(bytes: Uint8Array): Promise<void> {
  let zip: yauzl.ZipFile;
  try {
    zip = await openZip(bytes);
  } catch {
    throw new UserError(UNREADABLE_XLSX);
  }
  await walkEntries(zip, async (e) => {
    if (e.fileName.endsWith("/")) return true;
    try {
      const stream = await new Promise<Readable>((resolve, reject) =>
        zip.openReadStream(e, (err, s) => (err || !s ? reject(err ?? new Error("no stream")) : resolve(s))),
      );
      for await (const _ of stream);
    } catch {
      throw new UserError(
        `The workbook's entry ${e.fileName} holds more than its zip directory states, or cannot be unpacked; it is refused as damaged or crafted. Save it again as .xlsx or as CSV. ${NOTHING_SAVED}`,
      );
    }
    return true;
  });
}

/**
 * The first sheet's rows as cell values (1-based rows, empty ones included), or `tooMany` when it has more
 * than `maxRows` rows with values. exceljs's whole-workbook reader, run inside the upload-reading worker, so
 * its memory is bounded by that worker's heap limit. Its streaming reader is not used: it spools every sheet
 * that comes before the shared strings in the archive (as in files saved by Excel and by exceljs itself) to
 * a temporary file, and roster data is not to be written to the server's disks.
 */
export async function readFirstSheetRows(
  bytes: Uint8Array,
  maxRows: number,
  tooMany: () => Error,
): Promise<ExcelJS.CellValue[][]> {
  const wb = new ExcelJS.Workbook();
  try {
    await wb.xlsx.load(Buffer.from(bytes) as unknown as ArrayBuffer);
  } catch {
    throw new UserError(UNREADABLE_XLSX);
  }
  const ws = wb.worksheets[0];
  if (!ws) throw new UserError("The workbook has no sheet.");
  if (ws.actualRowCount > maxRows) throw tooMany();
  const rows: ExcelJS.CellValue[][] = [];
  ws.eachRow({ includeEmpty: true }, (row) => {
    rows.push((row.values as ExcelJS.CellValue[]).slice(1)); // exceljs rows are 1-based
  });
  return rows;
}
