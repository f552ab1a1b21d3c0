import type { Knex } from "knex";
import { isClinicalRole, ROLE_LABELS, type Role } from "~/auth/permissions";
import { nowInstant } from "~/dates";
import { db } from "~/db.server";
import { conflict, notFound } from "~/errors";
import type { TableQuery } from "~/schemas/table-query";
import {
  type Actor,
  type AuditNote,
  assertNotOwnRoles,
  assertScopeExists,
  notifyOtherAdmins,
  openRequest,
  pendingRequests,
  scopeLabel,
  writeAudit,
} from "./duties.server";
import { paged } from "./paging.server";

export interface UserListRow {
  id: number;
  email: string;
  displayName: string;
  active: boolean;
  roles: string;
  lastSignInAt: string | null;
}

export async function listUsers(q: TableQuery) {
  const k = db();
  const query = k("users as u").select("u.id", "u.email", "u.display_name", "u.active", "u.last_sign_in_at");
  if (q.q)
    query.where((w) =>
      w
        .whereRaw("lower(u.email) like ?", [`%${q.q!.toLowerCase()}%`])
        .orWhereRaw("lower(u.display_name) like ?", [`%${q.q!.toLowerCase()}%`]),
    );
  const page = await paged(
    query,
    q,
    { name: "u.display_name", email: "u.email", lastSignIn: "u.last_sign_in_at" },
    "name",
    "u.id",
    (r) => ({
      id: r.id as number,
      email: r.email as string,
      displayName: r.display_name as string,
      active: Boolean(r.active),
      lastSignInAt: (r.last_sign_in_at as string) ?? null,
      roles: "",
    }),
  );
  const ids = page.rows.map((r) => r.id);
  const roles = ids.length ? await k("role_assignments").whereIn("user_id", ids).select("user_id", "role") : [];
  for (const row of page.rows)
    row.roles = [...new Set(roles.filter((r) => r.user_id === row.id).map((r) => r.role))].join(", ");
  return page;
}

export interface Assignment {
  role: Role;
  siteId: number | null;
  departmentId: number | null;
}

// Gives `userId` a role inside `trx`: a clinical role becomes a request for a second admin
// (models/duties.server.ts), any other is granted at once. Both are audited.
async function grantInside(
  trx: Knex.Transaction,
  actor: Actor,
  user: { id: number; displayName: string },
  a: Assignment,
): Promise<{ note: AuditNote; pending: boolean }> {
  assertNotOwnRoles(actor, user.id);
  await assertScopeExists(trx, a);
  const subject = `${ROLE_LABELS[a.role]} for ${user.displayName} at ${await scopeLabel(trx, a)}`;
  if (isClinicalRole(a.role)) {
    const note = await openRequest(trx, actor, { kind: "role", subject, targetUserId: user.id, ...a });
    return { note, pending: true };
  }
  await trx("role_assignments").insert({
    user_id: user.id,
    role: a.role,
    site_id: a.siteId,
    department_id: a.departmentId,
    created_at: nowInstant(),
  });
  return {
    note: await writeAudit(trx, { actor, event: "granted", subject, role: a.role, targetUserId: user.id }),
    pending: false,
  };
}

const pendingNotice = (role: Role) => `The ${ROLE_LABELS[role]} role takes effect when another admin approves it.`;

/** Adds a user with one role; a clinical role waits for a second admin (the user exists meanwhile, without it). */
export async function createUser(
  actor: Actor,
  input: { email: string; displayName: string } & Assignment,
): Promise<{ id: number; notice: string }> {
  const done = await db().transaction(async (trx) => {
    const exists = await trx("users").whereRaw("lower(email) = ?", [input.email]).first("id");
    if (exists) throw conflict(`A user with e-mail ${input.email} already exists.`, "email");
    await assertScopeExists(trx, input);
    const [u] = await trx("users")
      .insert({
        email: input.email,
        display_name: input.displayName,
        active: true,
        created_at: nowInstant(),
      })
      .returning("id");
    const id = u.id;
    return { id, ...(await grantInside(trx, actor, { id, displayName: input.displayName }, input)) };
  });
  await notifyOtherAdmins(done.note);
  return { id: done.id, notice: `Added ${input.email}.${done.pending ? ` ${pendingNotice(input.role)}` : ""}` };
}

/** Adds a role to someone else; returns the notice to show. */
export async function addAssignment(actor: Actor, userId: number, a: Assignment): Promise<string> {
  const done = await db().transaction(async (trx) => {
    const u = await trx("users").where({ id: userId }).first("id", "display_name");
    if (!u) throw notFound("No such user.");
    return grantInside(trx, actor, { id: userId, displayName: u.display_name }, a);
  });
  await notifyOtherAdmins(done.note);
  return done.pending ? `Requested. ${pendingNotice(a.role)}` : "Role added.";
}

export async function removeAssignment(actor: Actor, userId: number, assignmentId: number): Promise<void> {
  assertNotOwnRoles(actor, userId);
  const note = await db().transaction(async (trx) => {
    const a = await trx("role_assignments").where({ id: assignmentId, user_id: userId }).first();
    if (!a) throw notFound("That role assignment no longer exists.");
    const u = await trx("users").where({ id: userId }).first("display_name");
    const scope = { siteId: a.site_id ?? null, departmentId: a.department_id ?? null };
    const subject = `${ROLE_LABELS[a.role]} for ${u!.display_name} at ${await scopeLabel(trx, scope)}`;
    await trx("role_assignments").where({ id: assignmentId }).del();
    return writeAudit(trx, { actor, event: "removed", subject, role: a.role, targetUserId: userId });
  });
  await notifyOtherAdmins(note);
}

export async function updateUser(userId: number, v: { displayName: string; active: boolean }): Promise<void> {
  await db().transaction(async (trx) => {
    await trx("users").where({ id: userId }).update({ display_name: v.displayName, active: v.active });
    // Deactivating someone ends their sessions at once.
    if (!v.active) {
      const sessions = await trx("sessions").select("id", "data");
      const mine = sessions.filter((s) => JSON.parse(s.data).userId === userId).map((s) => s.id);
      if (mine.length) await trx("sessions").whereIn("id", mine).del();
    }
  });
}

export async function userDetail(userId: number) {
  const k = db();
  const u = await k("users").where({ id: userId }).first();
  if (!u) return null;
  const assignments = await k("role_assignments as r")
    .leftJoin("sites as s", "s.id", "r.site_id")
    .leftJoin("departments as d", "d.id", "r.department_id")
    .leftJoin("sites as ds", "ds.id", "d.site_id")
    .where("r.user_id", userId)
    .select("r.id", "r.role", "s.name as site_name", "d.name as dept_name", "ds.name as dept_site_name")
    .orderBy("r.id");
  const pending = (await pendingRequests()).filter((r) => r.targetUserId === userId);
  return {
    id: u.id,
    email: u.email,
    displayName: u.display_name,
    active: Boolean(u.active),
    pending,
    assignments: assignments.map((a) => ({
      id: a.id as number,
      role: a.role as Role,
      scope: a.dept_name
        ? `${a.dept_site_name} · ${a.dept_name}`
        : a.site_name
          ? String(a.site_name)
          : "Whole organisation",
    })),
  };
}
