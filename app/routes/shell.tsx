import type { ReactNode } from "react";
import { Form, NavLink, Outlet, useRouteLoaderData } from "react-router";
import { requireSignedIn } from "~/auth/guard.server";
import { ROLE_LABELS } from "~/auth/permissions";
import { ErrorPanel, errorText } from "~/components/error-panel";
import { navFor } from "~/components/navigation";
import { isProduction } from "~/config.server";
import { keepRetryAfter } from "~/http/headers";
import type { Route } from "./+types/shell";

// The signed-in frame: who you are, your roles' navigation, sign-out. Each child route still
// checks its own permission; this loader only makes sure someone is signed in.
export const headers = keepRetryAfter;

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireSignedIn(request);
  return {
    user: { displayName: user.displayName, email: user.email, roles: user.roles },
    nav: navFor(user.roles, !isProduction),
  };
}

export default function Shell({ loaderData }: Route.ComponentProps) {
  return (
    <Frame {...loaderData}>
      <Outlet />
    </Frame>
  );
}

// An error in a page inside the shell: the page's own message (e.g. "No such worker in your scope."),
// with the header and navigation kept so the user can go on from there.
export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const frame = useRouteLoaderData<typeof loader>("routes/shell");
  const { title, detail } = errorText(error);
  const panel = <ErrorPanel title={title} detail={detail} />;
  return frame ? <Frame {...frame}>{panel}</Frame> : <main className="mx-auto max-w-xl p-6">{panel}</main>;
}

function Frame({ user, nav, children }: Awaited<ReturnType<typeof loader>> & { children: ReactNode }) {
  return (
    <div className="min-h-screen">
      <a
        href="#main"
        className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-10 focus:rounded focus:bg-card focus:p-2"
      >
        Skip to content
      </a>
      <header className="border-b border-line bg-card">
        <div className="mx-auto flex max-w-6xl flex-wrap items-center justify-between gap-3 px-4 py-3">
          <a href="/" className="text-lg font-bold tracking-tight text-spruce-800">
            Limberly
          </a>
          <div className="flex items-center gap-3 text-sm">
            <span className="text-ink-soft">
              <span className="font-medium text-ink" data-testid="signed-in-as">
                {user.displayName}
              </span>
              {" · "}
              {user.roles.map((r) => ROLE_LABELS[r]).join(", ")}
            </span>
            <Form method="post" action="/sign-out" className="print:hidden">
              <button type="submit" className="btn-quiet min-h-10 px-3 py-1">
                Sign out
              </button>
            </Form>
          </div>
        </div>
        <nav aria-label="Main" className="mx-auto max-w-6xl overflow-x-auto px-4 pb-2 print:hidden">
          <ul className="flex gap-1 whitespace-nowrap md:flex-wrap">
            {nav.flatMap((group) =>
              group.items.map((item) => (
                <li key={item.to}>
                  <NavLink
                    to={item.to}
                    end
                    className={({ isActive }) =>
                      `inline-flex min-h-11 items-center rounded-md px-3 text-sm font-medium ${isActive ? "bg-spruce-100 text-spruce-800" : "text-ink-soft hover:bg-spruce-50"}`
                    }
                  >
                    {item.label}
                  </NavLink>
                </li>
              )),
            )}
          </ul>
        </nav>
      </header>
      <main id="main" className="mx-auto max-w-6xl px-4 py-6">
        {children}
      </main>
    </div>
  );
}
