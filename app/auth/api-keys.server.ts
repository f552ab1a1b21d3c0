import crypto from "node:crypto";
import type { Knex } from "knex";
import { nowInstant } from "~/dates";
import { db } from "~/db.server";
import { UserError } from "~/errors";
import type { Role } from "./permissions";

// API keys: `lbk_<prefix>_<secret>`. Only a SHA-256 of the secret is stored (the secret is 256 random
// bits, so a slow hash adds nothing — common practice for high-entropy tokens); the full key is shown once.
export interface ApiKeyRecord {
  id: number;
  name: string;
  prefix: string;
  role: Role;
  siteIds: number[];
}

function hashSecret(secret: string): string {
  return crypto.createHash("sha256").update(secret).digest("hex");
}

/**
 * Stores a new key inside the caller's transaction. A key `awaitingApproval` is refused by verifyApiKey until
 * a second admin approves it (models/duties.server.ts decides which keys need that).
 */
export async function createApiKey(
  trx: Knex.Transaction,
  input: { name: string; role: Role; siteIds: number[]; createdBy: number; awaitingApproval: boolean },
): Promise<{ id: number; key: string }> {
  const siteIds = [...new Set(input.siteIds)];
  const known = await trx("sites").whereIn("id", siteIds).pluck("id");
  const missing = siteIds.filter((id) => !known.includes(id));
  if (missing.length) throw new UserError(`Sites: no site with id ${missing.join(", ")}.`, { field: "siteIds" });
  const prefix = crypto.randomBytes(6).toString("hex");
  const secret = crypto.randomBytes(32).toString("base64url");
  const [row] = await trx("api_keys")
    .insert({
      name: input.name,
      prefix,
      secret_hash: hashSecret(secret),
      role: input.role,
      created_by: input.createdBy,
      created_at: nowInstant(),
      awaiting_approval: input.awaitingApproval,
    })
    .returning("id");
  for (const siteId of siteIds) await trx("api_key_sites").insert({ api_key_id: row.id, site_id: siteId });
  return { id: row.id as number, key: `lbk_${prefix}_${secret}` };
}

const KEY_FORMAT = /^lbk_([0-9a-f]{12})_([A-Za-z0-9_-]{20,})$/;

/** The prefix of a presented key in the key format (the part that names the key), else null. */
export function apiKeyPrefix(presented: string): string | null {
  return KEY_FORMAT.exec(presented.trim())?.[1] ?? null;
}

export async function verifyApiKey(presented: string): Promise<ApiKeyRecord | null> {
  const m = KEY_FORMAT.exec(presented.trim());
  if (!m) return null;
  const row = await db()("api_keys").where({ prefix: m[1], awaiting_approval: false }).whereNull("revoked_at").first();
  if (!row) return null;
  const a = Buffer.from(row.secret_hash, "hex");
  const b = Buffer.from(hashSecret(m[2]), "hex");
  if (a.length !== b.length || !crypto.timingSafeEqual(a, b)) return null;
  const sites = await db()("api_key_sites").where({ api_key_id: row.id }).pluck("site_id");
  await db()("api_keys").where({ id: row.id }).update({ last_used_at: nowInstant() });
  return { id: row.id, name: row.name, prefix: row.prefix, role: row.role, siteIds: sites };
}

export async function revokeApiKey(id: number, trx: Knex.Transaction | Knex = db()): Promise<boolean> {
  const n = await trx("api_keys").where({ id }).whereNull("revoked_at").update({ revoked_at: nowInstant() });
  return n > 0;
}
