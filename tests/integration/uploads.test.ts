import ExcelJS from "exceljs";
import { beforeAll, describe, expect, it } from "vitest";
import { type Browserless, PERSONA, pageText, signIn, testDb, useStackDatabaseInProcess } from "./helpers";
import { declareUncompressedSize, rosterWorkbook, sharedStringsBomb, withManyEntries } from "./xlsx-fixtures";

// Uploaded workbooks against the running stack: hostile archives are refused from their zip directory
// before anything is inflated, accepted ones are read off the request thread within limits, an unedited
// roster export re-imports without a change, and a committed import says so after a reload and on a retry.
// Outside reference: exceljs reads the exported workbook back (cell types and values).
const k = testDb();
const XLSX = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet";
const HEADER = ["Employee number", "Given name", "Family name", "E-mail", "Site", "Department"];
const MB = 1024 * 1024;

let assessor: Browserless;
beforeAll(async () => {
  assessor = (await signIn(PERSONA.assessor)).client;
});

function upload(name: string, bytes: Uint8Array, type = XLSX) {
  const fd = new FormData();
  fd.append("roster", new Blob([new Uint8Array(bytes)], { type }), name);
  return assessor.request("/assess/roster", { method: "POST", body: fd });
}

const text = (html: string) => pageText(html);

async function rowCounts() {
  const [imports] = await k("roster_imports").count({ n: "*" });
  const [workers] = await k("workers").count({ n: "*" });
  return { imports: Number(imports.n), workers: Number(workers.n) };
}

const base = () => rosterWorkbook([HEADER, ["HV-93001", "Ada", "Bomb", "", "NY", "KT"]]);

describe("hostile workbooks are refused from the zip directory, changing nothing", () => {
  it("a small workbook whose shared strings expand a thousandfold", async () => {
    const bomb = await sharedStringsBomb(await base(), 64 * MB);
    expect(bomb.byteLength).toBeLessThan(MB / 4);
    const before = await rowCounts();
    const res = await upload("bomb.xlsx", bomb);
    expect(res.status).toBe(413);
    const body = text(await res.text());
    expect(body).toContain("xl/sharedStrings.xml");
    expect(body).toContain("the most accepted is 100 times");
    expect(body).toContain("Nothing was saved.");
    expect(await rowCounts()).toEqual(before);
  });

  it("a workbook whose entries add up to more than 200 MB", async () => {
    const big = declareUncompressedSize(await base(), "xl/worksheets/sheet1.xml", 300 * MB);
    const before = await rowCounts();
    const res = await upload("big.xlsx", big);
    expect(res.status).toBe(413);
    const body = text(await res.text());
    expect(body).toContain("more than 200 MB");
    expect(body).toContain("Nothing was saved.");
    expect(await rowCounts()).toEqual(before);
  });

  it("a workbook with more than 1,000 entries", async () => {
    const many = withManyEntries(await base(), 1000);
    const before = await rowCounts();
    const res = await upload("many.xlsx", many);
    expect(res.status).toBe(413);
    const body = text(await res.text());
    expect(body).toMatch(/has 1,0\d\d entries; the most accepted is 1,000/);
    expect(await rowCounts()).toEqual(before);
  });

  it("a workbook whose entry inflates past the size its directory states", async () => {
    const lying = declareUncompressedSize(await base(), "xl/worksheets/sheet1.xml", 10);
    const before = await rowCounts();
    const res = await upload("lying.xlsx", lying);
    expect(res.status).toBe(400);
    const body = text(await res.text());
    expect(body).toContain("xl/worksheets/sheet1.xml holds more than its zip directory states");
    expect(await rowCounts()).toEqual(before);
  });

  it("accepts the same workbook untouched", async () => {
    const res = await upload("fine.xlsx", await base());
    expect(res.status).toBe(302);
    const id = Number(res.headers.get("Location")!.split("/").pop());
    const row = await k("roster_imports").where({ id }).first();
    expect(JSON.parse(row.rows)).toEqual([["HV-93001", "Ada", "Bomb", "", "NY", "KT"]]);
  });
});

describe("accepted files are read off the request thread, within limits", () => {
  it("stops a read that runs past its time limit and says so", async () => {
    useStackDatabaseInProcess();
    const { readRosterFileOffThread } = await import("~/jobs/upload-read.server");
    const bytes = await rosterWorkbook([HEADER, ["HV-93002", "Bo", "Slow", "", "NY", "KT"]]);
    await expect(readRosterFileOffThread("slow.xlsx", bytes, { timeLimitMs: 1 })).rejects.toThrow(
      "Reading the file took longer than 0.001 s, the most one upload may take",
    );
    const table = await readRosterFileOffThread("ok.xlsx", bytes);
    expect(table).toEqual({ headers: HEADER, rows: [["HV-93002", "Bo", "Slow", "", "NY", "KT"]] });
  });

  it("refuses a third read at once for the organisation with 429, and takes one again when a slot frees", async () => {
    useStackDatabaseInProcess();
    const { withUploadReadSlot, MAX_READS_AT_ONCE } = await import("~/jobs/upload-read.server");
    const releases: (() => void)[] = [];
    const held = Array.from({ length: MAX_READS_AT_ONCE }, () =>
      withUploadReadSlot(() => new Promise<void>((r) => releases.push(r))),
    );
    const refused = withUploadReadSlot(async () => "ran");
    await expect(refused).rejects.toMatchObject({
      status: 429,
      message: `${MAX_READS_AT_ONCE} files are already being read for your organisation, the most at once; try again in a minute. Nothing was saved.`,
    });
    for (const r of releases) r();
    await Promise.all(held);
    await expect(withUploadReadSlot(async () => "ran")).resolves.toBe("ran");
  });
});

