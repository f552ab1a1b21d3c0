import { redirect } from "react-router";
import { assertSameOrigin } from "~/auth/guard.server";
import { getSession, sessionStorage } from "~/auth/session.server";
import type { Route } from "./+types/sign-out";

// Sign-out is a POST (a link cannot sign anyone out); it deletes the server-side session.
export async function action({ request }: Route.ActionArgs) {
  assertSameOrigin(request);
  const session = await getSession(request);
  throw redirect("/sign-in", { headers: { "Set-Cookie": await sessionStorage.destroySession(session) } });
}

export function loader() {
  throw redirect("/");
}
