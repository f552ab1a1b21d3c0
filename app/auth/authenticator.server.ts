import { createRemoteJWKSet, jwtVerify } from "jose";
import { Authenticator } from "remix-auth";
import { CodeChallengeMethod, OAuth2Strategy } from "remix-auth-oauth2";
import { appUrl, isProduction, oidc } from "~/config.server";
import { type AppUser, findUserByEmail } from "./users.server";

// OpenID Connect sign-in: authorization-code flow with PKCE against the configured issuer (in
// development, demo and tests the project's own stand-in, scripts/idp.ts). The ID token's signature,
// issuer and audience are verified against the issuer's published keys before its e-mail is trusted.
export type SignInResult = { kind: "ok"; user: AppUser } | { kind: "unprovisioned"; email: string };

interface Discovery {
  issuer: string;
  authorization_endpoint: string;
  token_endpoint: string;
  jwks_uri: string;
}

class OidcStrategy extends OAuth2Strategy<SignInResult> {
  // Outside production the persona picker passes login_hint so the stand-in knows whom to sign in.
  protected override authorizationParams(params: URLSearchParams, request: Request): URLSearchParams {
    const out = new URLSearchParams(params);
    const hint = new URL(request.url).searchParams.get("login_hint");
    if (hint) out.set("login_hint", hint);
    return out;
  }
}

let cached: Promise<Authenticator<SignInResult>> | null = null;

async function discover(): Promise<Discovery> {
  const res = await fetch(`${oidc.issuer}/.well-known/openid-configuration`);
  if (!res.ok) throw new Error(`Identity provider discovery failed at ${oidc.issuer}: HTTP ${res.status}`);
  return (await res.json()) as Discovery;
}

async function build(): Promise<Authenticator<SignInResult>> {
  const d = await discover();
  const jwks = createRemoteJWKSet(new URL(d.jwks_uri));
  const authenticator = new Authenticator<SignInResult>();
  authenticator.use(
    new OidcStrategy(
      {
        cookie: {
          name: "__limberly_oidc",
          httpOnly: true,
          sameSite: "Lax",
          secure: isProduction as true,
          path: "/auth",
          maxAge: 600,
        },
        clientId: oidc.clientId,
        clientSecret: oidc.clientSecret,
        authorizationEndpoint: d.authorization_endpoint,
        tokenEndpoint: d.token_endpoint,
        redirectURI: `${appUrl}/auth/callback`,
        scopes: ["openid", "email", "profile"],
        codeChallengeMethod: CodeChallengeMethod.S256,
      },
      async ({ tokens }) => {
        const { payload } = await jwtVerify(tokens.idToken(), jwks, { issuer: d.issuer, audience: oidc.clientId });
        const email =
          typeof payload.email === "string" ? payload.email : typeof payload.sub === "string" ? payload.sub : "";
        const user = email ? await findUserByEmail(email) : null;
        if (!user?.active || user.roles.length === 0) return { kind: "unprovisioned", email };
        return { kind: "ok", user };
      },
    ),
    "oidc",
  );
  return authenticator;
}

export function getAuthenticator(): Promise<Authenticator<SignInResult>> {
  if (!cached)
    cached = build().catch((e) => {
      cached = null;
      throw e;
    });
  return cached;
}
