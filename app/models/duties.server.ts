import type { Knex } from "knex";
import { createApiKey, revokeApiKey } from "~/auth/api-keys.server";
import { isClinicalRole, ROLE_LABELS, ROLES, type Role, roleAllows } from "~/auth/permissions";
import { appUrl } from "~/config.server";
import { nowInstant } from "~/dates";
import { type Db, db } from "~/db.server";
import { AUDIT_EVENT_LABELS, type AuditEvent } from "~/domain/privilege-events";
import { conflict, notFound, UserError } from "~/errors";
import { sendMail } from "~/mail.server";

// Separation of duties for privileges (docs/decisions/separation-of-duties.md). Nobody changes their own
// roles. A clinical role (one that reaches health data: permissions.ts, isClinicalRole) given to a person,
// or an API key with such a role, is only requested by one admin and takes effect when a second admin
// approves it; the requester and the person it is for cannot decide it. Every request, decision, direct
// grant and removal is written to privilege_audit in the same transaction, and the organisation's other
// admins get an e-mail about it once it is committed.

export interface Actor {
  id: number;
  displayName: string;
}

/** Something written to the audit log, to be mailed to the other admins after the commit. */
export interface AuditNote {
  actor: Actor;
  event: AuditEvent;
  subject: string;
  role: Role;
}

/** Nobody changes their own roles: the one check, for the UI action and any API path. */
export function assertNotOwnRoles(actor: Actor, userId: number): void {
  if (actor.id === userId)
    throw new UserError("Role: you cannot change your own roles; ask another admin to do it.", {
      status: 403,
      field: "role",
    });
}

/** Refuses a site or department id that does not exist, naming the field, before anything is inserted. */
export async function assertScopeExists(
  trx: Db,
  scope: { siteId: number | null; departmentId: number | null },
): Promise<void> {
  if (scope.siteId != null && !(await trx("sites").where({ id: scope.siteId }).first("id")))
    throw new UserError(`Site: no site with id ${scope.siteId}.`, { field: "siteId" });
  if (scope.departmentId != null && !(await trx("departments").where({ id: scope.departmentId }).first("id")))
    throw new UserError(`Department: no department with id ${scope.departmentId}.`, { field: "departmentId" });
}

/** "Riverside", "Riverside · Packing" or "the whole organisation". */
export async function scopeLabel(
  trx: Db,
  scope: { siteId: number | null; departmentId: number | null },
): Promise<string> {
  if (scope.departmentId != null) {
    const d = await trx("departments as d")
      .join("sites as s", "s.id", "d.site_id")
      .where("d.id", scope.departmentId)
      .first("d.name", "s.name as site");
    return `${d.site} · ${d.name}`;
  }
  if (scope.siteId != null) return String((await trx("sites").where({ id: scope.siteId }).first("name"))!.name);
  return "the whole organisation";
}

export async function writeAudit(
  trx: Db,
  note: AuditNote & { requestId?: number | null; targetUserId?: number | null; apiKeyId?: number | null },
): Promise<AuditNote> {
  await trx("privilege_audit").insert({
    at: nowInstant(),
    actor_id: note.actor.id,
    actor_name: note.actor.displayName,
    event: note.event,
    request_id: note.requestId ?? null,
    target_user_id: note.targetUserId ?? null,
    api_key_id: note.apiKeyId ?? null,
    subject: note.subject.slice(0, 400),
    role: note.role,
  });
  return { actor: note.actor, event: note.event, subject: note.subject, role: note.role };
}

