import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import ExcelJS from "exceljs";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { SWAY_PROCESSING } from "~/compute/features/sway-processing";
import { computeTrace, parseTrace } from "~/compute/trace-parsing";
import { everythingAbout } from "~/models/worker-export.server";
import {
  type Browserless,
  freshConsentedWorker,
  PERSONA,
  pageText,
  signIn,
  testDb,
  useStackDatabaseInProcess,
} from "./helpers";

// Assessment area against the running stack and the seeded demo (seeds/01, 02).
// Outside references named beside the checks: Node's crypto for SHA-256, exceljs for reading the export,
// the shared trace parser (itself checked against published references in tests/reference) for values.
const k = testDb();
const TRACES = path.resolve(__dirname, "../../seeds/traces");

let assessor: Browserless;
beforeAll(async () => {
  assessor = (await signIn(PERSONA.assessor)).client;
});

const text = (html: string) => pageText(html);

function multipart(
  fields: Record<string, string>,
  file?: { field: string; name: string; bytes: Uint8Array; type?: string },
): FormData {
  const fd = new FormData();
  for (const [key, v] of Object.entries(fields)) fd.append(key, v);
  if (file) fd.append(file.field, new Blob([new Uint8Array(file.bytes)], { type: file.type ?? "text/csv" }), file.name);
  return fd;
}

async function workerByNumber(n: string) {
  return k("workers").where({ employee_number: n }).first();
}

describe("refusals: coordinator, manager and admin never get assessment data", () => {
  it("answers 403 to coordinator, manager and admin on a worker record, a session page and the battery pages", async () => {
    const session = await k("assessment_sessions").orderBy("id").first("id", "worker_id");
    const paths = [
      `/assess/workers/${session.worker_id}`,
      `/assess/workers/${session.worker_id}/sessions/${session.id}`,
      "/assess/measures",
      "/assess/norms",
      "/assess/reliability",
    ];
    for (const who of [PERSONA.coordinator, PERSONA.manager, PERSONA.admin]) {
      const { client } = await signIn(who);
      for (const p of paths) {
        const res = await client.request(p);
        expect(res.status, `${who} GET ${p}`).toBe(403);
        const html = await res.text();
        expect(html).not.toContain("Coordination profile");
      }
    }
  });

  it("refuses coordinator and manager actions on consent and assessments, and nothing is written", async () => {
    const workerId = await freshConsentedWorker(assessor);
    const before = await k("consent_records").where({ worker_id: workerId }).count({ n: "*" }).first();
    for (const who of [PERSONA.coordinator, PERSONA.manager]) {
      const { client } = await signIn(who);
      const w = await client.postForm(`/assess/workers/${workerId}`, {
        intent: "withdraw",
        purpose: "assessment",
        confirmWithdraw: "on",
      });
      expect(w.status, `${who} withdraw`).toBe(403);
      const s = await client.postForm(`/assess/workers/${workerId}`, { intent: "session", assessedOn: "2026-11-20" });
      expect(s.status, `${who} session`).toBe(403);
    }
    const after = await k("consent_records").where({ worker_id: workerId }).count({ n: "*" }).first();
    expect(after).toEqual(before);
    expect(await k("assessment_sessions").where({ worker_id: workerId }).first()).toBeUndefined();
  });

  it("lets the manager not even list workers, while the coordinator sees the list without record links", async () => {
    const { client: mgr } = await signIn(PERSONA.manager);
    expect((await mgr.request("/assess/workers")).status).toBe(403);
    const { client: coord } = await signIn(PERSONA.coordinator);
    const res = await coord.request("/assess/workers?q=HV-00002");
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain("HV-00002");
    expect(html).not.toContain('href="/assess/workers/');
  });

  it("scopes an assessor: a worker at a site outside the assignment is not found", async () => {
    // Give a new assessor only Eastgate and ask for a North Yard worker.
    const eg = await k("sites").where({ code: "EG" }).first("id");
    const [u] = await k("users")
      .insert({
        email: "scoped.assessor@harrowvale.example",
        display_name: "Scoped Assessor",
        active: true,
        created_at: new Date().toISOString(),
      })
      .returning("id");
    await k("role_assignments").insert({
      user_id: u.id,
      role: "assessor",
      site_id: eg.id,
      created_at: new Date().toISOString(),
    });
    const { client } = await signIn("scoped.assessor@harrowvale.example");
    const ny = await k("workers as w").join("sites as s", "s.id", "w.site_id").where("s.code", "NY").first("w.id");
    expect((await client.request(`/assess/workers/${ny.id}`)).status).toBe(404);
    const list = await (await client.request("/assess/workers?size=200")).text();
    expect(list).not.toContain("North Yard");
  });
});

