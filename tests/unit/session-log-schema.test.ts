import { describe, expect, it } from "vitest";
import { courseDecisionSchema } from "../../app/schemas/course-review";
import { scoreRead, trainerLogSchema } from "../../app/schemas/session-log";

// Boundary rules of the session log and the course decision (common practice: a decimal comma is how many
// European keyboards type a decimal; the form states which number it read).
const log = (taskScore: string) =>
  trainerLogSchema.safeParse({ start: "2026-12-02T09:00", end: "2026-12-02T09:45", taskScore });

describe("task scores", () => {
  it("reads a decimal point or a decimal comma as the same number", () => {
    expect(log("0.62").data?.taskScore).toBe(0.62);
    expect(log("0,62").data?.taskScore).toBe(0.62);
    expect(log(" 1,0 ").data?.taskScore).toBe(1);
  });
  it("refuses what is not one number between 0 and 1, naming the field", () => {
    for (const bad of ["1,5", "0,6,2", "0.6.2", "-0,1", "abc", ""]) {
      const r = log(bad);
      expect(r.success, bad).toBe(false);
      expect(r.error?.issues.find((i) => i.path[0] === "taskScore")?.message, bad).toBe(
        "Task score: a number between 0 and 1.",
      );
    }
  });
  it("states what was typed when it differs from the number read", () => {
    expect(scoreRead(0.62, "0,62")).toBe('0.62 (typed "0,62")');
    expect(scoreRead(0.62, "0.62")).toBe("0.62");
  });
});

describe("course decision", () => {
  const base = { intent: "decide", clinicalNote: "Fit checked; strap replaced and skin intact." };
  it("asks for a limit or other conditions on a resume with conditions, and a limit only there", () => {
    const none = courseDecisionSchema.safeParse({ ...base, decision: "resume_with_conditions" });
    expect(none.error?.issues[0]).toMatchObject({ path: ["wearTimeLimitMinutes"] });
    expect(
      courseDecisionSchema.safeParse({ ...base, decision: "resume_with_conditions", wearTimeLimitMinutes: "30" }).data
        ?.wearTimeLimitMinutes,
    ).toBe(30);
    expect(
      courseDecisionSchema.safeParse({ ...base, decision: "resume_with_conditions", conditions: "Skin check." })
        .success,
    ).toBe(true);
    expect(courseDecisionSchema.safeParse({ ...base, decision: "resume", wearTimeLimitMinutes: "30" }).success).toBe(
      false,
    );
  });
  it("requires a clinical note and a known decision", () => {
    expect(
      courseDecisionSchema.safeParse({ intent: "decide", decision: "resume", clinicalNote: "ok" }).error?.issues[0]
        .message,
    ).toContain("Clinical note");
    expect(courseDecisionSchema.safeParse({ ...base, decision: "later" }).error?.issues[0].message).toContain(
      "Decision:",
    );
  });
});
