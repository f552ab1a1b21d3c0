import { redirect } from "react-router";
import { getAuthenticator } from "~/auth/authenticator.server";
import { homeFor } from "~/auth/homes";
import { getSession, sessionStorage } from "~/auth/session.server";
import { countSignInFailure, refuseBlockedSignIn } from "~/auth/throttle.server";
import { markSignedIn } from "~/auth/users.server";
import type { Route } from "./+types/auth.callback";

// The identity provider returns here with a code; the strategy exchanges it (with the PKCE verifier)
// and verifies the ID token. A provisioned person gets a brand-new session; anyone else gets none.
// Failures (a bad state or code, a person who is not provisioned) count against the caller's address.
export async function loader({ request }: Route.LoaderArgs) {
  await refuseBlockedSignIn(request);
  const authenticator = await getAuthenticator();
  let result: Awaited<ReturnType<typeof authenticator.authenticate>>;
  try {
    result = await authenticator.authenticate("oidc", request);
  } catch (e) {
    if (e instanceof Response) throw e;
    await countSignInFailure(request);
    const message = e instanceof Error ? e.message : "unknown error";
    throw redirect(`/sign-in?error=${encodeURIComponent(`Sign-in did not complete: ${message}`)}`);
  }
  const old = await getSession(request);
  const clearOld = await sessionStorage.destroySession(old);
  if (result.kind !== "ok") {
    await countSignInFailure(request);
    throw redirect(`/auth/not-provisioned?email=${encodeURIComponent(result.email)}`, {
      headers: { "Set-Cookie": clearOld },
    });
  }
  const session = await sessionStorage.getSession();
  session.set("userId", result.user.id);
  session.set("signedInAt", new Date().toISOString());
  await markSignedIn(result.user.id);
  throw redirect(homeFor(result.user.roles), {
    headers: { "Set-Cookie": await sessionStorage.commitSession(session) },
  });
}
