import { redirect } from "react-router";
import { getAuthenticator } from "~/auth/authenticator.server";
import { homeFor } from "~/auth/homes";
import { getSession, sessionStorage, unprovisionedEmail } from "~/auth/session.server";
import type { SignInErrorCode } from "~/auth/sign-in-messages";
import { countSignInFailure, refuseBlockedSignIn } from "~/auth/throttle.server";
import { markSignedIn } from "~/auth/users.server";
import { nowInstant } from "~/dates";
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
    // The page shows a fixed message for the code; the details go to the server log only.
    const message = e instanceof Error ? e.message : "unknown error";
    console.error("sign-in callback failed:", message);
    const code: SignInErrorCode = /state/i.test(message) ? "state-mismatch" : "callback-failed";
    throw redirect(`/sign-in?error=${code}`);
  }
  const old = await getSession(request);
  const clearOld = await sessionStorage.destroySession(old);
  if (result.kind !== "ok") {
    await countSignInFailure(request);
    // The e-mail the identity provider confirmed travels in a short-lived signed cookie, never in the URL.
    const headers = new Headers();
    headers.append("Set-Cookie", clearOld);
    headers.append("Set-Cookie", await unprovisionedEmail.serialize(result.email));
    throw redirect("/auth/not-provisioned", { headers });
  }
  const session = await sessionStorage.getSession();
  session.set("userId", result.user.id);
  session.set("signedInAt", nowInstant());
  await markSignedIn(result.user.id);
  throw redirect(homeFor(result.user.roles), {
    headers: { "Set-Cookie": await sessionStorage.commitSession(session) },
  });
}
