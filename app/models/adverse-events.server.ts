import { appUrl } from "~/config.server";
import { type Db, db } from "~/db.server";
import { sendMail } from "~/mail.server";
import { reviewPath } from "~/schemas/course-review";
import { ADVERSE_LABELS, type AdverseEventInput } from "~/schemas/session-log";
import { setStage } from "./consent.server";

// Adverse events logged with a training session. A severe event pauses the worker's course on that
// device and the worker's training (stage `paused`, with a stage_changes row), inside the session log's
// transaction; the assessors of the worker's site are e-mailed after it commits.

export interface RecordedEvents {
  count: number;
  severe: AdverseEventInput[];
  paused: boolean;
}

/** Inserts the events of one session; on a severe one pauses the course and the worker. Call inside a transaction. */
export async function recordAdverseEvents(
  trx: Db,
  input: {
    sessionId: number;
    workerId: number;
    deviceTypeId: number;
    events: AdverseEventInput[];
    userId: number;
    at: string;
  },
): Promise<RecordedEvents> {
  for (const e of input.events) {
    await trx("adverse_events").insert({
      session_id: input.sessionId,
      worker_id: input.workerId,
      kind: e.kind,
      severity: e.severity,
      notes: e.notes,
      recorded_by: input.userId,
      at: input.at,
    });
  }
  const severe = input.events.filter((e) => e.severity === "severe");
  if (severe.length === 0) return { count: input.events.length, severe, paused: false };
  const reason = `Severe adverse event (${severe.map((e) => ADVERSE_LABELS[e.kind].toLowerCase()).join(", ")}) logged ${input.at.slice(0, 10)}; an assessor must review before training resumes.`;
  await trx("device_courses")
    .where({ worker_id: input.workerId, device_type_id: input.deviceTypeId })
    .update({ status: "paused", pause_reason: reason, updated_at: input.at });
  await setStage(trx, input.workerId, "paused", input.userId, input.at);
  // setStage does not know the device; name it on the stage change it just wrote.
  await trx("stage_changes")
    .where({ worker_id: input.workerId, to_stage: "paused", at: input.at })
    .whereNull("device_type_id")
    .update({ device_type_id: input.deviceTypeId });
  return { count: input.events.length, severe, paused: true };
}

/** Active assessors whose scope covers the worker: organisation-wide, the worker's site, or the worker's department. */
export async function assessorEmailsForWorker(workerId: number, k: Db = db()): Promise<string[]> {
  const w = await k("workers").where({ id: workerId }).first("site_id", "department_id");
  if (!w) return [];
  return roleEmailsCovering(k, "assessor", w.site_id, w.department_id);
}

export async function roleEmailsCovering(k: Db, role: string, siteId: number, departmentId: number): Promise<string[]> {
  const rows = await k("role_assignments as a")
    .join("users as u", "u.id", "a.user_id")
    .where({ "a.role": role })
    .where("u.active", true)
    .where((q) =>
      q
        .where((o) => o.whereNull("a.site_id").whereNull("a.department_id"))
        .orWhere("a.site_id", siteId)
        .orWhere("a.department_id", departmentId),
    )
    .distinct("u.email")
    .orderBy("u.email");
  return rows.map((r) => r.email as string);
}

/** E-mails the site's assessors about severe events (after the log's transaction has committed). */
export async function notifyAssessorsOfSevereEvents(input: {
  workerId: number;
  deviceTypeId: number;
  events: AdverseEventInput[];
  trainerName: string;
  at: string;
}): Promise<string[]> {
  const to = await assessorEmailsForWorker(input.workerId);
  if (to.length === 0 || input.events.length === 0) return to;
  const w = await db()("workers as w")
    .join("sites as s", "s.id", "w.site_id")
    .where("w.id", input.workerId)
    .first("w.employee_number", "w.given_name", "w.family_name", "s.name as site");
  const d = await db()("device_types").where({ id: input.deviceTypeId }).first("name");
  const lines = input.events.map((e) => `- ${ADVERSE_LABELS[e.kind]}: ${e.severity}${e.notes ? ` (${e.notes})` : ""}`);
  await sendMail({
    to,
    subject: `Training paused: severe adverse event for ${w.employee_number}`,
    text: [
      `${input.trainerName} logged a severe adverse event for ${w.given_name} ${w.family_name} (${w.employee_number}, ${w.site}) during a ${d?.name ?? "device"} session on ${input.at.slice(0, 16).replace("T", " ")}.`,
      "",
      ...lines,
      "",
      "The worker's training on this device is paused. Please review fit, settings and the worker's condition before training resumes.",
      `Review the events and the session log, and decide: ${appUrl}${reviewPath(input.workerId, input.deviceTypeId)}`,
      "",
      "Stop on pain or numbness; the manufacturer's instructions, local occupational-safety rules and licensed practice prevail.",
    ].join("\n"),
  });
  return to;
}

/** Events of the given sessions (for the trainer's day and the worker's own record). */
export async function eventsForSessions(sessionIds: number[], k: Db = db()) {
  if (sessionIds.length === 0) return [];
  const rows = await k("adverse_events")
    .whereIn("session_id", sessionIds)
    .select("id", "session_id", "kind", "severity", "notes", "at")
    .orderBy("id");
  return rows.map((r) => ({
    id: r.id,
    sessionId: r.session_id,
    kind: r.kind,
    severity: r.severity,
    notes: r.notes ?? null,
    at: String(r.at),
  }));
}
