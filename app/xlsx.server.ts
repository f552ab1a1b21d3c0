import ExcelJS from "exceljs";

// Spreadsheet exports. Text cells that a spreadsheet would run as a formula (=, +, -, @, tab, CR)
// are prefixed with an apostrophe-like quote so they stay text (OWASP "CSV injection" guidance).
export function neutraliseCell(v: unknown): unknown {
  if (typeof v !== "string") return v;
  return /^[=+\-@\t\r]/.test(v) ? `'${v}` : v;
}

export interface SheetSpec {
  name: string;
  columns: { header: string; key: string; width?: number }[];
  rows: Record<string, unknown>[];
  note?: string;
}

export async function workbookBuffer(sheets: SheetSpec[]): Promise<Buffer> {
  const wb = new ExcelJS.Workbook();
  wb.creator = "Limberly";
  wb.created = new Date(0); // deterministic files: the export time is in the file name instead
  for (const s of sheets) {
    const ws = wb.addWorksheet(s.name.slice(0, 31));
    ws.columns = s.columns.map((c) => ({ header: c.header, key: c.key, width: c.width ?? 18 }));
    ws.getRow(1).font = { bold: true };
    for (const r of s.rows) {
      const safe: Record<string, unknown> = {};
      for (const c of s.columns) safe[c.key] = neutraliseCell(r[c.key]);
      ws.addRow(safe);
    }
    if (s.note) ws.addRow([]).commit?.();
    if (s.note) ws.addRow([s.note]);
  }
  return Buffer.from(await wb.xlsx.writeBuffer());
}

export function xlsxResponse(buffer: Buffer, filename: string): Response {
  return new Response(new Uint8Array(buffer), {
    headers: {
      "Content-Type": "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet",
      "Content-Disposition": `attachment; filename="${filename.replace(/[^A-Za-z0-9._-]/g, "_")}"`,
      "Cache-Control": "no-store",
    },
  });
}
