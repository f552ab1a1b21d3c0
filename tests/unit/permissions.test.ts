import { describe, expect, it } from "vitest";
import { ACTIONS, can, isClinicalRole, ROLES, roleAllows } from "../../app/auth/permissions";
import { scopeFrom } from "../../app/auth/scope";

// Who may do what (docs/architecture.md, roles). Health-data actions never reach admin or manager.
const HEALTH = [
  "assessments.read",
  "assessments.write",
  "forecast.read",
  "forecast.clinical",
  "models.manage",
  "progress.all",
  "progress.notes",
  "sessions.log",
  "courses.review",
] as const;

describe("role × action table", () => {
  it("clinical roles (a second admin approves them) are exactly those reaching scores, traces or session logs", () => {
    expect(ROLES.filter(isClinicalRole)).toEqual(["assessor", "trainer"]);
  });

  it("admin and manager hold no health-data action", () => {
    for (const a of HEALTH) {
      expect(roleAllows("admin", a), a).toBe(false);
      expect(roleAllows("manager", a), a).toBe(false);
    }
  });
  it("the manager may only read readiness aggregates; the worker only their own record", () => {
    expect(ACTIONS.filter((a) => roleAllows("manager", a))).toEqual(["readiness.read"]);
    expect(ACTIONS.filter((a) => roleAllows("worker", a)).every((a) => a.startsWith("self."))).toBe(true);
  });
  it("coordinators see forecasts but not raw assessment scores", () => {
    expect(roleAllows("coordinator", "forecast.read")).toBe(true);
    expect(roleAllows("coordinator", "assessments.read")).toBe(false);
  });
  it("only assessors decide on a paused course", () => {
    expect(ROLES.filter((r) => can({ roles: [r] }, "courses.review"))).toEqual(["assessor"]);
  });
  it("every role has at least one action", () => {
    for (const r of ROLES)
      expect(
        ACTIONS.some((a) => roleAllows(r, a)),
        r,
      ).toBe(true);
  });
});

describe("can", () => {
  it("is true when any of the roles allows the action, false for none", () => {
    expect(can({ roles: ["manager", "assessor"] }, "forecast.clinical")).toBe(true);
    expect(can({ roles: ["coordinator"] }, "forecast.clinical")).toBe(false);
    expect(can({ roles: [] }, "self.read")).toBe(false);
  });
  it("only assessors see the clinical forecast view", () => {
    expect(ROLES.filter((r) => can({ roles: [r] }, "forecast.clinical"))).toEqual(["assessor"]);
  });
  it("a trainer reaches progress of own trainees only; assessors and coordinators of their whole scope", () => {
    expect(ROLES.filter((r) => can({ roles: [r] }, "progress.all"))).toEqual(["assessor", "coordinator"]);
    expect(ROLES.filter((r) => can({ roles: [r] }, "progress.notes"))).toEqual(["assessor", "trainer"]);
    expect(ROLES.filter((r) => can({ roles: [r] }, "sessions.own"))).toEqual(["trainer"]);
  });
});

describe("scope", () => {
  it("unions sites and departments of the roles that grant the action", () => {
    const s = scopeFrom(
      [
        { role: "assessor", siteId: 2, departmentId: null },
        { role: "assessor", siteId: 1, departmentId: null },
        { role: "manager", siteId: 1, departmentId: 7 },
        { role: "trainer", siteId: 3, departmentId: null },
      ],
      ["assessor", "manager"],
    );
    expect(s).toEqual({ allSites: false, siteIds: [1, 2], departmentIds: [7] });
  });
  it("an organisation-wide assignment sees all sites", () => {
    expect(scopeFrom([{ role: "admin", siteId: null, departmentId: null }], ["admin"]).allSites).toBe(true);
  });
});
