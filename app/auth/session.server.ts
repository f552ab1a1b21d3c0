import crypto from "node:crypto";
import { createCookie, createSessionStorage } from "react-router";
import { isProduction, sessionSecret } from "~/config.server";
import { hostNowMs, nowInstant } from "~/dates";
import { db } from "~/db.server";

// Server-side sessions: the cookie holds only a signed random id, the data lives in the `sessions`
// table, so sign-out really ends the session and a stolen old cookie is worthless.
export interface SessionData {
  userId: number;
  signedInAt: string;
}

const MAX_AGE_S = 8 * 60 * 60; // one working shift

const cookie = createCookie("__limberly", {
  httpOnly: true,
  sameSite: "lax",
  secure: isProduction,
  path: "/",
  maxAge: MAX_AGE_S,
  secrets: [sessionSecret],
});

/** The identity-provider-confirmed e-mail of someone without a role, shown on the not-provisioned page. */
export const unprovisionedEmail = createCookie("__limberly_unprovisioned", {
  httpOnly: true,
  sameSite: "lax",
  secure: isProduction,
  path: "/auth/not-provisioned",
  maxAge: 5 * 60,
  secrets: [sessionSecret],
});

export const sessionStorage = createSessionStorage<SessionData>({
  cookie,
  async createData(data, expires) {
    const id = crypto.randomBytes(32).toString("hex");
    await db()("sessions").insert({
      id,
      data: JSON.stringify(data),
      expires_at: expires?.toISOString() ?? null,
      created_at: nowInstant(),
    });
    return id;
  },
  async readData(id) {
    const row = await db()("sessions").where({ id }).first();
    if (!row) return null;
    if (row.expires_at && new Date(row.expires_at).getTime() < hostNowMs()) {
      await db()("sessions").where({ id }).del();
      return null;
    }
    return JSON.parse(row.data);
  },
  async updateData(id, data, expires) {
    await db()("sessions")
      .where({ id })
      .update({ data: JSON.stringify(data), expires_at: expires?.toISOString() ?? null });
  },
  async deleteData(id) {
    await db()("sessions").where({ id }).del();
  },
});

export function getSession(request: Request) {
  return sessionStorage.getSession(request.headers.get("Cookie"));
}