describe("roster export", () => {
  it("re-uploading the unedited export changes nothing, names starting with = + - @ ' included", async () => {
    const site = await k("sites").where({ code: "RS" }).first("id");
    const dept = await k("departments").where({ site_id: site.id }).orderBy("id").first("id");
    const at = new Date().toISOString();
    const names = [
      ["=1+2", '=HYPERLINK("http://x","y")'],
      ["+Plus", "-Minus"],
      ["@At", "Plain"],
      ["'=Quoted", "'Apostrophe"],
      ["-", "=cmd|' /C calc'!A0"],
    ];
    await k("workers").insert(
      names.map(([given, family], i) => ({
        employee_number: `HV-9400${i}`,
        given_name: given,
        family_name: family,
        email: i % 2 ? null : `rt${i}@harrowvale.example`,
        site_id: site.id,
        department_id: dept.id,
        stage: "invited",
        created_at: at,
        updated_at: at,
      })),
    );
    const snapshot = () =>
      k("workers")
        .orderBy("id")
        .select("id", "employee_number", "given_name", "family_name", "email", "site_id", "department_id", "stage")
        .select("updated_at");
    const before = await snapshot();

    const res = await assessor.request("/assess/roster/export.xlsx");
    expect(res.status).toBe(200);
    const bytes = new Uint8Array(await res.arrayBuffer());
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(Buffer.from(bytes) as unknown as ArrayBuffer);
    const sheet = wb.worksheets[0];
    let formulas = 0;
    const byNumber = new Map<string, ExcelJS.Row>();
    sheet.eachRow((r) => {
      byNumber.set(String(r.getCell(1).value), r);
      r.eachCell((c) => {
        if (c.type === ExcelJS.ValueType.Formula) formulas++;
      });
    });
    expect(formulas).toBe(0);
    const first = byNumber.get("HV-94000")!;
    expect(first.getCell(2).type).toBe(ExcelJS.ValueType.String);
    expect(first.getCell(2).value).toBe("=1+2");
    expect(first.getCell(2).numFmt).toBe("@"); // a Text cell: a spreadsheet keeps it text, also when edited
    const exportedRows = sheet.actualRowCount - 1;

    const up = await upload("limberly-roster.xlsx", bytes);
    expect(up.status).toBe(302);
    const url = up.headers.get("Location")!;
    const preview = text(await (await assessor.request(url)).text());
    expect(preview).toContain(
      `${exportedRows} rows: 0 new, 0 to update, ${exportedRows} unchanged, 0 with errors (skipped).`,
    );
    expect((await assessor.postForm(url, { intent: "import" })).status).toBe(200);
    expect(await snapshot()).toEqual(before);
    const imported = await k("workers").where("employee_number", "like", "HV-9400%").orderBy("employee_number");
    expect(imported.map((w) => [w.given_name, w.family_name])).toEqual(names);
  });
});

describe("a committed import reads as committed", () => {
  it("after a reload the page shows when and by whom, with the counts; a retry says it was already completed", async () => {
    useStackDatabaseInProcess();
    const { formatInstant } = await import("~/dates");
    const { organisationTimeZone } = await import("~/models/sites.server");
    const csv = new TextEncoder().encode(`${HEADER.join(",")}\nHV-95001,Cleo,Commit,,NY,KT\n`);
    const up = await upload("commit.csv", csv, "text/csv");
    expect(up.status).toBe(302);
    const url = up.headers.get("Location")!;
    // The answer to the import is not read, as when the connection drops after the commit.
    await assessor.postForm(url, { intent: "import" });
    const id = Number(url.split("/").pop());
    const row = await k("roster_imports").where({ id }).first();
    expect(row.status).toBe("imported");
    const when = formatInstant(row.finished_at, await organisationTimeZone());

    const page = text(await (await assessor.request(url)).text());
    expect(page).toContain(`Imported on ${when} by Morwenna Pike`);
    expect(page).toContain("1 new workers · 0 updated · 0 unchanged · 0 rows skipped for errors");
    expect(page).not.toContain("Import 1 valid row(s)");

    const workersBefore = (await rowCounts()).workers;
    const retry = await assessor.postForm(url, { intent: "import" });
    expect(retry.status).toBe(409);
    const body = text(await retry.text());
    expect(body).toContain(`This import was already completed on ${when} by Morwenna Pike`);
    expect(body).toContain("1 new, 0 updated, 0 unchanged, 0 skipped");
    expect((await rowCounts()).workers).toBe(workersBefore);

    const list = text(await (await assessor.request("/assess/roster")).text());
    expect(list).toContain(`1 rows · imported ${when}`);
  });
});
