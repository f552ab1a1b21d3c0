import { unprovisionedEmail } from "~/auth/session.server";
import type { Route } from "./+types/auth.not-provisioned";

export const meta: Route.MetaFunction = () => [{ title: "Not provisioned · Limberly" }];

// The e-mail comes only from the signed cookie the sign-in callback set, never from the URL.
export async function loader({ request }: Route.LoaderArgs) {
  const email: unknown = await unprovisionedEmail.parse(request.headers.get("Cookie"));
  return { email: typeof email === "string" ? email.slice(0, 320) : "" };
}

export default function NotProvisioned({ loaderData }: Route.ComponentProps) {
  return (
    <main className="mx-auto max-w-lg p-4">
      <div className="card mt-12">
        <h1 className="page-title">Your account is not provisioned</h1>
        <p className="mt-3 text-ink-soft">
          Your organisation confirmed who you are
          {loaderData.email ? (
            <>
              {" "}
              (<strong className="text-ink">{loaderData.email}</strong>)
            </>
          ) : null}
          , but nobody has given this identity a role in Limberly, so you have not been signed in.
        </p>
        <p className="mt-3 text-ink-soft">Ask your Limberly administrator to add you with the role you need.</p>
        <a href="/sign-in" className="btn-quiet mt-6">
          Back to sign-in
        </a>
      </div>
    </main>
  );
}
