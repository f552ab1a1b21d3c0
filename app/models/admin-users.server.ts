import type { Role } from "~/auth/permissions";
import { db } from "~/db.server";
import { conflict } from "~/errors";
import type { TableQuery } from "~/schemas/table-query";
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

export async function createUser(input: {
  email: string;
  displayName: string;
  role: Role;
  siteId: number | null;
  departmentId: number | null;
}): Promise<number> {
  return db().transaction(async (trx) => {
    const exists = await trx("users").whereRaw("lower(email) = ?", [input.email]).first("id");
    if (exists) throw conflict(`A user with e-mail ${input.email} already exists.`, "email");
    const now = new Date().toISOString();
    const [u] = await trx("users")
      .insert({ email: input.email, display_name: input.displayName, active: true, created_at: now })
      .returning("id");
    await trx("role_assignments").insert({
      user_id: u.id,
      role: input.role,
      site_id: input.siteId,
      department_id: input.departmentId,
      created_at: now,
    });
    return u.id;
  });
}

export async function addAssignment(
  userId: number,
  a: { role: Role; siteId: number | null; departmentId: number | null },
): Promise<void> {
  await db()("role_assignments").insert({
    user_id: userId,
    role: a.role,
    site_id: a.siteId,
    department_id: a.departmentId,
    created_at: new Date().toISOString(),
  });
}

export async function removeAssignment(userId: number, assignmentId: number): Promise<boolean> {
  return (await db()("role_assignments").where({ id: assignmentId, user_id: userId }).del()) > 0;
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
  return {
    id: u.id,
    email: u.email,
    displayName: u.display_name,
    active: Boolean(u.active),
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
