import {
  type RateLimiterAbstract,
  RateLimiterMemory,
  RateLimiterPostgres,
  RateLimiterRes,
} from "rate-limiter-flexible";
import { limits } from "~/config.server";
import { instantAgo, nowInstant } from "~/dates";
import { db } from "~/db.server";
import { clientAddress } from "~/http/client.server";

// Throttling of what an attacker repeats: failed sign-in callbacks and refused API keys (per client address,
// and per key prefix), and uploads (per user). Counters come from rate-limiter-flexible: in this process on
// SQLite (one instance), in the rate_limits table on PostgreSQL so that every instance counts together. The
// request that first goes over a limit writes a security event, which admins see on their home page.
type LimitName = keyof typeof limits;
type EventKind = "sign-in-failures" | "api-key-failures" | "api-key-prefix-failures" | "uploads";

const limiters = new Map<LimitName, RateLimiterAbstract>();
function limiter(name: LimitName): RateLimiterAbstract {
  const existing = limiters.get(name);
  if (existing) return existing;
  const { points, seconds } = limits[name];
  const opts = { keyPrefix: name, points, duration: seconds, blockDuration: seconds };
  const k = db();
  const created =
    k.client.config.client === "pg"
      ? new RateLimiterPostgres({
          ...opts,
          storeClient: k,
          storeType: "knex",
          tableName: "rate_limits",
          tableCreated: true,
          clearExpiredByTimeout: true,
          // Should the database not answer, count in this process rather than let everything through.
          insuranceLimiter: new RateLimiterMemory(opts),
        })
      : new RateLimiterMemory(opts);
  limiters.set(name, created);
  return created;
}

function tooMany(res: RateLimiterRes, message: string, as: "json" | "text"): Response {
  const seconds = Math.max(1, Math.ceil(res.msBeforeNext / 1000));
  const wait = seconds < 120 ? `${seconds} seconds` : `${Math.ceil(seconds / 60)} minutes`;
  const text = `${message} Try again in ${wait}.`;
  const headers = { "Retry-After": String(seconds) };
  return as === "json"
    ? Response.json({ error: text }, { status: 429, headers })
    : new Response(text, { status: 429, headers: { ...headers, "Content-Type": "text/plain; charset=utf-8" } });
}

/** The counter's state if `key` is over the limit now (blocked for the rest of the window), else null. */
async function blocked(name: LimitName, key: string): Promise<RateLimiterRes | null> {
  const res = await limiter(name).get(key);
  return res && res.consumedPoints > limits[name].points ? res : null;
}

/** Counts one attempt; returns the counter's state if this one went over the limit, else null. */
async function count(
  name: LimitName,
  key: string,
  event: { kind: EventKind; subject: string; detail: string },
): Promise<RateLimiterRes | null> {
  try {
    await limiter(name).consume(key);
    return null;
  } catch (e) {
    if (!(e instanceof RateLimiterRes)) throw e;
    if (e.consumedPoints === limits[name].points + 1) await recordSecurityEvent(event);
    return e;
  }
}

const addressOf = (request: Request) => clientAddress(request) ?? "unknown";
const per = (l: { points: number; seconds: number }) => `${l.points} in ${Math.round(l.seconds / 60)} min`;

// --- sign-in -----------------------------------------------------------------------------------------------

const SIGN_IN_REFUSED = "Too many failed sign-in attempts from your network address.";

/** Throws 429 (plain text) while the caller's address is blocked after failed sign-in callbacks. */
export async function refuseBlockedSignIn(request: Request): Promise<void> {
  const res = await blocked("signInFailuresPerAddress", addressOf(request));
  if (res) throw tooMany(res, SIGN_IN_REFUSED, "text");
}

/** Counts a failed sign-in callback; throws 429 when it goes over the limit. */
export async function countSignInFailure(request: Request): Promise<void> {
  const address = addressOf(request);
  const res = await count("signInFailuresPerAddress", address, {
    kind: "sign-in-failures",
    subject: address,
    detail: `More than ${per(limits.signInFailuresPerAddress)} failed sign-ins from ${address}; refused for the rest of that time.`,
  });
  if (res) throw tooMany(res, SIGN_IN_REFUSED, "text");
}

// --- API keys ----------------------------------------------------------------------------------------------

const KEY_REFUSED = "Too many refused API keys from your address or for this key.";

/** Throws 429 (JSON) while the caller's address, or the presented key's prefix, is blocked. */
export async function refuseBlockedApiKey(request: Request, prefix: string | null): Promise<void> {
  const res =
    (await blocked("apiKeyFailuresPerAddress", addressOf(request))) ??
    (prefix ? await blocked("apiKeyFailuresPerPrefix", prefix) : null);
  if (res) throw tooMany(res, KEY_REFUSED, "json");
}

/** Counts a refused API key against the address and the prefix; throws 429 when either goes over. */
export async function countApiKeyFailure(request: Request, prefix: string | null): Promise<void> {
  const address = addressOf(request);
  const byAddress = await count("apiKeyFailuresPerAddress", address, {
    kind: "api-key-failures",
    subject: address,
    detail: `More than ${per(limits.apiKeyFailuresPerAddress)} refused API keys from ${address}; refused for the rest of that time.`,
  });
  const byPrefix = prefix
    ? await count("apiKeyFailuresPerPrefix", prefix, {
        kind: "api-key-prefix-failures",
        subject: prefix,
        detail: `More than ${per(limits.apiKeyFailuresPerPrefix)} wrong secrets for the API key lbk_${prefix}_…; that key is refused for the rest of that time.`,
      })
    : null;
  const res = byAddress ?? byPrefix;
  if (res) throw tooMany(res, KEY_REFUSED, "json");
}

// --- uploads -----------------------------------------------------------------------------------------------

/** Counts a file upload (a multipart request) by this user; throws 429 (plain text) over the limit. */
export async function countUpload(request: Request, userId: number): Promise<void> {
  if (!request.headers.get("Content-Type")?.startsWith("multipart/form-data")) return;
  const res = await count("uploadsPerUser", String(userId), {
    kind: "uploads",
    subject: `user ${userId}`,
    detail: `More than ${per(limits.uploadsPerUser)} uploads by user ${userId}; refused for the rest of that time.`,
  });
  if (res) throw tooMany(res, "Too many uploads in a short time.", "text");
}

// --- security events ---------------------------------------------------------------------------------------

async function recordSecurityEvent(e: { kind: EventKind; subject: string; detail: string }): Promise<void> {
  await db()("security_events").insert({
    at: nowInstant(),
    kind: e.kind,
    subject: e.subject.slice(0, 255),
    detail: e.detail.slice(0, 500),
  });
}

export interface SecurityEvent {
  id: number;
  at: string;
  kind: EventKind;
  subject: string;
  detail: string;
}

/** The security events of the last `days` days, newest first. */
export async function recentSecurityEvents(days = 7, limit = 20): Promise<SecurityEvent[]> {
  const since = instantAgo(days * 86_400_000);
  const rows = await db()("security_events")
    .where("at", ">=", since)
    .orderBy("at", "desc")
    .orderBy("id", "desc")
    .limit(limit);
  return rows.map((r) => ({
    id: r.id,
    at: String(r.at),
    kind: r.kind as EventKind, // written only by recordSecurityEvent
    subject: r.subject,
    detail: r.detail,
  }));
}
