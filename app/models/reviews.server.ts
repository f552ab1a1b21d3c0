import type { Knex } from "knex";
import type { Principal } from "~/auth/guard.server";
import { appUrl } from "~/config.server";
import { nowInstant } from "~/dates";
import { type Db, db, type Row } from "~/db.server";
import { REVIEW_OWNER, REVIEW_QUEUE_PATH, type ReviewSubject, subjectsOwnedBy } from "~/domain/review-owners";
import { conflict, notFound } from "~/errors";
import { sendMail } from "~/mail.server";
import type { ReviewRequestInput } from "~/schemas/portal";
import { REVIEW_SUBJECT_LABELS } from "~/schemas/portal";
import { lockWorker } from "./locks.server";
import { whereWorkerInScope } from "./workers.server";

// Review requests (docs/consent-and-disclosure.md): a worker contests their forecast or plan. The owner of that
// decision answers (a figure: the assessors; session timing: the coordinators, see domain/review-owners.ts):
// those whose scope covers the worker are e-mailed that a request waits, and the worker is e-mailed the answer.

export async function createReviewRequest(
  workerId: number,
  userId: number,
  input: ReviewRequestInput,
): Promise<number> {
  return db()
    .transaction(async (trx) => {
      await lockWorker(trx, workerId); // the open-request cap is counted, then written
      if (input.deviceTypeId != null && !(await trx("device_types").where({ id: input.deviceTypeId }).first("id"))) {
        throw conflict("Device: choose one of your devices or leave it empty.", "deviceTypeId");
      }
      const open = await trx("review_requests")
        .where({ worker_id: workerId, status: "open" })
        .count<{ n: number }[]>({ n: "*" });
      if (Number(open[0]?.n ?? 0) >= 5)
        throw conflict("You already have 5 open requests; please wait for an answer first.");
      const [row] = await trx("review_requests")
        .insert({
          worker_id: workerId,
          subject: input.subject,
          device_type_id: input.deviceTypeId ?? null,
          message: input.message,
          status: "open",
          requested_by: userId,
          created_at: nowInstant(),
        })
        .returning("id");
      return row.id as number;
    })
    .then(async (id) => {
      await notifyOwners(workerId, input.subject);
      return id;
    });
}

/** Active users holding the owning role with a scope that covers the worker (organisation, site or department). */
async function ownersOf(workerId: number, subject: ReviewSubject, k: Db = db()): Promise<string[]> {
  const w = await k("workers").where({ id: workerId }).first("site_id", "department_id");
  if (!w) return [];
  return k("users as u")
    .join("role_assignments as a", "a.user_id", "u.id")
    .where({ "u.active": true, "a.role": REVIEW_OWNER[subject] })
    .where((q) => {
      q.where((o) => {
        o.whereNull("a.site_id").whereNull("a.department_id");
      })
        .orWhere("a.site_id", w.site_id)
        .orWhere("a.department_id", w.department_id);
    })
    .distinct("u.email")
    .orderBy("u.email")
    .pluck("u.email");
}

/** Tells the owners a request waits; the message itself stays in the app (it may hold health details). */
async function notifyOwners(workerId: number, subject: ReviewSubject): Promise<void> {
  const about =
    subject === "forecast" ? "their forecast (hours to proficiency)" : "their training plan (sessions and timing)";
  for (const to of await ownersOf(workerId, subject))
    await sendMail({
      to,
      subject: "A worker has asked for a review",
      text: [
        `A worker at one of your sites has asked a person to look at ${about}.`,
        "",
        `Read and answer it in Limberly: ${appUrl}${REVIEW_QUEUE_PATH[subject]}`,
      ].join("\n"),
    });
}

export interface ReviewRow {
  id: number;
  workerId: number;
  employeeNumber: string;
  name: string;
  subject: "forecast" | "plan";
  deviceType: string | null;
  deviceTypeId: number | null;
  message: string;
  status: "open" | "answered";
  answer: string | null;
  answeredBy: string | null;
  createdAt: string;
  answeredAt: string | null;
}

