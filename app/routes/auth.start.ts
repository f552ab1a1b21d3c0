import { getAuthenticator } from "~/auth/authenticator.server";
import type { Route } from "./+types/auth.start";

// Starts the authorization-code flow with PKCE: redirects to the identity provider.
export async function loader({ request }: Route.LoaderArgs) {
  const authenticator = await getAuthenticator();
  return await authenticator.authenticate("oidc", request);
}
