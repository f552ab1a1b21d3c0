import fs from "node:fs";
import { clock } from "~/config.server";
import { hostNowMs, setClockSource } from "~/dates";

// The settable clock of test and demo modes (config.server.ts refuses its settings in production). The clock
// starts at LIMBERLY_CLOCK_START and runs on from there at the host's pace; LIMBERLY_CLOCK_FILE names a file
// holding an instant, re-read whenever it changes, which moves the clock to that instant (and on from there).
// A simulation moves the server's "now" week by week by writing that file.

function parseInstant(text: string, where: string): number {
  const ms = Date.parse(text.trim());
  if (!/Z$|[+-]\d{2}:\d{2}$/.test(text.trim()) || Number.isNaN(ms))
    throw new Error(`${where} must hold an instant with its zone, like 2027-01-04T07:00:00Z, not "${text.trim()}".`);
  return ms;
}

let installed = false;
/** Installs the settable clock when configured; otherwise the host's clock stays. Idempotent. */
export function installClock(): void {
  if (installed || (!clock.start && !clock.file)) return;
  installed = true;
  // `anchor` is the clock's reading at host time `since`; it runs on at the host's pace.
  let anchor = clock.start ? parseInstant(clock.start, "LIMBERLY_CLOCK_START") : hostNowMs();
  let since = hostNowMs();
  let seenStamp = "";
  const file = clock.file;
  setClockSource(() => {
    if (file) {
      let stat: fs.Stats | undefined;
      try {
        stat = fs.statSync(file);
      } catch {
        stat = undefined; // no file (yet): the clock runs on from where it is
      }
      const stamp = stat ? `${stat.mtimeMs}:${stat.size}:${stat.ino}` : "";
      if (stat && stamp !== seenStamp) {
        seenStamp = stamp;
        anchor = parseInstant(fs.readFileSync(file, "utf8"), `LIMBERLY_CLOCK_FILE (${file})`);
        since = hostNowMs();
      }
    }
    return anchor + (hostNowMs() - since);
  });
}