describe("roster import", () => {
  it("previews the demo roster with every bad row named, then imports only the valid rows", async () => {
    const bytes = fs.readFileSync(path.join(TRACES, "roster-demo.csv"));
    const up = await assessor.request("/assess/roster", {
      method: "POST",
      body: multipart({}, { field: "roster", name: "roster-demo.csv", bytes }),
    });
    expect(up.status).toBe(302);
    const previewUrl = up.headers.get("Location")!;
    const html = text(await (await assessor.request(previewUrl)).text());
    for (const expected of [
      "Row 7, Employee number: employee number is missing",
      "Row 8, E-mail: not a valid e-mail address",
      'Row 9, Site: unknown site "Westmoor"; use a site code or name (NY, RS, EG)',
      'Row 10, Department: unknown department "Welding" at Eastgate',
      "Row 11, Employee number: employee number HV-90001 appears twice in the file (first on row 2)",
      "Row 2, Employee number: employee number HV-90001 appears again later in the file",
    ])
      expect(html).toContain(expected);
    expect(html).toContain("11 rows: 4 new, 1 to update, 0 unchanged, 6 with errors (skipped).");
    expect(await workerByNumber("HV-90002")).toBeUndefined(); // preview writes nothing

    const before = await workerByNumber("HV-00002");
    const imp = await assessor.postForm(previewUrl, { intent: "import" });
    expect(imp.status).toBe(200);
    const created = await k("workers")
      .whereIn("employee_number", ["HV-90002", "HV-90003", "HV-90004", "HV-90005"])
      .select("employee_number", "stage", "email");
    expect(created.map((w) => w.employee_number).sort()).toEqual(["HV-90002", "HV-90003", "HV-90004", "HV-90005"]);
    expect(created.every((w) => w.stage === "invited")).toBe(true);
    for (const bad of ["HV-90001", "HV-90007", "HV-90008", "HV-90009"])
      expect(await workerByNumber(bad)).toBeUndefined();
    const after = await workerByNumber("HV-00002");
    expect([after.given_name, after.family_name]).toEqual(["Corrected", "Name"]);
    expect(after.email).toBe(before.email); // empty e-mail cell keeps the one on file
    const kt = await k("departments as d")
      .join("sites as s", "s.id", "d.site_id")
      .where({ "s.code": "NY", "d.code": "KT" })
      .first("d.id");
    expect(after.department_id).toBe(kt.id);
    const newId = (await workerByNumber("HV-90002")).id;
    const sc = await k("stage_changes").where({ worker_id: newId }).first();
    expect(sc).toMatchObject({ from_stage: null, to_stage: "invited" });
    expect(sc.actor_user_id).toBeGreaterThan(0);
    const batch = await k("roster_imports").orderBy("id", "desc").first();
    expect(batch.status).toBe("imported");
    expect(batch.rows).toBeNull();
    expect(JSON.parse(batch.summary)).toMatchObject({ created: 4, updated: 1, unchanged: 0, skipped: 6 });
    // Importing the same upload twice is refused.
    expect((await assessor.postForm(previewUrl, { intent: "import" })).status).toBe(409);
  });

  it("reads XLSX, upserts by employee number and exports formula-like text as Text cells", async () => {
    const wb = new ExcelJS.Workbook();
    const ws = wb.addWorksheet("Staff");
    ws.addRow(["Staff ID", "Given name", "Surname", "Email", "Site", "Dept"]);
    ws.addRow(["HV-91001", "Nell", '=HYPERLINK("http://x")', "nell@harrowvale.example", "Riverside", "Kitting"]);
    ws.addRow([
      "hv-91002",
      "@Otto",
      "Pryce",
      { text: "otto@harrowvale.example", hyperlink: "mailto:otto@harrowvale.example" },
      "RS",
      "KT",
    ]);
    const bytes = new Uint8Array(await wb.xlsx.writeBuffer());
    const up = await assessor.request("/assess/roster", {
      method: "POST",
      body: multipart(
        {},
        {
          field: "roster",
          name: "staff.xlsx",
          bytes,
          type: "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet",
        },
      ),
    });
    expect(up.status).toBe(302);
    const url = up.headers.get("Location")!;
    expect((await assessor.postForm(url, { intent: "import" })).status).toBe(200);
    const otto = await workerByNumber("HV-91002"); // employee numbers are upper-cased
    expect(otto).toMatchObject({ given_name: "@Otto", family_name: "Pryce", email: "otto@harrowvale.example" });

    const res = await assessor.request("/assess/roster/export.xlsx");
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Type")).toContain("spreadsheetml");
    const out = new ExcelJS.Workbook();
    await out.xlsx.load(await res.arrayBuffer());
    const sheet = out.worksheets[0];
    const rows: string[][] = [];
    sheet.eachRow((r) => rows.push((r.values as unknown[]).slice(1).map((v) => String(v ?? ""))));
    expect(rows[0]).toEqual(["employee_number", "given_name", "family_name", "email", "site", "department", "stage"]);
    // Formula-like text is written as it is, in a string cell formatted as Text (never a formula).
    const nell = rows.find((r) => r[0] === "HV-91001")!;
    expect(nell[2]).toBe('=HYPERLINK("http://x")');
    expect(rows.find((r) => r[0] === "HV-91002")![1]).toBe("@Otto");
    sheet.eachRow((r) => {
      if (r.getCell(1).value !== "HV-91002") return;
      expect(r.getCell(2).type).toBe(ExcelJS.ValueType.String);
      expect(r.getCell(2).numFmt).toBe("@");
    });
    // No cell of the export is a formula.
    let formulas = 0;
    sheet.eachRow((r) =>
      r.eachCell((c) => {
        if (c.type === ExcelJS.ValueType.Formula) formulas++;
      }),
    );
    expect(formulas).toBe(0);
  });

  it("names a missing column mapping and refuses a file that is not CSV or XLSX", async () => {
    const csv = new TextEncoder().encode("Number,Name\nHV-92001,Pat\n");
    const up = await assessor.request("/assess/roster", {
      method: "POST",
      body: multipart({}, { field: "roster", name: "two.csv", bytes: csv }),
    });
    const url = up.headers.get("Location")!;
    const html = await (await assessor.request(url)).text();
    expect(html).toContain("Map every required column to see the preview.");
    const r = await assessor.postForm(url, {
      intent: "map",
      "map.employeeNumber": "0",
      "map.givenName": "1",
      "map.familyName": "1",
      "map.site": "",
      "map.department": "",
      "map.email": "",
    });
    expect(r.status).toBe(400);
    const body = await r.text();
    expect(body).toContain("Family name: that column is already mapped to Given name");
    expect(body).toContain("Site: choose the column that holds it");
    const pdf = await assessor.request("/assess/roster", {
      method: "POST",
      body: multipart({}, { field: "roster", name: "roster.pdf", bytes: new Uint8Array([37, 80, 68, 70]) }),
    });
    expect(pdf.status).toBe(400);
    expect(await pdf.text()).toContain("roster.pdf is neither .csv nor .xlsx");
  });
});

