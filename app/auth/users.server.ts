import { nowInstant } from "~/dates";
import { type Db, db } from "~/db.server";
import type { Role } from "./permissions";

export interface RoleAssignment {
  id: number;
  role: Role;
  siteId: number | null;
  departmentId: number | null;
}

export interface AppUser {
  id: number;
  email: string;
  displayName: string;
  active: boolean;
  assignments: RoleAssignment[];
  roles: Role[];
  workerId: number | null;
}

export async function findUserByEmail(email: string, k: Db = db()): Promise<AppUser | null> {
  const row = await k("users").whereRaw("lower(email) = ?", [email.trim().toLowerCase()]).first();
  return row ? loadUser(row, k) : null;
}

export async function findUserById(id: number, k: Db = db()): Promise<AppUser | null> {
  const row = await k("users").where({ id }).first();
  return row ? loadUser(row, k) : null;
}

async function loadUser(
  row: { id: number; email: string; display_name: string; active: boolean | number },
  k: Db,
): Promise<AppUser> {
  const assignments = (await k("role_assignments").where({ user_id: row.id }).orderBy("id")).map((a) => ({
    id: a.id,
    role: a.role as Role,
    siteId: a.site_id,
    departmentId: a.department_id,
  }));
  const worker = await k("workers").where({ user_id: row.id }).first("id");
  return {
    id: row.id,
    email: row.email,
    displayName: row.display_name,
    active: Boolean(row.active),
    assignments,
    roles: [...new Set(assignments.map((a) => a.role))],
    workerId: worker?.id ?? null,
  };
}

export async function markSignedIn(userId: number): Promise<void> {
  await db()("users").where({ id: userId }).update({ last_sign_in_at: nowInstant() });
}
