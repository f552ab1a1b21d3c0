import { describe, expect, it } from "vitest";
import { PERSONA, signIn, testDb } from "./helpers";

// A list page of many people is not a read of each of them: the access log gets one entry when one
// person's data is opened, none for a list.
const k = testDb();
const entriesBy = async (email: string) => {
  const u = await k("users").where({ email }).first("id");
  return k("access_log").where({ actor_user_id: u.id }).orderBy("id").select("worker_id", "resource", "route");
};

describe("access log and list pages", () => {
  it("the trainer's progress list logs nothing; opening one trainee's progress logs that trainee once", async () => {
    const { client } = await signIn(PERSONA.trainer);
    const before = await entriesBy(PERSONA.trainer);
    const list = await client.request("/progress");
    expect(list.status).toBe(200);
    const link = (await list.text()).match(/href="\/progress\/(\d+)\/(\d+)"/);
    expect(link, "the list links to a trainee's progress").toBeTruthy();
    expect(await entriesBy(PERSONA.trainer)).toEqual(before);
    expect((await client.request(`/progress/${link![1]}/${link![2]}`)).status).toBe(200);
    const after = await entriesBy(PERSONA.trainer);
    expect(after.slice(before.length)).toEqual([
      { worker_id: Number(link![1]), resource: "progress", route: `/progress/${link![1]}/${link![2]}` },
    ]);
  });

  it("the forecast list logs nothing; one worker's forecast logs that worker once", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const before = await entriesBy(PERSONA.coordinator);
    const list = await client.request("/forecast");
    expect(list.status).toBe(200);
    const id = (await list.text()).match(/href="\/forecast\/(\d+)"/)?.[1];
    expect(id, "the list links to a worker's forecast").toBeTruthy();
    expect(await entriesBy(PERSONA.coordinator)).toEqual(before);
    expect((await client.request(`/forecast/${id}`)).status).toBe(200);
    const after = await entriesBy(PERSONA.coordinator);
    expect(after.slice(before.length)).toEqual([
      { worker_id: Number(id), resource: "forecast", route: `/forecast/${id}` },
    ]);
  });
});
