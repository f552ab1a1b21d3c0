import { Form, redirect } from "react-router";
import { currentUser } from "~/auth/guard.server";
import { homeFor } from "~/auth/homes";
import { ROLE_LABELS } from "~/auth/permissions";
import { demoPersonas } from "~/auth/personas.server";
import { signInErrorMessage } from "~/auth/sign-in-messages";
import type { Route } from "./+types/sign-in";

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await currentUser(request);
  if (user) throw redirect(homeFor(user.roles));
  // Outside production the page offers the invented demo personas; each still runs the full OAuth2 flow.
  return { personas: demoPersonas(), error: signInErrorMessage(new URL(request.url).searchParams.get("error")) };
}

export default function SignIn({ loaderData }: Route.ComponentProps) {
  const { error } = loaderData;
  return (
    <main className="mx-auto flex min-h-screen max-w-lg flex-col justify-center p-4">
      <div className="card">
        <p className="text-sm font-semibold uppercase tracking-wider text-spruce-700">Limberly</p>
        <h1 className="page-title mt-1">Sign in</h1>
        <p className="mt-2 text-ink-soft">Use your organisation account. Limberly never sees your password.</p>
        {error && (
          <p role="alert" className="mt-4 rounded-md bg-alert-wash p-3 text-alert">
            {error}
          </p>
        )}
        <Form method="get" action="/auth/start" className="mt-6">
          <button className="btn-primary w-full" type="submit">
            Sign in with your organisation account
          </button>
        </Form>
        {loaderData.personas.length > 0 && (
          <section aria-labelledby="personas" className="mt-8 border-t border-line pt-6">
            <h2 id="personas" className="text-lg font-semibold">
              Demo personas
            </h2>
            <p className="mt-1 text-sm text-ink-soft">
              Invented people of the demo organisation. Choosing one signs in through the local identity-provider
              stand-in.
            </p>
            <ul className="mt-4 grid gap-2">
              {loaderData.personas.map((p) => (
                <li key={p.email}>
                  <Form method="get" action="/auth/start">
                    <input type="hidden" name="login_hint" value={p.email} />
                    <button type="submit" className="btn-quiet w-full justify-between text-left" data-persona={p.role}>
                      <span>
                        <span className="block font-semibold">{p.displayName}</span>
                        <span className="block text-sm text-ink-soft">{p.title}</span>
                      </span>
                      <span className="rounded bg-spruce-50 px-2 py-1 text-xs font-semibold text-spruce-800">
                        {ROLE_LABELS[p.role]}
                      </span>
                    </button>
                  </Form>
                </li>
              ))}
            </ul>
            <Form method="get" action="/auth/start" className="mt-4 flex flex-col gap-2 sm:flex-row sm:items-end">
              <div className="grow">
                <label htmlFor="other-identity" className="field-label">
                  Another identity (e-mail)
                </label>
                <input
                  id="other-identity"
                  name="login_hint"
                  type="email"
                  required
                  className="field-input"
                  placeholder="someone@example.org"
                />
              </div>
              <button type="submit" className="btn-quiet">
                Sign in as this identity
              </button>
            </Form>
          </section>
        )}
      </div>
    </main>
  );
}
