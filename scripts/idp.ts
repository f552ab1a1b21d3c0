// Local OpenID Connect identity-provider stand-in (oauth2-mock-server) for development, demo and tests.
// It signs in whoever the authorization request names in `login_hint` (the persona picker sets it):
// the code it issues is remembered with that e-mail, and the tokens issued for that code carry it.

import { fileURLToPath } from "node:url";
import { OAuth2Server } from "oauth2-mock-server";

export async function startIdp(
  port: number,
  host = "127.0.0.1",
): Promise<{ issuer: string; stop: () => Promise<void> }> {
  const server = new OAuth2Server();
  await server.issuer.keys.generate("RS256");
  const emailByCode = new Map<string, string>();
  server.service.on("beforeAuthorizeRedirect", (redirect: { url: URL }, req: { query: Record<string, unknown> }) => {
    const hint = typeof req.query.login_hint === "string" ? req.query.login_hint : "";
    const code = redirect.url.searchParams.get("code");
    if (code && hint) emailByCode.set(code, hint.trim().toLowerCase());
  });
  server.service.on(
    "beforeTokenSigning",
    (token: { payload: Record<string, unknown> }, req: { body?: Record<string, unknown> }) => {
      const code = typeof req.body?.code === "string" ? req.body.code : "";
      const email = emailByCode.get(code);
      if (email) {
        token.payload.sub = email;
        token.payload.email = email;
        token.payload.email_verified = true;
      }
    },
  );
  server.service.on("beforeResponse", (_res: unknown, req: { body?: Record<string, unknown> }) => {
    const code = typeof req.body?.code === "string" ? req.body.code : "";
    emailByCode.delete(code); // a code is good for one exchange only
  });
  await server.start(port, host);
  const issuer = `http://${host}:${port}`;
  server.issuer.url = issuer;
  return { issuer, stop: () => server.stop() };
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const port = Number(process.env.IDP_PORT ?? 9400);
  const { issuer } = await startIdp(port);
  console.log(`identity-provider stand-in at ${issuer}`);
}
