import { db } from "~/db.server";

// Liveness and database check for load balancers and the start-up scripts. Public, no data.
export async function loader() {
  await db().raw("select 1");
  return Response.json({ status: "ok" });
}
