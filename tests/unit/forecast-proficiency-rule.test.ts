import { describe, expect, it } from "vitest";
import { firstProficientIndex } from "~/compute/proficiency-rule";

// The criterion rule: the first session completing a run of N consecutive sessions at or
// above the threshold. Expected indices are worked out by hand from the score lists.
describe("firstProficientIndex", () => {
  const c = { scoreThreshold: 0.8, consecutiveSessions: 2 };
  it("finds the second of two consecutive sessions at or above the threshold", () => {
    // 0.5 0.7 0.81 0.8 → the run starts at index 2 and is complete at index 3 (0.8 counts: "at or above").
    expect(firstProficientIndex([0.5, 0.7, 0.81, 0.8], c)).toBe(3);
  });
  it("a dip below the threshold restarts the run", () => {
    // 0.85 0.79 0.9 0.6 0.82 0.83 → runs: [0], [2], [4,5] → complete at index 5.
    expect(firstProficientIndex([0.85, 0.79, 0.9, 0.6, 0.82, 0.83], c)).toBe(5);
  });
  it("never met → −1; a single session criterion → first session at or above", () => {
    expect(firstProficientIndex([0.85, 0.79, 0.9], c)).toBe(-1);
    expect(firstProficientIndex([], c)).toBe(-1);
    expect(firstProficientIndex([0.2, 0.95, 0.3], { scoreThreshold: 0.9, consecutiveSessions: 1 })).toBe(1);
  });
  it("three consecutive sessions", () => {
    expect(
      firstProficientIndex([0.9, 0.9, 0.1, 0.9, 0.9, 0.9, 0.9], { scoreThreshold: 0.9, consecutiveSessions: 3 }),
    ).toBe(5);
  });
  it("rejects a threshold outside 0–1 and a non-whole run length, naming the field", () => {
    expect(() => firstProficientIndex([0.5], { scoreThreshold: 1.2, consecutiveSessions: 2 })).toThrow(
      /score threshold/,
    );
    expect(() => firstProficientIndex([0.5], { scoreThreshold: 0.8, consecutiveSessions: 1.5 })).toThrow(
      /consecutive sessions/,
    );
    expect(() => firstProficientIndex([0.5], { scoreThreshold: 0.8, consecutiveSessions: 0 })).toThrow(
      /consecutive sessions/,
    );
  });
});
