import { data } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { isProduction } from "~/config.server";
import { readOutbox } from "~/models/outbox.server";
import type { Route } from "./+types/admin.outbox";

export const meta: Route.MetaFunction = () => [{ title: "Mail outbox · Limberly" }];

// Only outside production, where mail goes to the local catcher instead of real inboxes.
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "admin.outbox");
  if (isProduction) throw data({ error: "The local outbox exists only outside production." }, { status: 404 });
  return { messages: readOutbox() };
}

export default function AdminOutbox({ loaderData }: Route.ComponentProps) {
  return (
    <div className="grid gap-4">
      <h1 className="page-title">Mail outbox (local catcher)</h1>
      <p className="text-ink-soft">
        Outside production, every e-mail Limberly sends is caught here instead of being delivered.
      </p>
      {loaderData.messages.length === 0 && <p className="card text-ink-soft">No messages caught yet.</p>}
      {loaderData.messages.map((m) => (
        <details key={m.id} className="card">
          <summary className="cursor-pointer">
            <strong>{m.subject}</strong>{" "}
            <span className="text-sm text-ink-soft">
              to {m.to.join(", ")} · {m.receivedAt.slice(0, 19).replace("T", " ")}
            </span>
          </summary>
          <pre className="mt-3 whitespace-pre-wrap text-sm">{m.text}</pre>
          {m.attachments.length > 0 && (
            <p className="mt-2 text-sm">
              Attachments: {m.attachments.map((a) => `${a.filename} (${a.contentType}, ${a.size} bytes)`).join(", ")}
            </p>
          )}
        </details>
      ))}
    </div>
  );
}