function base(k: Db) {
  return k("review_requests as r")
    .join("workers", "workers.id", "r.worker_id")
    .leftJoin("device_types as d", "d.id", "r.device_type_id")
    .leftJoin("users as a", "a.id", "r.answered_by")
    .select(
      "r.id",
      "r.worker_id",
      "workers.employee_number",
      "workers.given_name",
      "workers.family_name",
      "r.subject",
      "d.name as device_name",
      "r.device_type_id",
      "r.message",
      "r.status",
      "r.answer",
      "a.display_name as answered_by",
      "r.created_at",
      "r.answered_at",
    );
}
function toRow(r: Row): ReviewRow {
  return {
    id: r.id,
    workerId: r.worker_id,
    employeeNumber: r.employee_number,
    name: `${r.given_name} ${r.family_name}`,
    subject: r.subject,
    deviceType: r.device_name ?? null,
    deviceTypeId: r.device_type_id ?? null,
    message: r.message,
    status: r.status,
    answer: r.answer ?? null,
    answeredBy: r.answered_by ?? null,
    createdAt: String(r.created_at),
    answeredAt: r.answered_at ? String(r.answered_at) : null,
  };
}

/** The worker's own requests, newest first. */
export async function myReviewRequests(workerId: number, k: Db = db()): Promise<ReviewRow[]> {
  return (await base(k).where("r.worker_id", workerId).orderBy("r.id", "desc")).map(toRow);
}

/** The assessors' queue: requests of workers in the principal's scope; open ones first, oldest first. */
export async function reviewQueue(
  p: Principal,
  status: "open" | "answered" | "all" = "open",
  k: Db = db(),
): Promise<ReviewRow[]> {
  const q = base(k);
  whereWorkerInScope(q as Knex.QueryBuilder, p.scope);
  q.whereIn("r.subject", subjectsOwnedBy(p.roles));
  if (status !== "all") q.where("r.status", status);
  q.orderBy([
    { column: "r.status", order: "desc" },
    { column: status === "answered" ? "r.answered_at" : "r.created_at", order: status === "answered" ? "desc" : "asc" },
  ]).limit(200);
  return (await q).map(toRow);
}

/** Answers a request in scope; e-mails the worker after the answer is stored. Returns the address mailed, if any. */
export async function answerReview(
  p: Principal & { kind: "user" },
  reviewId: number,
  answer: string,
): Promise<{ mailedTo: string | null; workerId: number }> {
  const done = await db().transaction(async (trx) => {
    const q = trx("review_requests as r")
      .join("workers", "workers.id", "r.worker_id")
      .where("r.id", reviewId)
      .select(
        "r.id",
        "r.status",
        "r.subject",
        "r.worker_id",
        "r.created_at",
        "workers.email as worker_email",
        "workers.user_id",
        "workers.given_name",
      );
    const r = await whereWorkerInScope(q as Knex.QueryBuilder, p.scope).first();
    if (!r || !subjectsOwnedBy(p.roles).includes(r.subject))
      throw notFound("This review request is not in your scope.");
    if (r.status !== "open") throw conflict("This request has already been answered.");
    // Only an open request is answered: of two assessors answering at once, the second one's update finds
    // the row answered (PostgreSQL re-reads it after the first commits) and gets the same message.
    const n = await trx("review_requests")
      .where({ id: r.id, status: "open" })
      .update({ status: "answered", answer, answered_by: p.user.id, answered_at: nowInstant() });
    if (n !== 1) throw conflict("This request has already been answered.");
    const u = r.user_id ? await trx("users").where({ id: r.user_id }).first("email") : null;
    return { r, to: u?.email ?? (r.worker_email as string) ?? null };
  });
  if (done.to) {
    await sendMail({
      to: done.to,
      subject: "Your review request has been answered",
      text: [
        `Hello ${done.r.given_name},`,
        "",
        `${p.user.displayName} has answered your request of ${(done.r.created_at as string).slice(0, 10)} about ${REVIEW_SUBJECT_LABELS[done.r.subject as "forecast" | "plan"].toLowerCase()}:`,
        "",
        answer,
        "",
        `You can read it, and ask again, under "Ask for a review" in Limberly: ${appUrl}/me/review`,
      ].join("\n"),
    });
  }
  return { mailedTo: done.to, workerId: done.r.worker_id };
}
