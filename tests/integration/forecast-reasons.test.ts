import { describe, expect, it } from "vitest";
import { noForecastText } from "~/schemas/forecast";
import { PERSONA, pageText, signIn, testDb } from "./helpers";

// "No forecast" always states the true reason, and re-scoring a baseline makes the forecast in the same
// request. Through the app's pages on the running stack; the expected reason is worked out here from the rows.
const k = testDb();

const text = (html: string) => pageText(html);

const planning = async (workerId: number) =>
  (await k("consent_records").where({ worker_id: workerId, purpose: "planning" }).orderBy("id", "desc").first("status"))
    ?.status ?? null;

describe("the reason there is no forecast", () => {
  it("names missing planning consent and the measures a baseline lacks", async () => {
    const { client } = await signIn(PERSONA.assessor);
    const noConsent = await k("workers")
      .whereNotExists(k("consent_records").whereRaw("consent_records.worker_id = workers.id"))
      .whereNot("stage", "withdrawn")
      .orderBy("id")
      .first("id");
    expect(text(await (await client.request(`/forecast/${noConsent.id}`)).text())).toContain(
      noForecastText("no_consent"),
    );

    // A worker with planning consent and a baseline but no forecast: the page names exactly what is missing.
    const models = await k("model_versions").where({ status: "approved" }).select("device_type_id", "measure_ids");
    const candidates = await k("workers as w")
      .whereExists(k("assessment_sessions as s").whereRaw("s.worker_id = w.id"))
      .whereNotExists(k("forecasts as f").whereRaw("f.worker_id = w.id"))
      .whereNot("w.stage", "withdrawn")
      .orderBy("w.id")
      .select("w.id");
    let checked = 0;
    for (const c of candidates) {
      if ((await planning(c.id)) !== "given") continue;
      const have = new Set(
        (
          await k("assessment_results as r")
            .join("assessment_sessions as s", "s.id", "r.session_id")
            .where("s.worker_id", c.id)
            .whereNotNull("r.z_score")
            .select("r.measure_id")
        ).map((r) => r.measure_id as number),
      );
      const ids: number[] = JSON.parse(models[0].measure_ids);
      const missing = ids.filter((id) => !have.has(id));
      if (missing.length === 0) continue;
      const names = new Map(
        (await k("measures").whereIn("id", missing).select("id", "name")).map((m) => [m.id as number, m.name]),
      );
      const page = text(await (await client.request(`/forecast/${c.id}`)).text());
      expect(page).toContain(
        noForecastText(
          "missing_measures",
          missing.map((id) => names.get(id)!),
        ),
      );
      checked++;
      break;
    }
    expect(checked, "a planning-consented worker whose baseline lacks a model measure").toBe(1);
  });

  it("names a device type without an approved model, and re-scoring the baseline makes the forecast in that request", async () => {
    const { client } = await signIn(PERSONA.assessor);
    const device = await k("device_types").orderBy("id").first("id", "code", "name");
    // Any worker with a forecast on this device and a baseline to re-score (other files move workers between
    // stages, so the stage is not pinned).
    const f = await k("forecasts as f")
      .join("workers as w", "w.id", "f.worker_id")
      .where({ "f.device_type_id": device.id })
      .whereNotIn("w.stage", ["withdrawn", "paused"])
      .whereExists(k("assessment_sessions as s").select("s.id").whereRaw("s.worker_id = w.id"))
      .whereNotExists(
        k("device_courses as c")
          .select("c.id")
          .whereRaw("c.worker_id = w.id and c.device_type_id = f.device_type_id")
          .whereIn("c.status", ["paused", "stopped"]),
      )
      .orderBy("w.id")
      .first("w.id");
    expect(f, "a worker with a forecast on the first device type and a baseline").toBeDefined();
    const session = await k("assessment_sessions").where({ worker_id: f.id }).orderBy("id", "desc").first("id");
    const approved = await k("model_versions").where({ device_type_id: device.id, status: "approved" }).select("id");
    expect(approved).toHaveLength(1);
    try {
      await k("model_versions").where({ id: approved[0].id }).update({ status: "draft" });
      await k("forecasts").where({ worker_id: f.id, device_type_id: device.id }).del();
      expect(text(await (await client.request(`/forecast/${f.id}`)).text())).toContain(noForecastText("no_model"));
    } finally {
      await k("model_versions").where({ id: approved[0].id }).update({ status: "approved" });
    }
    // The model is back but nothing has recomputed this worker's forecast yet: said as it is.
    expect(text(await (await client.request(`/forecast/${f.id}`)).text())).toContain(noForecastText("not_computed"));

    const body = new FormData();
    body.append("intent", "rescore");
    body.append("normSetId", "");
    const res = await client.request(`/assess/workers/${f.id}/sessions/${session.id}`, { method: "POST", body });
    expect(res.status).toBe(200);
    const stored = await k("forecasts").where({ worker_id: f.id, device_type_id: device.id }).first();
    expect(stored).toBeTruthy();
    expect(text(await res.text())).toContain(
      `${device.name}: forecast median ${Number(stored.median_hours).toFixed(1)} h.`,
    );
  });
});
