import { describe, expect, inject, it } from "vitest";
import { packSessions } from "~/compute/session-packing";
import { buildProblem } from "~/models/allocation-problem.server";
import { runParametersSchema } from "~/schemas/allocation";
import { noForecastText } from "~/schemas/forecast";
import { readOutbox } from "../../scripts/smtp-catcher";
import { PERSONA, signIn, testDb } from "./helpers";

// A severe adverse event in a session over the wear-time limit, the assessor's review of the paused course
// and its decision, through the app's own routes against the running stack (real SMTP catcher). The test
// picks a trainee of Ines Calloway's without a portal account, so the portal tests' workers are untouched.
const k = testDb();
const outbox = () => readOutbox(inject("outboxDir"));
const local = (d: Date) => d.toISOString().slice(0, 16);
function nextMonday(): string {
  const d = new Date();
  d.setUTCDate(d.getUTCDate() + ((8 - d.getUTCDay()) % 7 || 7));
  return d.toISOString().slice(0, 10);
}

/** A trainee of Ines's (her site, a device she is certified for), or with `anySite` any trainee, put on her schedule. */
async function pickTrainee(anySite = false) {
  const ines = await k("trainers as t")
    .join("users as u", "u.id", "t.user_id")
    .where("u.email", PERSONA.trainer)
    .first("t.id", "t.site_id");
  const q = k("device_courses as c")
    .join("workers as w", "w.id", "c.worker_id")
    .join("forecasts as f", function () {
      this.on("f.worker_id", "c.worker_id").andOn("f.device_type_id", "c.device_type_id");
    });
  if (!anySite)
    q.join("trainer_certifications as tc", function () {
      this.on("tc.device_type_id", "c.device_type_id").andOn("tc.trainer_id", k.raw("?", [ines.id]));
    }).where("w.site_id", ines.site_id);
  const row = await q
    .where("c.status", "training")
    .whereNull("w.user_id")
    .whereNotNull("w.email")
    .whereNot("w.stage", "withdrawn")
    .select("w.id", "w.employee_number", "w.email", "w.site_id", "w.department_id", "c.device_type_id")
    .orderBy("w.employee_number", anySite ? "asc" : "desc")
    .first();
  expect(row, "a trainee of Ines's with a forecast and no portal account").toBeTruthy();
  const device = await k("device_types")
    .where({ id: row.device_type_id })
    .first("id", "name", "wear_time_limit_minutes");
  return { trainerId: ines.id as number, w: row, device };
}

async function schedule(workerId: number, deviceTypeId: number, trainerId: number, start: Date, minutes: number) {
  const [r] = await k("training_sessions")
    .insert({
      worker_id: workerId,
      device_type_id: deviceTypeId,
      trainer_id: trainerId,
      scheduled_start: local(start),
      scheduled_end: local(new Date(start.getTime() + minutes * 60_000)),
      status: "scheduled",
      created_at: new Date().toISOString(),
    })
    .returning("id");
  return r.id as number;
}

const emailsOf = async (role: string, w: { site_id: number; department_id: number }) =>
  (
    await k("role_assignments as a")
      .join("users as u", "u.id", "a.user_id")
      .where("a.role", role)
      .where("u.active", true)
      .where((q) =>
        q
          .where((o) => o.whereNull("a.site_id").whereNull("a.department_id"))
          .orWhere("a.site_id", w.site_id)
          .orWhere("a.department_id", w.department_id),
      )
      .distinct("u.email")
  )
    .map((r) => r.email as string)
    .sort();

