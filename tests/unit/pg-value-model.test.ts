import { describe, expect, it } from "vitest";
import { pgTypes } from "../../knexfile";

// The text the PostgreSQL server sends (ISO DateStyle, as documented in the PostgreSQL manual, "Date/Time
// Output") turned into the values SQLite gives for the same rows. Type OIDs from pg_type
// (int8 20, numeric 1700, date 1082, timestamp 1114, timestamptz 1184).
const parse = (oid: number, text: string) => (pgTypes.getTypeParser(oid, "text") as (s: string) => unknown)(text);

describe("PostgreSQL value model", () => {
  it("reads dates as YYYY-MM-DD text, never as Date objects", () => {
    expect(parse(1082, "2025-09-21")).toBe("2025-09-21");
  });

  it("reads instants as ISO UTC text whatever the server's TimeZone", () => {
    expect(parse(1184, "2026-11-30 10:00:00+01")).toBe("2026-11-30T09:00:00.000Z");
    expect(parse(1184, "2026-11-30 09:00:00.123+00")).toBe("2026-11-30T09:00:00.123Z");
    expect(parse(1184, "2026-03-29 03:30:00+02")).toBe("2026-03-29T01:30:00.000Z"); // the day clocks go forward in Berlin
  });

  it("reads zone-less wall-clock times as they were written", () => {
    expect(parse(1114, "2026-12-07 09:00:00")).toBe("2026-12-07T09:00:00");
  });

  it("reads counts and sums as numbers while they are exact", () => {
    expect(parse(20, "42")).toBe(42);
    expect(parse(20, "9007199254740993")).toBe("9007199254740993"); // 2^53 + 1 is not a safe integer
    expect(parse(1700, "19.6")).toBe(19.6);
    expect(parse(1700, "12345678901234567890")).toBe("12345678901234567890");
  });

  it("leaves other types to the driver", () => {
    expect(parse(701, "0.1")).toBe(0.1); // float8
    expect(parse(16, "t")).toBe(true); // bool
  });
});
