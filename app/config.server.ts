// Configuration read from the environment, checked once. See README "Configuration".
export type Mode = "production" | "demo" | "test" | "development";

function readMode(): Mode {
  const m = process.env.LIMBERLY_MODE;
  if (m === "production" || m === "demo" || m === "test" || m === "development") return m;
  return process.env.NODE_ENV === "production" ? "production" : "development";
}

export const mode: Mode = readMode();
export const isProduction = mode === "production";

const port = Number(process.env.PORT ?? 3000);
export const appUrl = (process.env.APP_URL ?? `http://localhost:${port}`).replace(/\/$/, "");

const secret = process.env.SESSION_SECRET;
if (isProduction && (!secret || secret.length < 32)) {
  // Refuse to start rather than sign sessions with a guessable secret.
  throw new Error("SESSION_SECRET must be set (at least 32 characters) when LIMBERLY_MODE is production.");
}
export const sessionSecret = secret ?? "limberly-development-secret-not-for-production";

// The settable clock (app/clock.server.ts): test and demo modes only. In production the server refuses to
// start with either set, so a stray variable can never move a real programme's dates.
export const clock = {
  start: process.env.LIMBERLY_CLOCK_START || undefined,
  file: process.env.LIMBERLY_CLOCK_FILE || undefined,
};
if ((clock.start || clock.file) && mode !== "test" && mode !== "demo")
  throw new Error(
    `LIMBERLY_CLOCK_START and LIMBERLY_CLOCK_FILE set the clock in test and demo modes only; unset them (LIMBERLY_MODE is ${mode}).`,
  );

export const oidc = {
  issuer: (process.env.OIDC_ISSUER ?? "http://127.0.0.1:9400").replace(/\/$/, ""),
  clientId: process.env.OIDC_CLIENT_ID ?? "limberly",
  clientSecret: process.env.OIDC_CLIENT_SECRET ?? "limberly-local-secret",
};

export const mail = {
  host: process.env.SMTP_HOST ?? "127.0.0.1",
  port: Number(process.env.SMTP_PORT ?? 2525),
  from: process.env.MAIL_FROM ?? "Limberly <no-reply@limberly.local>",
};

export const outboxDir = process.env.OUTBOX_DIR ?? "data/outbox";

// Background jobs (allocation solves): a solving instance writes a heartbeat every heartbeatMs; a run whose
// heartbeat is older than staleMs is taken back (queued again, or failed after maxAttempts claims).
const positive = (v: string | undefined, fallback: number) => (Number(v) > 0 ? Number(v) : fallback);
export const jobs = {
  heartbeatMs: positive(process.env.LIMBERLY_JOB_HEARTBEAT_MS, 5_000),
  staleMs: positive(process.env.LIMBERLY_JOB_STALE_MS, 60_000),
  maxAttempts: positive(process.env.LIMBERLY_JOB_MAX_ATTEMPTS, 2),
  /** cron (UTC) of the daily retention purge on PostgreSQL */
  retentionCron: process.env.LIMBERLY_RETENTION_CRON ?? "15 3 * * *",
};
if (jobs.staleMs < 3 * jobs.heartbeatMs)
  throw new Error("LIMBERLY_JOB_STALE_MS must be at least three heartbeats (LIMBERLY_JOB_HEARTBEAT_MS).");

// HTTP. TRUST_PROXY lists the reverse proxies (addresses, CIDR ranges, or express's names `loopback`,
// `linklocal`, `uniquelocal`; comma-separated) whose X-Forwarded-For is believed. Empty (the default): the
// client address is the socket's peer and X-Forwarded-For is ignored. HSTS is sent in production only.
export const http = {
  trustProxy: (process.env.TRUST_PROXY ?? "")
    .split(",")
    .map((s) => s.trim())
    .filter(Boolean),
  hsts: isProduction,
};

// Throttling: each limit is "attempts/seconds"; an address, key prefix or user over it is refused (429) for
// the rest of that window.
export interface Limit {
  points: number;
  seconds: number;
}
function readLimit(name: string, fallback: Limit): Limit {
  const v = process.env[name];
  if (v === undefined || v === "") return fallback;
  const m = /^(\d+)\/(\d+)$/.exec(v.trim());
  if (!m || Number(m[1]) < 1 || Number(m[2]) < 1)
    throw new Error(`${name} must read "attempts/seconds" (for example "20/900"), not "${v}".`);
  return { points: Number(m[1]), seconds: Number(m[2]) };
}
export const limits = {
  /** failed sign-in callbacks (bad state or code, or a person who is not provisioned) per client address */
  signInFailuresPerAddress: readLimit("LIMBERLY_LIMIT_SIGNIN_FAILURES", { points: 20, seconds: 900 }),
  /** refused API keys per client address */
  apiKeyFailuresPerAddress: readLimit("LIMBERLY_LIMIT_API_KEY_FAILURES", { points: 20, seconds: 900 }),
  /** refused API keys per key prefix (guessing one key's secret from many addresses) */
  apiKeyFailuresPerPrefix: readLimit("LIMBERLY_LIMIT_API_KEY_PREFIX_FAILURES", { points: 10, seconds: 900 }),
  /** file uploads (roster imports, traces) per signed-in user */
  uploadsPerUser: readLimit("LIMBERLY_LIMIT_UPLOADS", { points: 30, seconds: 600 }),
};
