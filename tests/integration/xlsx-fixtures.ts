import ExcelJS from "exceljs";
import { unzipSync, Zip, ZipDeflate, zipSync } from "fflate";

// Workbooks made at test time (no binaries in the repository): a plain roster workbook, and hostile variants
// of it — a shared-strings entry that inflates far past its compressed size (built in 1 MB chunks, so even a
// 1 GB bomb needs little memory to make), an archive with very many entries, and an archive whose central
// directory states other sizes than its entries have.

export async function rosterWorkbook(rows: string[][]): Promise<Uint8Array> {
  const wb = new ExcelJS.Workbook();
  const ws = wb.addWorksheet("Roster");
  for (const r of rows) ws.addRow(r);
  return new Uint8Array(await wb.xlsx.writeBuffer());
}

/** The workbook with its shared-strings entry replaced by one string of `expandedBytes` letters. */
export function sharedStringsBomb(base: Uint8Array, expandedBytes: number): Promise<Uint8Array> {
  const files = unzipSync(base);
  delete files["xl/sharedStrings.xml"];
  return new Promise((resolve, reject) => {
    const parts: Uint8Array[] = [];
    const zip = new Zip((err, chunk, final) => {
      if (err) return reject(err);
      parts.push(chunk);
      if (final) resolve(concat(parts));
    });
    for (const [name, data] of Object.entries(files)) {
      const f = new ZipDeflate(name, { level: 6 });
      zip.add(f);
      f.push(data, true);
    }
    const bomb = new ZipDeflate("xl/sharedStrings.xml", { level: 9 });
    zip.add(bomb);
    const enc = new TextEncoder();
    bomb.push(enc.encode('<?xml version="1.0" encoding="UTF-8"?><sst count="1" uniqueCount="1"><si><t>'));
    const chunk = new Uint8Array(1024 * 1024).fill(0x41);
    for (let left = expandedBytes; left > 0; left -= chunk.length)
      bomb.push(left >= chunk.length ? chunk : chunk.subarray(0, left));
    bomb.push(enc.encode("</t></si></sst>"), true);
    zip.end();
  });
}

/** The workbook with `extra` further tiny entries. */
export function withManyEntries(base: Uint8Array, extra: number): Uint8Array {
  const files: Record<string, Uint8Array> = unzipSync(base);
  for (let i = 0; i < extra; i++) files[`xl/media/pad${i}.txt`] = new Uint8Array([0x78]);
  return zipSync(files);
}

/** A copy whose central-directory record for `name` states `size` as the entry's uncompressed size. */
export function declareUncompressedSize(zip: Uint8Array, name: string, size: number): Uint8Array {
  const out = new Uint8Array(zip);
  const view = new DataView(out.buffer);
  const wanted = new TextEncoder().encode(name);
  for (let i = 0; i + 46 <= out.length; i++) {
    if (view.getUint32(i, true) !== 0x02014b50) continue;
    const nameLength = view.getUint16(i + 28, true);
    const candidate = out.subarray(i + 46, i + 46 + nameLength);
    if (candidate.length === wanted.length && candidate.every((b, j) => b === wanted[j])) {
      view.setUint32(i + 24, size, true);
      return out;
    }
  }
  throw new Error(`no central-directory record for ${name}`);
}

function concat(parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}
