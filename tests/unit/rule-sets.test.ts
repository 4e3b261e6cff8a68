import { describe, expect, it } from "vitest";
import reference from "../../reference/rule-sets.json";
import { buildCustomRuleSet, CustomRuleSetSchema, deriveLimit, getRuleSet, reheat, ruleSetCodes, ruleSets, type CustomRuleSetInput } from "~/lib/rule-sets";
import { fromCelsius, toCelsius } from "~/lib/temperature";

const limits = (code: string) => getRuleSet(code)!.stages.map((s) => [s.from.c, s.from.f, s.to.c, s.to.f, s.withinMinutes, s.clockFrom]);

describe("cooling rule sets", () => {
  it("the data equals reference/rule-sets.json, citations included", () => {
    const withoutCelsiusShortcuts = ruleSets.map(({ stages, ...r }) => ({ ...r, stages: stages.map(({ fromC, toC, ...s }) => s) }));
    expect(withoutCelsiusShortcuts).toEqual(reference.ruleSets);
    expect(reheat).toEqual(reference.reheat);
  });

  it("keeps the codes sites already reference", () => {
    expect(ruleSetCodes).toEqual(["fda-3-501.14-a", "fda-3-501.14-a-additional", "fda-3-501.14-b", "fsis-appendix-b-1", "fsis-appendix-b-2", "fsanz-3.2.2-7"]);
  });

  it("FDA Food Code §3-501.14(A): 57 °C (135 °F) to 21 °C (70 °F) within 2 h, to 5 °C (41 °F) within 6 h in total", () => {
    // FDA Food Code 2022 §3-501.14(A)
    expect(limits("fda-3-501.14-a")).toEqual([
      [57, 135, 21, 70, 120, "start"],
      [57, 135, 5, 41, 360, "start"],
    ]);
    expect(getRuleSet("fda-3-501.14-a")!.stages[0].to.published).toEqual(["C", "F"]);
  });

  it("the 'additional 4 h' reading starts the second clock when the first stage is met", () => {
    // FDA Food Code 2022 §3-501.14(A), as worded on local cooling logs: 70 °F to 41 °F within an additional 4 h
    expect(limits("fda-3-501.14-a-additional")).toEqual([
      [57, 135, 21, 70, 120, "start"],
      [21, 70, 5, 41, 240, "previous-stage"],
    ]);
  });

  it("FDA Food Code §3-501.14(B): to 5 °C (41 °F) within 4 h, clock from the batch start", () => {
    // FDA Food Code 2022 §3-501.14(B)
    const r = getRuleSet("fda-3-501.14-b")!;
    expect(r.stages.map((s) => [s.to.c, s.to.f, s.withinMinutes])).toEqual([[5, 41, 240]]);
    expect(r.clockStartsAt).toBe("batch-start");
    expect(r.stages[0].from.published).toEqual([]);
  });

  it("USDA FSIS Appendix B option 1: 130 °F (54.4 °C) to 80 °F (26.7 °C) in 1.5 h, then to 40 °F (4.4 °C) in 5 h more", () => {
    // USDA FSIS Appendix B, option 1
    expect(limits("fsis-appendix-b-1")).toEqual([
      [54.4, 130, 26.7, 80, 90, "start"],
      [26.7, 80, 4.4, 40, 300, "previous-stage"],
    ]);
    expect(getRuleSet("fsis-appendix-b-1")!.stages[0].from.published).toEqual(["F", "C"]);
  });

  it("USDA FSIS Appendix B option 2: one stage 120 °F (48 °C) to 55 °F (12.7 °C) in 6 h, then on to 40 °F, with the 80 °F caution", () => {
    // USDA FSIS Appendix B, option 2
    const r = getRuleSet("fsis-appendix-b-2")!;
    expect(limits("fsis-appendix-b-2")).toEqual([[48, 120, 12.7, 55, 360, "start"]]);
    expect(r.continueTo).toMatchObject({ c: 4.4, f: 40 });
    expect(r.advisories).toEqual([expect.objectContaining({ above: expect.objectContaining({ c: 26.7, f: 80 }), forMinutes: 60 })]);
  });

  it("FSANZ Standard 3.2.2 cl. 7(3): 60 °C to 21 °C in 2 h, then to 5 °C in a further 4 h; °F derived", () => {
    // FSANZ Standard 3.2.2 clause 7(3) prints °C only
    expect(limits("fsanz-3.2.2-7")).toEqual([
      [60, 140, 21, 69.8, 120, "start"],
      [21, 69.8, 5, 41, 240, "previous-stage"],
    ]);
    for (const s of getRuleSet("fsanz-3.2.2-7")!.stages) expect(s.to.published).toEqual(["C"]);
  });

  it("reheating is to 74 °C (165 °F)", () => {
    // FDA Food Code 2022 §3-403.11
    expect(reheat.limit).toEqual({ c: 74, f: 165, published: ["C", "F"] });
  });

  it("every rule set cites its source, has a distinct code, a version, and stages falling in both units", () => {
    expect(new Set(ruleSets.map((r) => r.code)).size).toBe(ruleSets.length);
    for (const r of ruleSets) {
      expect(r.citation.length).toBeGreaterThan(10);
      expect(r.source.length).toBeGreaterThan(r.citation.length);
      expect(r.version).toBeGreaterThanOrEqual(1);
      expect(r.stages[0].clockFrom).toBe("start");
      const targets = [r.stages[0].from, ...r.stages.map((s) => s.to)];
      for (let i = 1; i < targets.length; i++) {
        expect(targets[i].c).toBeLessThan(targets[i - 1].c);
        expect(targets[i].f).toBeLessThan(targets[i - 1].f);
      }
      for (const s of r.stages) expect([s.fromC, s.toC]).toEqual([s.from.c, s.to.c]);
    }
  });

  it("each limit's two figures agree within 1 °C, and a derived figure is the strict-side rounding of the other", () => {
    for (const r of ruleSets)
      for (const l of r.stages.flatMap((s) => [s.from, s.to])) {
        expect(Math.abs(toCelsius(l.f, "F") - l.c)).toBeLessThanOrEqual(1);
        if (l.published.length === 1 && l.published[0] === "C") expect(Math.abs(fromCelsius(l.c, "F") - l.f)).toBeLessThan(0.1);
      }
  });

  it("derives the unpublished unit to 0.1°, down for a target and up for the clock-start limit", () => {
    expect(deriveLimit(21, "C", "down")).toEqual({ c: 21, f: 69.8, published: ["C"] }); // exactly 69.8 °F
    expect(deriveLimit(21, "C", "up")).toEqual({ c: 21, f: 69.8, published: ["C"] });
    expect(deriveLimit(4.4, "C", "down").f).toBe(39.9); // 39.92 °F
    expect(deriveLimit(4.4, "C", "up").f).toBe(40);
    expect(deriveLimit(135, "F", "down").c).toBe(57.2); // 57.22 °C
    expect(deriveLimit(135, "F", "up").c).toBe(57.3);
  });

  it("the Food Code's own °F figures round-trip: 135 °F ≈ 57 °C, 70 °F ≈ 21 °C, 41 °F = 5 °C", () => {
    // FDA Food Code 2022 §3-501.14 states both units side by side.
    expect(toCelsius(135, "F")).toBeCloseTo(57.2, 1);
    expect(toCelsius(70, "F")).toBeCloseTo(21.1, 1);
    expect(toCelsius(41, "F")).toBeCloseTo(5, 5);
    expect(fromCelsius(5, "F")).toBeCloseTo(41, 5);
  });
});

