import { dateIn, type Instant, type IsoDate, instantToWallClock, type WallClock } from "./calendar";

// The one dates module: never slice toISOString() or do date arithmetic by hand; call these. The clock is
// read only here (nowInstant, todayIn, wallClockNow); everything else takes its instant as an argument.
export * from "./calendar";
export * from "./format";

/** The current instant, ISO UTC. */
export const nowInstant = (): Instant => new Date().toISOString();
/** Today's date in a zone. */
export const todayIn = (zone: string, now: Instant | Date = new Date()): IsoDate => dateIn(now, zone);
/** The wall-clock time now in a zone. */
export const wallClockNow = (zone: string, now: Instant | Date = new Date()): WallClock =>
  instantToWallClock(now, zone);
export * from "./ical";