describe("consent, baseline battery and withdrawal", () => {
  it("refuses an assessment without assessment consent in the data layer, whatever the caller", async () => {
    useStackDatabaseInProcess();
    const { createSession, saveManualResults, saveTrace } = await import("~/models/assessments.server");
    const { ConsentRequiredError } = await import("~/models/consent.server");
    const invited = await k("workers")
      .where({ stage: "invited" })
      .whereNotExists(k("consent_records").whereRaw("consent_records.worker_id = workers.id"))
      .first("id");
    await expect(
      createSession({ workerId: invited.id, assessedOn: "2026-11-20", assessorUserId: 1 }),
    ).rejects.toBeInstanceOf(ConsentRequiredError);
    // A session that exists for a worker who then has no consent: results and traces are refused too.
    const [s] = await k("assessment_sessions")
      .insert({ worker_id: invited.id, assessed_on: "2026-11-20", created_at: new Date().toISOString() })
      .returning("id");
    await expect(
      saveManualResults({ workerId: invited.id, sessionId: s.id, values: [], userId: 1 }),
    ).rejects.toBeInstanceOf(ConsentRequiredError);
    await expect(
      saveTrace({
        workerId: invited.id,
        sessionId: s.id,
        kind: "force",
        filename: "f.csv",
        bytes: new TextEncoder().encode("target,produced\n1,1\n2,2\n3,3\n"),
        userId: 1,
      }),
    ).rejects.toBeInstanceOf(ConsentRequiredError);
    expect(await k("assessment_results").where({ session_id: s.id }).first()).toBeUndefined();
    expect(await k("trace_uploads").where({ session_id: s.id }).first()).toBeUndefined();
    await k("assessment_sessions").where({ id: s.id }).del();
    // Through HTTP as well: 409 and no session row.
    const res = await assessor.postForm(`/assess/workers/${invited.id}`, {
      intent: "session",
      assessedOn: "2026-11-20",
    });
    expect(res.status).toBe(409);
    expect(await k("assessment_sessions").where({ worker_id: invited.id }).first()).toBeUndefined();
  });

  it("records consent, a manual test and all five trace kinds; withdrawal then erases every assessment row", async () => {
    const worker = await workerByNumber("HV-90003"); // imported above as invited
    const me = await k("users").where({ email: PERSONA.assessor }).first("id");
    const witness = await k("users").where({ email: PERSONA.assessor2 }).first("id");
    const missingConfirm = await assessor.postForm(`/assess/workers/${worker.id}`, {
      intent: "consent",
      purposes: ["assessment"],
      witnessUserId: String(witness.id),
    });
    expect(missingConfirm.status).toBe(400);
    const c = await assessor.postForm(`/assess/workers/${worker.id}`, {
      intent: "consent",
      purposes: ["assessment", "planning", "model"],
      witnessUserId: String(witness.id),
      confirmRead: "on",
    });
    expect(c.status).toBe(200);
    const consents = await k("consent_records").where({ worker_id: worker.id }).select("*");
    expect(consents).toHaveLength(3);
    const currentText = await k("consent_text_versions")
      .where({ purpose: "assessment" })
      .orderBy("effective_from", "desc")
      .first("id");
    expect(consents.find((r) => r.purpose === "assessment")).toMatchObject({
      status: "given",
      witness_user_id: witness.id,
      recorded_by: me.id,
      text_version_id: currentText.id,
    });
    expect((await workerByNumber("HV-90003")).stage).toBe("consented");

    const s = await assessor.postForm(`/assess/workers/${worker.id}`, {
      intent: "session",
      assessedOn: "2026-11-28",
      notes: "first baseline",
    });
    expect(s.status).toBe(302);
    const sessionUrl = s.headers.get("Location")!;
    const sessionId = Number(sessionUrl.split("/").pop());
    const peg = await k("measures").where({ code: "pegboard.dominant" }).first("id");
    const bad = await assessor.postForm(sessionUrl, { intent: "manual", [`m.${peg.id}`]: "16,5" });
    expect(bad.status).toBe(400);
    expect(await bad.text()).toContain("is not a number (use a decimal point)");
    expect((await assessor.postForm(sessionUrl, { intent: "manual", [`m.${peg.id}`]: "16" })).status).toBe(200);

    // The demo's approved models (one per device type) need sway area, tracking RMSE, hand participation and
    // timing SD: the forecast is made in the request whose upload completes them, and until then the notice
    // names what is missing.
    const approved = await k("model_versions").where({ status: "approved" }).select("device_type_id");
    const forecastCount = async () =>
      Number((await k("forecasts").where({ worker_id: worker.id }).count({ n: "*" }).first())!.n);
    for (const kind of ["sway", "tracking", "glove", "timing", "force"] as const) {
      const file = `${kind}.csv`;
      const bytes = fs.readFileSync(path.join(TRACES, file));
      const res = await assessor.request(sessionUrl, {
        method: "POST",
        body: multipart({ intent: "upload", kind }, { field: "trace", name: file, bytes }),
      });
      expect(res.status, file).toBe(200);
      const notice = text(await res.text());
      if (kind === "glove") {
        expect(await forecastCount()).toBe(0);
        expect(notice).toContain("No forecast: the baseline lacks Timing SD of asynchrony");
      }
      if (kind === "timing") {
        expect(await forecastCount()).toBe(approved.length);
        expect(notice).toMatch(/forecast median \d+\.\d h/);
        expect(notice).not.toContain("No forecast");
      }
      const up = await k("trace_uploads").where({ session_id: sessionId, kind }).first();
      expect(up.sha256).toBe(crypto.createHash("sha256").update(bytes).digest("hex")); // Node's crypto as the reference
      expect(up.size_bytes).toBe(bytes.byteLength);
      // Values equal the shared parser's on the same file (independent csv split by lines here).
      const rows = bytes
        .toString("utf8")
        .trim()
        .split("\n")
        .map((l) => l.split(","));
      const parsed = parseTrace(kind, rows);
      if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
      const expected = computeTrace(kind, parsed);
      const stored = JSON.parse(up.computed) as Record<string, number>;
      for (const [key, v] of Object.entries(expected)) expect(stored[key], `${file} ${key}`).toBeCloseTo(v, 9);
      expect(up.row_count).toBe(rows.length - 1);
      // The processing is stored with the trace: sway only (30 s at 100 Hz in the demo file).
      if (kind === "sway")
        expect(up).toMatchObject({
          sample_rate_hz: expect.closeTo(100, 6),
          resampled_rate_hz: 100,
          filter: SWAY_PROCESSING.filter,
          cutoff_hz: 10,
          duration_seconds: expect.closeTo(29.99, 9),
        });
      else expect(up).toMatchObject({ resampled_rate_hz: null, filter: null, cutoff_hz: null, duration_seconds: null });
    }
    // The worker's own export carries the processing with the trace, as stored.
    const exported = await everythingAbout(worker.id);
    expect(exported).not.toBeNull();
    const swayExport = exported!.assessments.flatMap((a) => a.traces).find((t) => t.kind === "sway");
    expect(swayExport?.processing).toEqual({
      resampledRateHz: 100,
      filter: SWAY_PROCESSING.filter,
      cutoffHz: 10,
      durationSeconds: expect.closeTo(29.99, 9),
    });
    const results = await k("assessment_results as r")
      .join("measures as m", "m.id", "r.measure_id")
      .where("r.session_id", sessionId)
      .select("m.code", "r.value", "r.z_score", "r.norm_set_id", "r.trace_upload_id");
    expect(results.length).toBe(11); // 1 manual + 2 per trace kind configured in the demo battery
    expect(results.every((r) => r.norm_set_id != null && Number.isFinite(r.z_score))).toBe(true);
    // z turned so positive = better: recompute one by hand against its norm.
    const area = results.find((r) => r.code === "sway.ellipseArea95")!;
    const norm = await k("norm_values as v")
      .join("measures as m", "m.id", "v.measure_id")
      .where({ "v.norm_set_id": area.norm_set_id, "m.code": "sway.ellipseArea95" })
      .first("v.mean", "v.sd");
    expect(area.z_score).toBeCloseTo(-(area.value - norm.mean) / norm.sd, 12);
    expect((await workerByNumber("HV-90003")).stage).toBe("forecast");
    const countLog = async () =>
      Number(
        (await k("access_log").where({ worker_id: worker.id, actor_user_id: me.id }).count({ n: "*" }).first())!.n,
      );
    const logged = await countLog();
    const page = await assessor.request(`/assess/workers/${worker.id}`);
    const html = await page.text();
    expect(html).toContain('data-testid="profile-table"');
    expect(text(html)).toContain("Sway 95 % ellipse area");
    // Where sway measures appear, so does how they were computed, with its sources.
    expect(text(html)).toContain("How the sway measures were computed");
    expect(text(html)).toContain("Prieto et al. (1996), IEEE Transactions on Biomedical Engineering 43:956–966");
    expect(await countLog()).toBe(logged + 1);
    const readLog = await k("access_log")
      .where({ worker_id: worker.id, actor_user_id: me.id })
      .orderBy("id", "desc")
      .first();
    expect(readLog).toMatchObject({
      resource: "assessment",
      action: "read",
      actor_role: "assessor",
      route: `/assess/workers/${worker.id}`,
    });

    // Withdraw: rows gone at once, only the withdrawal record kept.
    const wrong = await assessor.postForm(`/assess/workers/${worker.id}`, {
      intent: "withdraw",
      purpose: "assessment",
      confirm: "yes",
    });
    expect(wrong.status).toBe(400);
    expect(await k("assessment_sessions").where({ worker_id: worker.id }).first()).toBeDefined();
    const w = await assessor.postForm(`/assess/workers/${worker.id}`, {
      intent: "withdraw",
      purpose: "assessment",
      confirmWithdraw: "on",
    });
    expect(w.status).toBe(200);
    expect(await k("assessment_sessions").where({ worker_id: worker.id }).count({ n: "*" }).first()).toEqual({ n: 0 });
    expect(await k("assessment_results").where({ session_id: sessionId }).count({ n: "*" }).first()).toEqual({ n: 0 });
    expect(await k("trace_uploads").where({ session_id: sessionId }).count({ n: "*" }).first()).toEqual({ n: 0 });
    const left = await k("consent_records").where({ worker_id: worker.id, purpose: "assessment" }).select("*");
    expect(left).toHaveLength(1);
    expect(left[0]).toMatchObject({ status: "withdrawn", given_at: null, witness_user_id: null, recorded_by: me.id });
    expect(left[0].withdrawn_at).toMatch(/^\d{4}-\d{2}-\d{2}T/);
    expect(
      await k("consent_records").where({ worker_id: worker.id, purpose: "planning", status: "given" }).first(),
    ).toBeDefined();
    expect((await workerByNumber("HV-90003")).stage).toBe("withdrawn");
    const last = await k("stage_changes").where({ worker_id: worker.id }).orderBy("id", "desc").first();
    expect(last).toMatchObject({ from_stage: "baselined", to_stage: "withdrawn", actor_user_id: me.id });
    // And nothing more can be recorded.
    expect(
      (await assessor.postForm(`/assess/workers/${worker.id}`, { intent: "session", assessedOn: "2026-11-29" })).status,
    ).toBe(409);
  });

  it("shows the parse errors of a bad trace and stores nothing; refuses a file over the size cap", async () => {
    const workerId = await freshConsentedWorker(assessor);
    const s = await assessor.postForm(`/assess/workers/${workerId}`, { intent: "session", assessedOn: "2026-11-28" });
    const url = s.headers.get("Location")!;
    const sessionId = Number(url.split("/").pop());
    const cases: [string, string, string][] = [
      [
        "sway",
        "sway-bad-time.csv",
        "Row 502, t: time 4.9 is not after the previous time 4.99 (row 501); times must increase",
      ],
      [
        "tracking",
        "tracking-missing-column.csv",
        'Row 1, cursor: missing column "cursor"; a tracking trace has columns t, target, cursor',
      ],
      ["glove", "glove-too-short.csv", "the recording has 10 rows; at least 20 are needed"],
    ];
    for (const [kind, file, message] of cases) {
      const res = await assessor.request(url, {
        method: "POST",
        body: multipart(
          { intent: "upload", kind },
          { field: "trace", name: file, bytes: fs.readFileSync(path.join(TRACES, file)) },
        ),
      });
      expect(res.status, file).toBe(422);
      expect(text(await res.text()), file).toContain(message);
    }
    // Too short: the first 15 s of the demo recording. Refused with the minimum named; nothing stored.
    const sway = fs.readFileSync(path.join(TRACES, "sway.csv"), "utf8").split("\n");
    const short = await assessor.request(url, {
      method: "POST",
      body: multipart(
        { intent: "upload", kind: "sway" },
        { field: "trace", name: "sway-15s.csv", bytes: Buffer.from(`${sway.slice(0, 1501).join("\n")}\n`) },
      ),
    });
    expect(short.status).toBe(422);
    const shortText = text(await short.text());
    expect(shortText).toContain("sway-15s.csv was not stored");
    expect(shortText).toContain("t: the sway recording lasts 14.99 s; at least 20 s is needed");
    expect(await k("assessment_results").where({ session_id: sessionId }).first()).toBeUndefined();
    const declared = await assessor.request(url, {
      method: "POST",
      body: multipart(
        { intent: "upload", kind: "sway", sampleRateHz: "50" },
        { field: "trace", name: "sway.csv", bytes: fs.readFileSync(path.join(TRACES, "sway.csv")) },
      ),
    });
    expect(declared.status).toBe(422);
    expect(text(await declared.text())).toContain(
      "declared sample rate 50 Hz disagrees with the timestamps (about 100 Hz)",
    );
    const big = new Uint8Array(25 * 1024 * 1024 + 10).fill(49);
    const tooBig = await assessor.request(url, {
      method: "POST",
      body: multipart({ intent: "upload", kind: "sway" }, { field: "trace", name: "big.csv", bytes: big }),
    });
    expect(tooBig.status).toBe(413);
    expect(await tooBig.text()).toContain("larger than 25 MB");
    expect(await k("trace_uploads").where({ session_id: sessionId }).first()).toBeUndefined();
  });

  it("asks for renewed consent when a new text version is in force", async () => {
    const worker = { id: await freshConsentedWorker(assessor) };
    const me = await k("users").where({ email: PERSONA.assessor }).first("id");
    await assessor.postForm(`/assess/workers/${worker.id}`, {
      intent: "consent",
      purposes: ["model"],
      witnessUserId: String(me.id),
      confirmRead: "on",
    });
    await k("consent_text_versions").insert({
      purpose: "model",
      version: "1.1",
      body: "Renewed model text.",
      effective_from: "2026-11-01",
      created_at: new Date().toISOString(),
    });
    const html = text(await (await assessor.request(`/assess/workers/${worker.id}`)).text());
    expect(html).toContain("given (v1.0), renewal due for v1.1");
    expect(html).toContain("A new text (v1.1) is in force: ask for renewed consent.");
    await k("consent_text_versions").where({ purpose: "model", version: "1.1" }).del();
  });
});

