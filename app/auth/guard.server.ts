import { data, redirect } from "react-router";
import { appUrl } from "~/config.server";
import { type ApiKeyRecord, apiKeyPrefix, verifyApiKey } from "./api-keys.server";
import { type Action, type Role, roleAllows } from "./permissions";
import { type Scope, scopeFrom } from "./scope";
import { getSession } from "./session.server";
import { countApiKeyFailure, refuseBlockedApiKey } from "./throttle.server";
import { type AppUser, findUserById } from "./users.server";

// Every protected loader, action and API route goes through requireUser or requireApiAccess.
export type Principal =
  | { kind: "user"; user: AppUser; roles: Role[]; scope: Scope }
  | { kind: "apiKey"; key: ApiKeyRecord; roles: Role[]; scope: Scope };

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/** Refuses cross-site non-GET requests that carry ambient (cookie) credentials. */
export function assertSameOrigin(request: Request): void {
  if (SAFE_METHODS.has(request.method)) return;
  const allowed = new Set([new URL(request.url).origin, new URL(appUrl).origin]);
  const origin = request.headers.get("Origin");
  const referer = request.headers.get("Referer");
  const presented = origin ?? (referer ? safeOrigin(referer) : null);
  if (!presented || !allowed.has(presented)) {
    throw data({ error: "Cross-site request refused: the Origin header does not match this site." }, { status: 403 });
  }
}

function safeOrigin(u: string): string | null {
  try {
    return new URL(u).origin;
  } catch {
    return null;
  }
}

export async function currentUser(request: Request): Promise<AppUser | null> {
  const session = await getSession(request);
  const userId = session.get("userId");
  if (!userId) return null;
  const user = await findUserById(userId);
  return user?.active ? user : null;
}

function grantingRoles(roles: Role[], action: Action): Role[] {
  return roles.filter((r) => roleAllows(r, action));
}

/** For page loaders and actions: anonymous → redirect to sign-in; lacking the permission → 403. */
export async function requireUser(request: Request, action: Action): Promise<Principal & { kind: "user" }> {
  const user = await currentUser(request);
  if (!user) {
    const url = new URL(request.url);
    throw redirect(`/sign-in?returnTo=${encodeURIComponent(url.pathname + url.search)}`);
  }
  assertSameOrigin(request);
  const roles = grantingRoles(user.roles, action);
  if (roles.length === 0) {
    throw data({ error: "You do not have permission for this page." }, { status: 403 });
  }
  return { kind: "user", user, roles, scope: scopeFrom(user.assignments, roles) };
}

/** For signed-in pages that every role may open (home redirect, sign-out). */
export async function requireSignedIn(request: Request): Promise<AppUser> {
  const user = await currentUser(request);
  if (!user) throw redirect("/sign-in");
  assertSameOrigin(request);
  return user;
}

/** For /api/v1 resource routes: who is calling (Bearer API key or signed-in session); anonymous → 401 JSON. */
export async function authenticateApi(
  request: Request,
): Promise<{ kind: "apiKey"; key: ApiKeyRecord } | { kind: "user"; user: AppUser }> {
  const auth = request.headers.get("Authorization");
  if (auth?.startsWith("Bearer ")) {
    const prefix = apiKeyPrefix(auth.slice(7));
    await refuseBlockedApiKey(request, prefix);
    const key = await verifyApiKey(auth.slice(7));
    if (!key) {
      await countApiKeyFailure(request, prefix);
      throw Response.json({ error: "Invalid or revoked API key." }, { status: 401 });
    }
    return { kind: "apiKey", key };
  }
  const user = await currentUser(request);
  if (!user)
    throw Response.json(
      { error: "Authentication required: send an API key as 'Authorization: Bearer …'." },
      { status: 401 },
    );
  assertSameOrigin(request);
  return { kind: "user", user };
}

/** For /api/v1 resource routes that need one permission; lacking it → 403 JSON. */
export async function requireApiAccess(request: Request, action: Action): Promise<Principal> {
  const who = await authenticateApi(request);
  if (who.kind === "apiKey") {
    if (!roleAllows(who.key.role, action))
      throw Response.json({ error: `This key's role (${who.key.role}) may not ${action}.` }, { status: 403 });
    return {
      kind: "apiKey",
      key: who.key,
      roles: [who.key.role],
      scope: { allSites: false, siteIds: who.key.siteIds, departmentIds: [] },
    };
  }
  const roles = grantingRoles(who.user.roles, action);
  if (roles.length === 0) throw Response.json({ error: `You may not ${action}.` }, { status: 403 });
  return { kind: "user", user: who.user, roles, scope: scopeFrom(who.user.assignments, roles) };
}