describe("a site's own cooling schedule", () => {
  const valid: CustomRuleSetInput = {
    code: "site-blast-chill",
    version: 1,
    name: "Blast chiller schedule",
    citation: "Site HACCP plan 2026, section 4.2",
    source: "Validated blast-chill schedule: 63 °C to 10 °C within 90 min, then to 3 °C within 2 h more",
    upper: { c: 63 },
    stages: [
      { to: { c: 10 }, withinMinutes: 90, clockFrom: "start" },
      { to: { c: 3, f: 37.4 }, withinMinutes: 120, clockFrom: "previous-stage" },
    ],
  };

  const issues = (input: unknown) => {
    const r = CustomRuleSetSchema.safeParse(input);
    return r.success ? [] : r.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`);
  };

  it("builds a rule set, deriving the unit the schedule does not give", () => {
    const r = buildCustomRuleSet(valid);
    expect(r).toMatchObject({ code: "site-blast-chill", origin: "site", clockStartsAt: "upper-limit", advisories: [], continueTo: null });
    expect(r.stages[0].from).toEqual({ c: 63, f: 145.4, published: ["C"] });
    expect(r.stages[0].to).toEqual({ c: 10, f: 50, published: ["C"] });
    expect(r.stages[1]).toMatchObject({ from: r.stages[0].to, to: { c: 3, f: 37.4, published: ["C", "F"] }, withinMinutes: 120, fromC: 10, toC: 3 });
  });

  it("takes a schedule written in °F", () => {
    const r = buildCustomRuleSet({ ...valid, upper: { f: 140 }, stages: [{ to: { f: 41 }, withinMinutes: 240, clockFrom: "start" }] });
    expect(r.stages[0].from).toEqual({ c: 60, f: 140, published: ["F"] });
    expect(r.stages[0].to).toEqual({ c: 5, f: 41, published: ["F"] });
  });

  it.each([
    ["stages that do not fall", { stages: [{ to: { c: 10 }, withinMinutes: 90, clockFrom: "start" }, { to: { c: 10 }, withinMinutes: 60, clockFrom: "previous-stage" }] }, "stages.1.to: rules.stagesDescending"],
    ["a target above the upper limit", { stages: [{ to: { c: 70 }, withinMinutes: 90, clockFrom: "start" }] }, "stages.0.to: rules.stagesDescending"],
    ["zero minutes", { stages: [{ to: { c: 10 }, withinMinutes: 0, clockFrom: "start" }] }, "stages.0.withinMinutes"],
    ["negative minutes", { stages: [{ to: { c: 10 }, withinMinutes: -5, clockFrom: "start" }] }, "stages.0.withinMinutes"],
    ["a first stage timed from a previous one", { stages: [{ to: { c: 10 }, withinMinutes: 90, clockFrom: "previous-stage" }] }, "stages.0.clockFrom: rules.firstStageFromStart"],
    ["a limit with no unit", { upper: {} }, "upper: rules.limitNeedsUnit"],
    ["figures in two units that disagree", { upper: { c: 63, f: 165 } }, "upper: rules.limitUnitsDisagree"],
    ["a total time that does not grow", { stages: [{ to: { c: 21 }, withinMinutes: 120, clockFrom: "start" }, { to: { c: 5 }, withinMinutes: 120, clockFrom: "start" }] }, "stages.1.withinMinutes: rules.totalTimeGrows"],
    ["a published rule's code", { code: "fda-3-501.14-a" }, "code: rules.codeTaken"],
    ["no stages", { stages: [] }, "stages"],
  ])("refuses %s", (_, change, expected) => {
    expect(issues({ ...valid, ...change }).some((i) => i.startsWith(expected))).toBe(true);
  });

  it("refuses to build from an invalid schedule", () => {
    expect(() => buildCustomRuleSet({ ...valid, stages: [] })).toThrow();
  });
});
