import { dateIn, type Instant, type IsoDate, instantToWallClock, type WallClock } from "./calendar";

// The one dates module: never slice toISOString() or do date arithmetic by hand; call these. The clock is
// read only here (nowMs, nowDate, nowInstant, todayIn, wallClockNow); everything else takes its instant as an
// argument. The server may replace the clock's source once at start-up (app/clock.server.ts: a settable clock
// in test and demo modes only); everywhere else it is the host's clock.
export * from "./calendar";
export * from "./format";

let source: () => number = () => Date.now();
/** Replaces the clock's source (milliseconds since the epoch). Called by app/clock.server.ts only. */
export function setClockSource(read: () => number): void {
  source = read;
}
/** The current time in milliseconds since the epoch, on the one clock. */
export const nowMs = (): number => source();
/** The current time as a Date, on the one clock. */
export const nowDate = (): Date => new Date(source());
/** The current instant, ISO UTC. */
export const nowInstant = (): Instant => nowDate().toISOString();
/**
 * The host's own clock, never replaced: the settable clock's own pace, and expiry that a library stamped on
 * the host's clock and a browser judges on its own (the session cookie's expiry).
 */
export const hostNowMs = (): number => Date.now();
/** An instant `ms` milliseconds before now, ISO UTC. */
export const instantAgo = (ms: number): Instant => new Date(source() - ms).toISOString();
/** Today's date in a zone. */
export const todayIn = (zone: string, at: Instant | Date = nowDate()): IsoDate => dateIn(at, zone);
/** The wall-clock time now in a zone. */
export const wallClockNow = (zone: string, at: Instant | Date = nowDate()): WallClock => instantToWallClock(at, zone);
export * from "./ical";