/** Opens a pending request (refusing a second identical one) and audits it. */
export async function openRequest(
  trx: Knex.Transaction,
  actor: Actor,
  r: {
    kind: "role" | "api_key";
    role: Role;
    subject: string;
    targetUserId?: number | null;
    siteId?: number | null;
    departmentId?: number | null;
    apiKeyId?: number | null;
  },
): Promise<AuditNote> {
  if (r.kind === "role") {
    const same = await trx("privilege_requests")
      .where({ kind: "role", status: "pending", target_user_id: r.targetUserId, role: r.role })
      .where((w) => (r.siteId == null ? w.whereNull("site_id") : w.where("site_id", r.siteId)))
      .where((w) => (r.departmentId == null ? w.whereNull("department_id") : w.where("department_id", r.departmentId)))
      .first("id");
    if (same) throw conflict("Role: this grant is already waiting for a second admin's approval.", "role");
  }
  const [row] = await trx("privilege_requests")
    .insert({
      kind: r.kind,
      role: r.role,
      subject: r.subject.slice(0, 400),
      target_user_id: r.targetUserId ?? null,
      site_id: r.siteId ?? null,
      department_id: r.departmentId ?? null,
      api_key_id: r.apiKeyId ?? null,
      requested_by: actor.id,
      created_at: nowInstant(),
      status: "pending",
    })
    .returning("id");
  return writeAudit(trx, {
    actor,
    event: "requested",
    subject: r.subject,
    role: r.role,
    requestId: row.id,
    targetUserId: r.targetUserId,
    apiKeyId: r.apiKeyId,
  });
}

/** E-mails every active admin except the one who acted (real SMTP, after the change is committed). */
export async function notifyOtherAdmins(note: AuditNote): Promise<string[]> {
  const adminRoles = ROLES.filter((r) => roleAllows(r, "admin.users"));
  const to: string[] = await db()("users as u")
    .join("role_assignments as a", "a.user_id", "u.id")
    .whereIn("a.role", adminRoles)
    .where("u.active", true)
    .whereNot("u.id", note.actor.id)
    .distinct("u.email")
    .orderBy("u.email")
    .pluck("u.email");
  if (to.length === 0) return to;
  const pending = note.event === "requested";
  try {
    await sendMail({
      to,
      subject: `Limberly roles: ${note.actor.displayName} ${AUDIT_EVENT_LABELS[note.event]} — ${note.subject}`,
      text: [
        `${note.actor.displayName} ${AUDIT_EVENT_LABELS[note.event]}: ${note.subject}.`,
        "",
        pending
          ? `${ROLE_LABELS[note.role]} reaches health data, so it takes effect only when another admin approves it. Approve or refuse it at ${appUrl}/admin/approvals`
          : `The role and key audit log: ${appUrl}/admin/approvals`,
        "",
        "You get this message because you are an admin of this Limberly organisation.",
      ].join("\n"),
    });
  } catch (e) {
    // The change is committed and audited; a mail server that is down must not turn it into an error.
    console.error("privilege notice not sent:", e);
  }
  return to;
}

/** Creates an API key; one with a clinical role is created unusable and waits for a second admin. */
export async function issueApiKey(
  actor: Actor,
  input: { name: string; role: Role; siteIds: number[] },
): Promise<{ id: number; key: string; pending: boolean }> {
  const pending = isClinicalRole(input.role);
  const { created, note } = await db().transaction(async (trx) => {
    const created = await createApiKey(trx, { ...input, createdBy: actor.id, awaitingApproval: pending });
    const sites = await trx("sites").whereIn("id", input.siteIds).orderBy("name").pluck("name");
    const subject = `API key “${input.name}” (${ROLE_LABELS[input.role]}; ${sites.join(", ")})`;
    const note = pending
      ? await openRequest(trx, actor, { kind: "api_key", role: input.role, subject, apiKeyId: created.id })
      : await writeAudit(trx, { actor, event: "key-created", subject, role: input.role, apiKeyId: created.id });
    return { created, note };
  });
  await notifyOtherAdmins(note);
  return { ...created, pending };
}

