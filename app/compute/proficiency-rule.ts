// Proficiency criterion: a worker is proficient on a device type at the first session
// that completes a run of `consecutiveSessions` consecutive logged sessions whose task score is at or
// above `scoreThreshold`. Pure: no database, no clock.

export interface ProficiencyCriterion {
  scoreThreshold: number; // task score 0–1
  consecutiveSessions: number; // ≥ 1
}

/**
 * Index (0-based, in the order given) of the session at which the criterion is first met, or −1.
 * Sessions must be in the order they happened; a score below the threshold restarts the run.
 */
export function firstProficientIndex(scores: number[], criterion: ProficiencyCriterion): number {
  const { scoreThreshold, consecutiveSessions } = criterion;
  if (!(scoreThreshold >= 0 && scoreThreshold <= 1))
    throw new RangeError(`score threshold must be within 0–1, got ${scoreThreshold}`);
  if (!Number.isInteger(consecutiveSessions) || consecutiveSessions < 1) {
    throw new RangeError(`consecutive sessions must be a whole number ≥ 1, got ${consecutiveSessions}`);
  }
  let run = 0;
  for (let i = 0; i < scores.length; i++) {
    run = scores[i] >= scoreThreshold ? run + 1 : 0;
    if (run >= consecutiveSessions) return i;
  }
  return -1;
}