describe("a paused course is reviewed and resumed", () => {
  it("saves a severe event over the wear-time limit with the breach as its own finding; only an assessor resumes; the worker returns to the pool under the lower limit", async () => {
    const { trainerId, w, device } = await pickTrainee();
    const limit = Number(device.wear_time_limit_minutes);
    const start = new Date(Date.now() - 3 * 3_600_000);
    start.setUTCSeconds(0, 0);
    const s1 = await schedule(w.id, device.id, trainerId, start, 30);
    const later = new Date(Date.now() + 48 * 3_600_000);
    later.setUTCSeconds(0, 0);
    const s2 = await schedule(w.id, device.id, trainerId, later, 30);
    const trainer = (await signIn(PERSONA.trainer)).client;

    // Over the limit, with a severe event: saved whole, the breach flagged, the trainer told what was saved.
    const logged = await trainer.postForm(`/train/sessions/${s1}`, {
      intent: "log",
      start: local(start),
      end: local(new Date(start.getTime() + (limit + 15) * 60_000)),
      taskScore: "0,55", // a decimal comma reads as 0.55, and the notice says so
      ae_pain: "severe",
      ae_pain_notes: "Sharp pain in the forearm; strap loosened, session ended.",
    });
    const text = (await logged.text()).replace(/<!-- -->/g, "").replace(/&quot;/g, '"');
    expect(logged.status).toBe(200);
    expect(text).toContain('Session logged with task score 0.55 (typed "0,55")');
    expect(text).toContain(`It ran ${limit + 15} minutes, over the wear-time limit of ${limit} minutes`);
    expect(text).toContain("Training is paused");
    const session = await k("training_sessions").where({ id: s1 }).first();
    expect(session.status).toBe("attended");
    expect(Number(session.task_score)).toBe(0.55);
    expect(Number(session.duration_hours) * 60).toBeCloseTo(limit + 15, 6);
    expect((await k("adverse_events").where({ session_id: s1 })).map((e) => [e.kind, e.severity])).toEqual([
      ["pain", "severe"],
    ]);
    const findings = await k("safety_findings").where({ session_id: s1 });
    expect(findings.map((f) => f.kind)).toEqual(["wear_time_breach"]);
    expect(findings[0].detail).toContain(`${limit + 15} minutes`);
    expect((await k("device_courses").where({ worker_id: w.id, device_type_id: device.id }).first()).status).toBe(
      "paused",
    );
    const reviewUrl = `/assess/workers/${w.id}/courses/${device.id}`;
    const pauseMail = outbox().find(
      (m) =>
        m.subject === `Training paused: severe adverse event for ${w.employee_number}` && m.text.includes("Sharp pain"),
    );
    expect(pauseMail?.text).toContain(reviewUrl);

    // Paused: out of the allocation pool, with the reason.
    const params = runParametersSchema.parse({
      startDate: nextMonday(),
      horizonWeeks: 4,
      fairnessShare: 0,
      pool: { siteIds: [w.site_id] },
    });
    const scope = { allSites: true, siteIds: [], departmentIds: [] };
    expect((await buildProblem(params, scope, k)).excluded.find((e) => e.workerId === w.id)?.reason).toContain(
      "Training is paused on a device; not planned until an assessor resumes it.",
    );

    // The trainer can neither open the review nor decide.
    expect((await trainer.request(reviewUrl)).status).toBe(403);
    const refused = await trainer.postForm(reviewUrl, {
      intent: "decide",
      decision: "resume",
      clinicalNote: "Trainer trying to resume the course.",
    });
    expect(refused.status).toBe(403);
    expect(await k("course_reviews").where({ worker_id: w.id })).toEqual([]);

    // The assessor's view: the event, the finding and the session log together, recorded in the access log.
    const assessor = (await signIn(PERSONA.assessor)).client;
    const me = await k("users").where({ email: PERSONA.assessor }).first("id");
    const page = (await (await assessor.request(reviewUrl)).text()).replace(/<!-- -->/g, "");
    expect(page).toContain("Paused: waiting for your decision");
    expect(page).toContain("Sharp pain in the forearm");
    expect(page).toContain("Wear-time breach");
    expect(page).toContain(`${limit + 15} min`);
    expect(page).toContain('data-testid="session-log"');
    const record = await (await assessor.request(`/assess/workers/${w.id}`)).text();
    expect(record).toContain(`href="${reviewUrl}"`);
    expect(
      await k("access_log").where({ worker_id: w.id, actor_user_id: me.id, resource: "sessions" }).first(),
    ).toBeTruthy();

    // Bad input names the fields; nothing is written.
    const bad = await assessor.postForm(reviewUrl, {
      intent: "decide",
      decision: "resume_with_conditions",
      clinicalNote: "ok",
    });
    expect(bad.status).toBe(400);
    const badText = await bad.text();
    expect(badText).toContain("Clinical note: describe what you reviewed");
    expect(badText).toContain("Wear-time limit: set a lower limit for this worker");
    const tooHigh = await assessor.postForm(reviewUrl, {
      intent: "decide",
      decision: "resume_with_conditions",
      wearTimeLimitMinutes: String(limit),
      clinicalNote: "Fit checked, strap replaced; shorter sessions for two weeks.",
    });
    expect(tooHigh.status).toBe(400);
    expect(await tooHigh.text()).toContain(`must be below the ${device.name}'s own limit of ${limit} minutes`);
    expect(await k("course_reviews").where({ worker_id: w.id })).toEqual([]);

    // Resume with a lower limit.
    const own = Math.max(5, Math.floor(limit / 3));
    const mailsBefore = outbox().length;
    const decided = await assessor.postForm(reviewUrl, {
      intent: "decide",
      decision: "resume_with_conditions",
      wearTimeLimitMinutes: String(own),
      conditions: "Skin check after every session.",
      clinicalNote: "Fit checked, strap replaced; no pain at rest. Shorter sessions for this worker.",
    });
    expect(decided.status).toBe(200);
    expect(await decided.text()).toContain(`Decision recorded: resume with conditions, wear-time limit ${own} minutes`);
    const review = await k("course_reviews").where({ worker_id: w.id, device_type_id: device.id }).first();
    expect(review).toMatchObject({
      decision: "resume_with_conditions",
      decided_by: me.id,
      wear_time_limit_minutes: own,
    });
    expect(review.clinical_note).toContain("Fit checked");
    expect(Number.isNaN(Date.parse(review.decided_at))).toBe(false);
    const course = await k("device_courses").where({ worker_id: w.id, device_type_id: device.id }).first();
    expect(course).toMatchObject({ status: "planned", wear_time_limit_minutes: own });
    expect((await k("training_sessions").where({ id: s2 }).first()).status).toBe("cancelled");
    expect((await k("safety_findings").where({ session_id: s1 }).first()).review_id).toBe(review.id);
    expect((await k("workers").where({ id: w.id }).first("stage")).stage).toBe("forecast");

    // E-mail to the worker and the coordinators covering them, and no one else; the coordinators' mail carries
    // the limit but not the clinical note.
    const coordinators = await emailsOf("coordinator", w);
    expect(coordinators.length).toBeGreaterThan(0);
    const sent = outbox().slice(mailsBefore);
    expect(sent.flatMap((m) => m.to).sort()).toEqual([w.email, ...coordinators].sort());
    const toWorker = sent.find((m) => m.to.includes(w.email))!;
    expect(toWorker.subject).toBe(`Your training on the ${device.name} can resume`);
    expect(toWorker.text).toContain(`${own} minutes per session`);
    const toCoordinators = sent.find((m) => m.to.includes(coordinators[0]))!;
    expect(toCoordinators.text).toContain(`${own} minutes per session`);
    expect(toCoordinators.text).not.toContain("Fit checked");

    // Deciding twice is refused.
    const again = await assessor.postForm(reviewUrl, {
      intent: "decide",
      decision: "stop",
      clinicalNote: "A second decision on the same pause.",
    });
    expect(again.status).toBe(409);
    expect(await again.text()).toContain("This course is not paused");

    // The trainer sees the status, with the limit.
    const trainerPage = (await (await trainer.request(`/train/sessions/${s2}`)).text()).replace(/<!-- -->/g, "");
    expect(trainerPage).toContain("Resume with conditions after a pause");
    expect(trainerPage).toContain(`at most ${own} minutes per session for this trainee`);

    // The next run's pool holds the worker, and every session packed for them keeps the lower limit.
    const snap = await buildProblem(params, scope, k);
    expect(snap.excluded.find((e) => e.workerId === w.id)).toBeUndefined();
    const cw = snap.calendar.workers.find((x) => x.workerId === w.id)!;
    const dev = snap.calendar.devices.find((d) => d.deviceTypeId === device.id && d.siteId === w.site_id)!;
    expect(cw.wearTimeLimits).toEqual({ [dev.id]: own });
    const trainerName = snap.problem.trainers.find((t) => t.deviceTypeIds.includes(dev.id))!.id;
    const packed = packSessions(snap.calendar, [
      {
        workerId: cw.id,
        deviceTypeId: dev.id,
        completionWeek: 3,
        sessions: [{ week: 0, trainerId: trainerName, hours: 2 }],
      },
    ]);
    const mine = packed.sessions.filter((s) => s.workerId === cw.id);
    expect(mine.length).toBeGreaterThan(0);
    for (const s of mine) expect(s.minutes).toBeLessThanOrEqual(own);
    const placed = mine.reduce((a, s) => a + s.minutes, 0);
    const left = packed.unplaced.filter((u) => u.workerId === cw.id).reduce((a, u) => a + u.minutes, 0);
    expect(placed + left).toBe(120);
  });

  it("stops a device type: the course is stopped, its forecast gone with the reason stated, and the pool offers the worker other device types only", async () => {
    const { trainerId, w, device } = await pickTrainee(true);
    const start = new Date(Date.now() - 2 * 3_600_000);
    start.setUTCSeconds(0, 0);
    const s1 = await schedule(w.id, device.id, trainerId, start, 20);
    const trainer = (await signIn(PERSONA.trainer)).client;
    const logged = await trainer.postForm(`/train/sessions/${s1}`, {
      intent: "log",
      start: local(start),
      end: local(new Date(start.getTime() + 20 * 60_000)),
      taskScore: "0.4",
      ae_skin: "severe",
      ae_skin_notes: "Abrasion under the cuff.",
    });
    expect(logged.status).toBe(200);
    expect(await k("safety_findings").where({ session_id: s1 })).toEqual([]); // within the limit: no breach
    const assessor = (await signIn(PERSONA.assessor)).client;
    const mailsBefore = outbox().length;
    const res = await assessor.postForm(`/assess/workers/${w.id}/courses/${device.id}`, {
      intent: "decide",
      decision: "stop",
      clinicalNote: "Recurrent abrasion despite refitting; this device type does not suit the worker.",
    });
    expect(res.status).toBe(200);
    expect(await res.text()).toContain("Decision recorded: stop this device type.");
    expect((await k("device_courses").where({ worker_id: w.id, device_type_id: device.id }).first()).status).toBe(
      "stopped",
    );
    expect(await k("forecasts").where({ worker_id: w.id, device_type_id: device.id }).first()).toBeUndefined();
    const sent = outbox().slice(mailsBefore);
    expect(sent.find((m) => m.to.includes(w.email))?.subject).toBe(`Your training on the ${device.name} has stopped`);
    const page = (await (await assessor.request(`/forecast/${w.id}`)).text()).replace(/<!-- -->/g, "");
    expect(page).toContain(noForecastText("stopped"));

    const snap = await buildProblem(
      runParametersSchema.parse({
        startDate: nextMonday(),
        horizonWeeks: 4,
        fairnessShare: 0,
        pool: { siteIds: [w.site_id] },
      }),
      { allSites: true, siteIds: [], departmentIds: [] },
      k,
    );
    const dev = snap.calendar.devices.find((d) => d.deviceTypeId === device.id && d.siteId === w.site_id)!;
    const inPool = snap.problem.workers.find((x) => x.id === String(w.id));
    const left = snap.excluded.find((e) => e.workerId === w.id);
    expect(Boolean(inPool) !== Boolean(left)).toBe(true);
    if (inPool) expect(inPool.options.map((o) => o.deviceTypeId)).not.toContain(dev.id);
    else expect(left!.reason).toBe(noForecastText("stopped"));
  });

  it("a breach on a running course stays open on the worker record until an assessor reviews it; the course is unchanged", async () => {
    const { trainerId, w, device } = await pickTrainee(true);
    const limit = Number(device.wear_time_limit_minutes);
    const start = new Date(Date.now() - 5 * 3_600_000);
    start.setUTCSeconds(0, 0);
    const s1 = await schedule(w.id, device.id, trainerId, start, limit);
    const trainer = (await signIn(PERSONA.trainer)).client;
    const logged = await trainer.postForm(`/train/sessions/${s1}`, {
      intent: "log",
      start: local(start),
      end: local(new Date(start.getTime() + (limit + 5) * 60_000)),
      taskScore: "0.6",
    });
    expect(logged.status).toBe(200);
    expect(await logged.text()).toContain("recorded as a safety finding for the assessors");
    expect((await k("training_sessions").where({ id: s1 }).first()).status).toBe("attended");
    expect((await k("device_courses").where({ worker_id: w.id, device_type_id: device.id }).first()).status).toBe(
      "training",
    );
    const reviewUrl = `/assess/workers/${w.id}/courses/${device.id}`;
    const assessor = (await signIn(PERSONA.assessor)).client;
    const record = (await (await assessor.request(`/assess/workers/${w.id}`)).text()).replace(/<!-- -->/g, "");
    expect(record).toContain(`href="${reviewUrl}"`);
    expect(record).toContain("safety finding to review");

    const short = await assessor.postForm(reviewUrl, { intent: "acknowledge", clinicalNote: "ok" });
    expect(short.status).toBe(400);
    expect(await short.text()).toContain("Clinical note: say what you checked");
    const resumeRunning = await assessor.postForm(reviewUrl, {
      intent: "decide",
      decision: "resume",
      clinicalNote: "Trying to resume a course that is not paused.",
    });
    expect(resumeRunning.status).toBe(409);
    const ok = await assessor.postForm(reviewUrl, {
      intent: "acknowledge",
      clinicalNote: "Spoke with the trainer: the end time was entered late; skin intact.",
    });
    expect(ok.status).toBe(200);
    expect(await ok.text()).toContain("1 safety finding reviewed; the course is unchanged.");
    const review = await k("course_reviews")
      .where({ worker_id: w.id, device_type_id: device.id, decision: "acknowledge" })
      .first();
    expect(review.decided_by).toBe((await k("users").where({ email: PERSONA.assessor }).first("id")).id);
    expect((await k("safety_findings").where({ session_id: s1 }).first()).review_id).toBe(review.id);
    expect((await k("device_courses").where({ worker_id: w.id, device_type_id: device.id }).first()).status).toBe(
      "training",
    );
    expect(await (await assessor.request(`/assess/workers/${w.id}`)).text()).not.toContain("safety finding to review");
    expect(
      (await assessor.postForm(reviewUrl, { intent: "acknowledge", clinicalNote: "A second review of nothing." }))
        .status,
    ).toBe(409);
  });
});
