import { Form, useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ROLE_LABELS, ROLES } from "~/auth/permissions";
import { ActionErrors, ActionForm, ActionNotice, SelectField, TextField } from "~/components/fields";
import { db } from "~/db.server";
import { formAction } from "~/forms.server";
import { issueApiKey, revokeIssuedKey } from "~/models/duties.server";
import { listSites } from "~/models/sites.server";
import { apiKeyFormSchema } from "~/schemas/admin";
import type { Route } from "./+types/admin.api-keys";

export const meta: Route.MetaFunction = () => [{ title: "API keys · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "admin.apikeys");
  const keys = await db()("api_keys as k")
    .leftJoin("users as u", "u.id", "k.created_by")
    .select(
      "k.id",
      "k.name",
      "k.prefix",
      "k.role",
      "k.created_at",
      "k.revoked_at",
      "k.last_used_at",
      "k.awaiting_approval",
      "u.display_name as created_by",
    )
    .orderBy("k.id", "desc");
  const keySites = await db()("api_key_sites as ks")
    .join("sites as s", "s.id", "ks.site_id")
    .select("ks.api_key_id", "s.name");
  return {
    keys: keys.map((k) => ({
      ...k,
      sites: keySites
        .filter((s) => s.api_key_id === k.id)
        .map((s) => s.name)
        .join(", "),
    })),
    sites: await listSites(),
  };
}

export async function action({ request }: Route.ActionArgs) {
  const me = await requireUser(request, "admin.apikeys");
  return formAction(await request.formData(), apiKeyFormSchema, async (v) => {
    if (v.intent === "revoke") {
      await revokeIssuedKey(me.user, v.keyId);
      return { notice: "Key revoked.", payload: null };
    }
    const created = await issueApiKey(me.user, v);
    return {
      notice: created.pending
        ? "The key is created but does not work yet: its role reaches health data, so another admin must approve it."
        : null,
      payload: created,
    };
  });
}

export default function AdminApiKeys({ loaderData }: Route.ComponentProps) {
  const { keys, sites } = loaderData;
  const r = useActionData<typeof action>();
  return (
    <div className="grid gap-6">
      <h1 className="page-title">API keys</h1>
      <p className="text-ink-soft">
        Keys let other systems call <code>/api/v1</code> with <code>Authorization: Bearer &lt;key&gt;</code>. Each key
        has one role and the sites it may reach.
      </p>
      <ActionNotice result={r} />
      {r?.payload && (
        <div role="status" className="card border-spruce-600">
          <p className="font-semibold">New key — copy it now, it will not be shown again:</p>
          <code className="mt-2 block break-all rounded bg-spruce-50 p-2" data-testid="new-api-key">
            {r.payload.key}
          </code>
        </div>
      )}
      <ActionErrors result={r} intent="revoke" />
      <section className="card overflow-x-auto p-0" tabIndex={0} aria-label="API keys">
        <table className="table-base">
          <caption className="sr-only">API keys</caption>
          <thead>
            <tr>
              <th scope="col">Name</th>
              <th scope="col">Prefix</th>
              <th scope="col">Role</th>
              <th scope="col">Sites</th>
              <th scope="col">Created</th>
              <th scope="col">Last used</th>
              <th scope="col">Status</th>
            </tr>
          </thead>
          <tbody>
            {keys.length === 0 && (
              <tr>
                <td colSpan={7} className="text-center text-ink-soft">
                  No keys yet.
                </td>
              </tr>
            )}
            {keys.map((k) => (
              <tr key={k.id}>
                <td>{k.name}</td>
                <td>
                  <code>{k.prefix}</code>
                </td>
                <td>{ROLE_LABELS[k.role as keyof typeof ROLE_LABELS]}</td>
                <td>{k.sites}</td>
                <td>
                  {(k.created_at as string).slice(0, 10)} by {k.created_by ?? "—"}
                </td>
                <td>{k.last_used_at ? String(k.last_used_at).slice(0, 16).replace("T", " ") : "never"}</td>
                <td>
                  {k.revoked_at ? (
                    `Revoked ${(k.revoked_at as string).slice(0, 10)}`
                  ) : k.awaiting_approval ? (
                    <a href="/admin/approvals" className="text-spruce-700 underline">
                      Waiting for a second admin
                    </a>
                  ) : (
                    <Form method="post">
                      <input type="hidden" name="intent" value="revoke" />
                      <input type="hidden" name="keyId" value={k.id} />
                      <button type="submit" className="btn-quiet" aria-label={`Revoke key ${k.name}`}>
                        Revoke
                      </button>
                    </Form>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
      <section className="card" aria-labelledby="new-key">
        <h2 id="new-key" className="text-lg font-semibold">
          Create a key
        </h2>
        <ActionForm intent="create" result={r} className="mt-3 grid gap-4 sm:grid-cols-3">
          <TextField name="name" label="Name (the calling system)" required />
          <SelectField
            name="role"
            label="Role"
            required
            options={ROLES.filter((x) => x !== "worker").map((x) => ({ value: x, label: ROLE_LABELS[x] }))}
          />
          <SelectField
            name="siteIds"
            label="Sites"
            multiple
            required
            options={sites.map((s) => ({ value: String(s.id), label: s.name }))}
            hint="Hold Ctrl or ⌘ to choose several."
          />
          <div className="sm:col-span-3">
            <button type="submit" className="btn-primary">
              Create key
            </button>
          </div>
        </ActionForm>
      </section>
    </div>
  );
}
