import { redirect } from "react-router";
import { currentUser } from "~/auth/guard.server";
import { homeFor } from "~/auth/homes";
import type { Route } from "./+types/home";

// "/" sends each person to their role's home, or to sign-in.
export async function loader({ request }: Route.LoaderArgs) {
  const user = await currentUser(request);
  if (!user) throw redirect("/sign-in");
  throw redirect(homeFor(user.roles));
}

export default function Home() {
  return null;
}