describe("reliability", () => {
  it("reports ICC(2,1), ICC(3,1), SEM and MDC95 equal to a two-way ANOVA computed here from the database", async () => {
    const html = (await (await assessor.request("/assess/reliability")).text()).replace(/<!-- -->/g, "");
    const m = await k("measures").where({ code: "pegboard.dominant" }).first("id", "name");
    // Pairs: first two sessions ≤ 28 days apart, straight from SQL.
    const rows = await k("assessment_results as r")
      .join("assessment_sessions as s", "s.id", "r.session_id")
      .where("r.measure_id", m.id)
      .select("s.worker_id", "s.assessed_on", "r.value")
      .orderBy([{ column: "s.assessed_on" }, { column: "s.id" }]);
    const by = new Map<number, { v: number; d: string }[]>();
    for (const r of rows) {
      const l = by.get(r.worker_id) ?? [];
      if (l.length < 2) l.push({ v: r.value, d: String(r.assessed_on) });
      by.set(r.worker_id, l);
    }
    const pairs = [...by.values()]
      .filter((l) => l.length === 2 && (Date.parse(l[1].d) - Date.parse(l[0].d)) / 86_400_000 <= 28)
      .map((l) => [l[0].v, l[1].v]);
    expect(pairs.length).toBeGreaterThanOrEqual(5);
    // Shrout & Fleiss (1979) two-way ANOVA, written out independently of app/compute/reliability.ts.
    const n = pairs.length,
      kk = 2;
    const grand = pairs.flat().reduce((a, b) => a + b, 0) / (n * kk);
    const rowMeans = pairs.map((p) => (p[0] + p[1]) / 2);
    const colMeans = [0, 1].map((j) => pairs.reduce((a, p) => a + p[j], 0) / n);
    const ssr = kk * rowMeans.reduce((a, x) => a + (x - grand) ** 2, 0);
    const ssc = n * colMeans.reduce((a, x) => a + (x - grand) ** 2, 0);
    const sst = pairs.flat().reduce((a, x) => a + (x - grand) ** 2, 0);
    const bms = ssr / (n - 1),
      jms = ssc / (kk - 1),
      ems = (sst - ssr - ssc) / ((n - 1) * (kk - 1));
    const icc21 = (bms - ems) / (bms + (kk - 1) * ems + (kk * (jms - ems)) / n);
    const icc31 = (bms - ems) / (bms + (kk - 1) * ems);
    const first = pairs.map((p) => p[0]);
    const mean0 = first.reduce((a, b) => a + b, 0) / n;
    const sd = Math.sqrt(first.reduce((a, x) => a + (x - mean0) ** 2, 0) / (n - 1));
    const mdc = 1.959963985 * Math.SQRT2 * sd * Math.sqrt(1 - icc21);
    const row = html.slice(html.indexOf(m.name), html.indexOf("</tr>", html.indexOf(m.name)));
    const cells = [...row.matchAll(/<td>([^<]*)<\/td>/g)].map((x) => x[1]);
    expect(Number(cells[0])).toBe(n);
    expect(Number(cells[1])).toBeCloseTo(icc21, 3);
    expect(Number(cells[2])).toBeCloseTo(icc31, 3);
    expect(Number(cells[5].split(" ")[0])).toBeCloseTo(mdc, 1); // shown to 3 significant digits
  });
});

afterAll(async () => {
  if (process.env.DATABASE_URL !== inject("databaseUrl")) return;
  const { db } = await import("~/db.server");
  await db()
    .destroy()
    .catch(() => undefined);
});
