import { describe, expect, it } from "vitest";
import { binMinutes, defaultPeriod, formatMinutes, median, parseAnalyticsQuery, shiftOfHour } from "~/lib/analytics";

const ZONE = "America/Denver";
// 2025-03-20 12:00 UTC is 06:00 in Denver (UTC−6 after the March change).
const NOW = Date.parse("2025-03-20T12:00:00Z");
const parse = (q: string) => parseAnalyticsQuery(new URLSearchParams(q), ZONE, NOW);

describe("analytics period and shifts", () => {
  it("defaults to the 84 days up to today on the site's clock", () => {
    expect(defaultPeriod(ZONE, NOW)).toEqual({ from: "2024-12-27", to: "2025-03-20" });
    // 03:00 UTC on the 20th is still the 19th in Denver.
    expect(defaultPeriod(ZONE, Date.parse("2025-03-20T03:00:00Z")).to).toBe("2025-03-19");
    // Several zones: the latest of their todays (Kiritimati, UTC+14, is already on the 21st).
    expect(defaultPeriod([ZONE, "Pacific/Kiritimati"], Date.parse("2025-03-20T12:00:00Z"))).toEqual({ from: "2024-12-28", to: "2025-03-21" });
  });

  it("keeps a usable period and sets aside, by name, what cannot be used", () => {
    expect(parse("from=2025-01-01&to=2025-01-31")).toEqual({ query: { from: "2025-01-01", to: "2025-01-31", scope: "site" }, ignored: [], problem: null, defaulted: false });
    expect(parse("from=2025-01-01").query).toMatchObject({ from: "2025-01-01", to: "2025-03-20" });
    for (const bad of ["from=2025-13-45", "from=yesterday", "from=2025-02-30", "from=9999-99-99"]) expect(parse(bad), bad).toMatchObject({ query: { from: "2024-12-27", to: "2025-03-20" }, ignored: ["from"], problem: "date" });
    expect(parse("from=2025-03-10&to=2025-03-01")).toMatchObject({ ignored: ["from", "to"], problem: "order", query: { from: "2024-12-27" } });
    expect(parse("from=2023-01-01&to=2025-03-01")).toMatchObject({ ignored: ["from", "to"], problem: "length" });
    expect(parse("scope=all")).toMatchObject({ query: { scope: "all" }, defaulted: true });
    expect(parse("from=2025-13-45&to=2025-02-01").defaulted).toBe(true);
    expect(parse("scope=world")).toMatchObject({ ignored: ["scope"], problem: null, query: { scope: "site" } });
  });

  it("puts each start hour in one shift, the boundaries starting the later shift", () => {
    const expected = (h: number) => (h >= 5 && h < 13 ? "early" : h >= 13 && h < 21 ? "late" : "night");
    for (let h = 0; h < 24; h++) expect(shiftOfHour(h), String(h)).toBe(expected(h));
  });
});

describe("time to stage 1", () => {
  it("bins minutes into (from, to] spans of an eighth of the limit, the last bin taking everything past twice the limit", () => {
    const h = binMinutes([0, 15, 15.01, 119.99, 120, 120.5, 240, 241, 600, -3, Number.NaN], 120);
    expect(h.binMinutes).toBe(15);
    expect(h.bins).toHaveLength(17);
    const counts = h.bins.map((b) => b.count);
    expect(counts[0]).toBe(2); // 0 and exactly 15
    expect(counts[1]).toBe(1);
    expect(counts[7]).toBe(2); // 119.99 and exactly 120: in time
    expect(counts[8]).toBe(1);
    expect(counts[15]).toBe(1); // exactly 240
    expect(counts[16]).toBe(2);
    expect(counts.reduce((a, b) => a + b, 0)).toBe(9); // the negative and NaN are left out
  });

  it("gives the median and writes durations in hours and minutes", () => {
    expect(median([])).toBeNull();
    expect(median([3, 1, 2])).toBe(2);
    expect(median([4, 1, 2, 3])).toBe(2.5);
    expect(formatMinutes(45)).toBe("45 min");
    expect(formatMinutes(120)).toBe("2 h");
    expect(formatMinutes(82.5)).toBe("1 h 23 min");
  });
});
