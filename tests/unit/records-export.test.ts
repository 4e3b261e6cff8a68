import { describe, expect, it } from "vitest";
import { csvField, csvLine, ExportRangeSchema, exportFileName, lastWeek, neutraliseFormula, rangeInstants, wallClock } from "~/lib/records-export";

describe("records export helpers", () => {
  it("last week runs Monday to Sunday in the site's zone, not in UTC", () => {
    // Monday 2025-03-10 03:00 UTC is still Sunday 9 March in Denver, so its last week is the one before.
    const mondayUtc = Date.parse("2025-03-10T03:00:00Z");
    expect(lastWeek("UTC", mondayUtc)).toEqual({ from: "2025-03-03", to: "2025-03-09" });
    expect(lastWeek("America/Denver", mondayUtc)).toEqual({ from: "2025-02-24", to: "2025-03-02" });
    expect(lastWeek("Australia/Sydney", Date.parse("2025-03-09T20:00:00Z"))).toEqual({ from: "2025-03-03", to: "2025-03-09" });
  });

  it("a range of local dates covers local midnight to local midnight, across a daylight-saving change", () => {
    // Denver moves to MDT on 2025-03-09: that day has 23 hours.
    const { fromMs, toMs } = rangeInstants({ from: "2025-03-09", to: "2025-03-09" }, "America/Denver");
    expect(new Date(fromMs).toISOString()).toBe("2025-03-09T07:00:00.000Z");
    expect(new Date(toMs).toISOString()).toBe("2025-03-10T06:00:00.000Z");
  });

  it("a spreadsheet date holds the site's wall clock", () => {
    expect(wallClock(Date.parse("2025-07-01T18:30:15.250Z"), "America/Denver").toISOString()).toBe("2025-07-01T12:30:15.250Z");
    expect(wallClock(Date.parse("2025-01-01T18:30:00Z"), "America/Denver").toISOString()).toBe("2025-01-01T11:30:00.000Z");
  });

  it("dates are checked: real days, in order, at most 366 days", () => {
    expect(ExportRangeSchema.safeParse({ from: "2024-01-01", to: "2024-12-31" }).success).toBe(true);
    expect(ExportRangeSchema.safeParse({ from: "2024-01-01", to: "2025-01-01" }).success).toBe(false);
    expect(ExportRangeSchema.safeParse({ from: "2025-02-29", to: "2025-03-01" }).success).toBe(false);
    expect(ExportRangeSchema.safeParse({ from: "2025-03-02", to: "2025-03-01" }).success).toBe(false);
  });

  it("CSV fields are quoted as RFC 4180 asks and formula-like text is neutralised, numbers untouched", () => {
    expect(csvField('say "hi", then\nleave')).toBe('"say ""hi"", then\nleave"');
    expect(csvField("=1+2")).toBe("'=1+2");
    expect(csvField('=HYPERLINK("x")')).toBe(`"'=HYPERLINK(""x"")"`);
    for (const s of ["+1", "-2", "@SUM(A1)", "\tx", "\rx"]) expect(neutraliseFormula(s)).toBe(`'${s}`);
    expect(csvField(-18.5)).toBe("-18.5");
    expect(csvField(true)).toBe("true");
    expect(csvField(null)).toBe("");
    expect(csvLine(["a", 1, "b,c"])).toBe('a,1,"b,c"\r\n');
  });

  it("file names keep letters and digits of the site's name", () => {
    expect(exportFileName("Cocina Peñalara / Nº 2", { from: "2025-03-03", to: "2025-03-09" }, "xlsx")).toBe("cocina-penalara-no-2-cooling-records-2025-03-03-to-2025-03-09.xlsx");
  });
});
