import { describe, expect, it } from "vitest";
import { getRuleSet, ruleSets } from "~/lib/rule-sets";
import { fromCelsius, toCelsius } from "~/lib/temperature";

describe("cooling rule sets", () => {
  it("FDA Food Code §3-501.14(A): 57 °C to 21 °C within 2 h, to 5 °C within 6 h in total", () => {
    const r = getRuleSet("fda-3-501.14-a")!;
    expect(r.stages).toEqual([
      { fromC: 57, toC: 21, withinMinutes: 120, clockFrom: "start" },
      { fromC: 57, toC: 5, withinMinutes: 360, clockFrom: "start" },
    ]);
  });

  it("the 'additional 4 h' reading starts the second clock when the first stage ends", () => {
    const r = getRuleSet("fda-3-501.14-a-additional")!;
    expect(r.stages[1]).toEqual({ fromC: 21, toC: 5, withinMinutes: 240, clockFrom: "previous-stage" });
  });

  it("USDA FSIS Appendix B option 1: 130 °F to 80 °F in 1.5 h, then to 40 °F in 5 h more", () => {
    const r = getRuleSet("fsis-appendix-b-1")!;
    expect(fromCelsius(r.stages[0].fromC, "F")).toBeCloseTo(130, 0);
    expect(fromCelsius(r.stages[0].toC, "F")).toBeCloseTo(80, 0);
    expect(fromCelsius(r.stages[1].toC, "F")).toBeCloseTo(40, 0);
    expect(r.stages.map((s) => s.withinMinutes)).toEqual([90, 300]);
  });

  it("FSANZ Standard 3.2.2 cl. 7(3): 60 °C to 21 °C in 2 h, then to 5 °C in a further 4 h", () => {
    const r = getRuleSet("fsanz-3.2.2-7")!;
    expect(r.stages.map((s) => [s.fromC, s.toC, s.withinMinutes])).toEqual([
      [60, 21, 120],
      [21, 5, 240],
    ]);
  });

  it("every rule set cites its source and has distinct code", () => {
    expect(new Set(ruleSets.map((r) => r.code)).size).toBe(ruleSets.length);
    for (const r of ruleSets) expect(r.source.length).toBeGreaterThan(20);
  });

  it("the Food Code's own °F figures round-trip: 135 °F ≈ 57 °C, 70 °F ≈ 21 °C, 41 °F = 5 °C", () => {
    // FDA Food Code 2022 §3-501.14 states both units side by side.
    expect(toCelsius(135, "F")).toBeCloseTo(57.2, 1);
    expect(toCelsius(70, "F")).toBeCloseTo(21.1, 1);
    expect(toCelsius(41, "F")).toBeCloseTo(5, 5);
    expect(fromCelsius(5, "F")).toBeCloseTo(41, 5);
  });
});