export async function revokeIssuedKey(actor: Actor, keyId: number): Promise<void> {
  const note = await db().transaction(async (trx) => {
    const k = await trx("api_keys").where({ id: keyId }).first("id", "name", "role");
    if (!k || !(await revokeApiKey(keyId, trx))) throw notFound("That key is already revoked or does not exist.");
    return writeAudit(trx, {
      actor,
      event: "key-revoked",
      subject: `API key “${k.name}” (${ROLE_LABELS[k.role]})`,
      role: k.role,
      apiKeyId: keyId,
    });
  });
  await notifyOtherAdmins(note);
}

/** A second admin approves or refuses a pending request; the requester and the person it is for cannot. */
export async function decideRequest(actor: Actor, requestId: number, decision: "approve" | "refuse"): Promise<string> {
  const { note, subject } = await db().transaction(async (trx) => {
    const r = await trx("privilege_requests").where({ id: requestId }).first();
    if (!r) throw notFound("That request does not exist.", "requestId");
    if (r.status !== "pending") throw conflict(`That request was already ${r.status}.`, "requestId");
    if (r.requested_by === actor.id)
      throw new UserError("You asked for this yourself: another admin must approve or refuse it.", { status: 403 });
    if (r.target_user_id === actor.id)
      throw new UserError("This grant is for you: another admin must approve or refuse it.", { status: 403 });
    const status = decision === "approve" ? "approved" : "refused";
    const n = await trx("privilege_requests")
      .where({ id: requestId, status: "pending" })
      .update({ status, decided_by: actor.id, decided_at: nowInstant() });
    if (n !== 1) throw conflict("That request was decided by someone else meanwhile.", "requestId");
    if (r.kind === "role" && decision === "approve") {
      await trx("role_assignments").insert({
        user_id: r.target_user_id!, // a role request always names its user
        role: r.role,
        site_id: r.site_id,
        department_id: r.department_id,
        created_at: nowInstant(),
      });
    }
    if (r.kind === "api_key") {
      const keyId = r.api_key_id!; // a key request always names its key
      const live = await trx("api_keys").where({ id: keyId }).whereNull("revoked_at").first("id");
      if (!live && decision === "approve") throw conflict("That key was revoked meanwhile; create a new one.");
      if (decision === "approve") await trx("api_keys").where({ id: keyId }).update({ awaiting_approval: false });
      else await revokeApiKey(keyId, trx);
    }
    const note = await writeAudit(trx, {
      actor,
      event: status,
      subject: r.subject,
      role: r.role,
      requestId,
      targetUserId: r.target_user_id,
      apiKeyId: r.api_key_id,
    });
    return { note, subject: r.subject };
  });
  await notifyOtherAdmins(note);
  return `${decision === "approve" ? "Approved" : "Refused"}: ${subject}.`;
}

export interface PendingRequest {
  id: number;
  kind: "role" | "api_key";
  subject: string;
  requestedBy: string;
  requestedById: number | null;
  targetUserId: number | null;
  createdAt: string;
}

export async function pendingRequests(): Promise<PendingRequest[]> {
  const rows = await db()("privilege_requests as r")
    .leftJoin("users as u", "u.id", "r.requested_by")
    .where("r.status", "pending")
    .select("r.id", "r.kind", "r.subject", "r.requested_by", "r.target_user_id", "r.created_at", "u.display_name")
    .orderBy("r.id");
  return rows.map((r) => ({
    id: r.id,
    kind: r.kind,
    subject: r.subject,
    requestedBy: r.display_name ?? "a removed user",
    requestedById: r.requested_by ?? null,
    targetUserId: r.target_user_id ?? null,
    createdAt: r.created_at,
  }));
}

export interface AuditRow {
  id: number;
  at: string;
  actor: string;
  event: AuditEvent;
  subject: string;
}

/** The newest entries of the role and key audit log. */
export async function privilegeAudit(limit = 200): Promise<AuditRow[]> {
  const rows = await db()("privilege_audit")
    .select("id", "at", "actor_name", "event", "subject")
    .orderBy("id", "desc")
    .limit(limit);
  return rows.map((r) => ({ id: r.id, at: r.at, actor: r.actor_name, event: r.event, subject: r.subject }));
}
