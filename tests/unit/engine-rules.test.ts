import { fc, test } from "@fast-check/vitest";
import { describe, expect, it } from "vitest";
import { evaluateRuleSet, type RuleInput, type RuleReading } from "~/lib/engine/rules";
import { buildCustomRuleSet, getRuleSet, type RuleSet } from "~/lib/rule-sets";
import type { TemperatureUnit } from "~/lib/temperature";

const T0 = Date.UTC(2026, 2, 2, 11, 0);
const MIN = 60_000;
const at = (minutes: number, seconds = 0) => T0 + minutes * MIN + seconds * 1000;

let seq = 0;
const r = (minutes: number, value: number, unit: TemperatureUnit = "F", kind?: RuleReading["kind"], seconds = 0): RuleReading => ({
  id: `r${++seq}-${minutes}`,
  takenAt: at(minutes, seconds),
  value,
  unit,
  ...(kind ? { kind } : {}),
});

const fdaA = getRuleSet("fda-3-501.14-a")!;
const fdaAdditional = getRuleSet("fda-3-501.14-a-additional")!;
const fdaB = getRuleSet("fda-3-501.14-b")!;
const fsis1 = getRuleSet("fsis-appendix-b-1")!;
const fsis2 = getRuleSet("fsis-appendix-b-2")!;
const fsanz = getRuleSet("fsanz-3.2.2-7")!;

const evaluate = (ruleSet: RuleSet, readings: RuleReading[], now: number, more: Partial<RuleInput> = {}) =>
  evaluateRuleSet(ruleSet, { readings, batchStartedAt: T0, siteUnit: "F", now, ...more });

describe("clock start", () => {
  it("starts at the last reading at or above the upper limit before the first below, not the interpolated crossing", () => {
    // FDA Food Code 2022 §3-501.14(A): the clock runs from 57 °C (135 °F)
    const last = r(20, 136);
    const e = evaluate(fdaA, [r(0, 150), last, r(40, 120)], at(45));
    expect(e.clockStart).toEqual({ at: at(20), basis: "measured", readingId: last.id });
    expect(e.stages.map((s) => s.deadline)).toEqual([at(140), at(380)]);
  });

  it("a reading exactly at the upper limit counts as still at it", () => {
    // FDA Food Code 2022 §3-501.14(A): 135 °F
    const exactly = r(20, 135);
    expect(evaluate(fdaA, [r(0, 150), exactly, r(40, 134.9)], at(45)).clockStart?.readingId).toBe(exactly.id);
  });

  it("with no readings yet the clock has not started and no deadline is known", () => {
    const e = evaluate(fdaA, [], at(600));
    expect(e.outcome).toBe("in-progress");
    expect(e.clockStart).toBeNull();
    expect(e.stages.map((s) => [s.status, s.deadline])).toEqual([
      ["not-started", null],
      ["not-started", null],
    ]);
  });

  it("while every reading is still at or above the upper limit the clock has not started", () => {
    const e = evaluate(fdaA, [r(0, 190), r(30, 160)], at(40));
    expect(e.clockStart).toBeNull();
    expect(e.outcome).toBe("in-progress");
  });

  it("a first reading already below the upper limit falls back to the batch start and is flagged", () => {
    const first = r(30, 120);
    const e = evaluate(fdaA, [first], at(35));
    expect(e.clockStart).toEqual({ at: T0, basis: "assumed", readingId: null });
    expect(e.flags).toContainEqual({ kind: "startNotCaptured", attempt: 1, firstReadingId: first.id, basis: "assumed" });
    expect(e.stages[0].deadline).toBe(at(120));
  });

  it("a late first reading uses the predictor's estimate when one is given", () => {
    const first = r(30, 120);
    const e = evaluate(fdaA, [first], at(35), { clockStartEstimate: at(12) });
    expect(e.clockStart).toEqual({ at: at(12), basis: "estimated", readingId: null });
    expect(e.flags).toContainEqual({ kind: "startNotCaptured", attempt: 1, firstReadingId: first.id, basis: "estimated" });
    expect(e.stages[0].deadline).toBe(at(132));
  });

  it("an estimate after the first reading is ignored", () => {
    const e = evaluate(fdaA, [r(30, 120)], at(35), { clockStartEstimate: at(31) });
    expect(e.clockStart).toEqual({ at: T0, basis: "assumed", readingId: null });
    expect(e.flags).toContainEqual({ kind: "estimateIgnored", reason: "afterFirstReading" });
  });

  it("an estimate does not replace a captured start", () => {
    const e = evaluate(fdaA, [r(0, 150), r(20, 120)], at(25), { clockStartEstimate: at(10) });
    expect(e.clockStart).toMatchObject({ at: at(0), basis: "measured" });
    expect(e.flags).toEqual([]);
  });

  it("a first reading earlier than the batch start starts the assumed clock at that reading", () => {
    expect(evaluate(fdaA, [r(-5, 120)], at(0)).clockStart).toEqual({ at: at(-5), basis: "assumed", readingId: null });
  });

  it("readings in any order give the same result", () => {
    const readings = [r(0, 150), r(20, 136), r(40, 120), r(100, 69), r(300, 40)];
    const shuffled = [readings[3], readings[0], readings[4], readings[2], readings[1]];
    expect(evaluate(fdaA, shuffled, at(400))).toEqual(evaluate(fdaA, readings, at(400)));
  });
});

describe("stage limits and deadlines", () => {
  it("passes a batch that meets both FDA stages", () => {
    // FDA Food Code 2022 §3-501.14(A): 135 °F → 70 °F within 2 h, → 41 °F within 6 h in total
    const s1 = r(100, 68);
    const s2 = r(300, 40);
    const e = evaluate(fdaA, [r(0, 150), r(10, 134), s1, s2], at(400));
    expect(e.outcome).toBe("passed");
    expect(e.nextStep).toBeNull();
    expect(e.stages).toMatchObject([
      { stage: 1, status: "met", metBy: s1.id, deadline: at(120), limit: { value: 70, unit: "F" } },
      { stage: 2, status: "met", metBy: s2.id, deadline: at(360), limit: { value: 41, unit: "F" } },
    ]);
  });

  it("a reading exactly at the limit and exactly at the deadline meets the stage", () => {
    // FDA Food Code 2022 §3-501.14(A): "to 21 °C (70 °F) … within 2 hours"
    const e = evaluate(fdaA, [r(0, 150), r(10, 130), r(120, 70)], at(130));
    expect(e.stages[0].status).toBe("met");
    expect(e.outcome).toBe("in-progress");
  });

  it("the same reading one second after the deadline misses it", () => {
    // FDA Food Code 2022 §3-501.14(A)
    const late = r(120, 70, "F", undefined, 1);
    const e = evaluate(fdaA, [r(0, 150), r(10, 130), late], at(130));
    expect(e.stages[0]).toMatchObject({ status: "missed", metBy: null, reachedLateBy: late.id });
    expect(e.outcome).toBe("failed");
    expect(e.nextStep).toBe("reheat");
  });

  it("a stage with no meeting reading is in progress at its deadline and missed just after", () => {
    const readings = [r(0, 150), r(10, 130), r(90, 80)];
    expect(evaluate(fdaA, readings, at(120)).stages[0].status).toBe("in-progress");
    const e = evaluate(fdaA, readings, at(120) + 1);
    expect(e.stages[0].status).toBe("missed");
    expect(e.attempts[0].missedAt).toBe(at(120));
  });

  it("a °F reading meets a °F limit in °F: 70 °F meets 70 °F, and so does 69.9 °F", () => {
    // FDA Food Code 2022 §3-501.14(A) prints 21 °C (70 °F); 70 °F is 21.1 °C and must not fail against 21 °C
    expect(evaluate(fdaA, [r(0, 150), r(10, 130), r(100, 70)], at(110)).stages[0].status).toBe("met");
    expect(evaluate(fdaA, [r(0, 150), r(10, 130), r(100, 69.9)], at(110)).stages[0].status).toBe("met");
  });

  it("a °C reading meets a °C limit in °C: 21 °C meets 21 °C, 21.1 °C does not", () => {
    // FDA Food Code 2022 §3-501.14(A): 21 °C; 21.1 °C is below 70 °F but above the °C figure
    const c = (value: number) => evaluate(fdaA, [r(0, 65, "C"), r(10, 55, "C"), r(100, value, "C")], at(130), { siteUnit: "C" });
    expect(c(21).stages[0]).toMatchObject({ status: "met", limit: { value: 21, unit: "C" } });
    expect(c(21.1).stages[0].status).toBe("missed");
  });

  it("a °C probe at a °F site is still judged in °C", () => {
    expect(evaluate(fdaA, [r(0, 65, "C"), r(10, 55, "C"), r(100, 21, "C")], at(110)).stages[0]).toMatchObject({ status: "met", limit: { value: 70, unit: "F" } });
  });

  it("stage 2 'within a total of 6 h' and 'within an additional 4 h' give different deadlines for the same readings", () => {
    // FDA Food Code 2022 §3-501.14(A) vs. the "additional 4 h" wording of local cooling logs
    const readings = [r(0, 150), r(10, 130), r(60, 69), r(330, 41)];
    const total = evaluate(fdaA, readings, at(400));
    const additional = evaluate(fdaAdditional, readings, at(400));
    expect(total.stages[1]).toMatchObject({ clockStartedAt: at(0), deadline: at(360), status: "met" });
    expect(additional.stages[1]).toMatchObject({ clockStartedAt: at(60), deadline: at(300), status: "missed" });
    expect([total.outcome, additional.outcome]).toEqual(["passed", "failed"]);
  });

  it("a stage timed from the previous one has no deadline until that one is met", () => {
    const e = evaluate(fdaAdditional, [r(0, 150), r(10, 130)], at(30));
    expect(e.stages[1]).toMatchObject({ status: "not-started", clockStartedAt: null, deadline: null });
  });

  it("FDA §3-501.14(B): ambient-ingredient food has 4 h from the batch start to reach 41 °F", () => {
    // FDA Food Code 2022 §3-501.14(B)
    const passed = evaluate(fdaB, [r(5, 72), r(230, 41)], at(240));
    expect(passed.clockStart).toEqual({ at: T0, basis: "assumed", readingId: null });
    expect(passed.flags).toEqual([]);
    expect(passed.outcome).toBe("passed");
    expect(evaluate(fdaB, [r(5, 72), r(241, 41)], at(245)).outcome).toBe("failed");
    expect(evaluate(fdaB, [], at(100)).stages[0]).toMatchObject({ status: "in-progress", deadline: at(240) });
  });

  it("USDA FSIS option 1: 130 °F → 80 °F in 1.5 h, then 40 °F within 5 h of reaching 80 °F", () => {
    // USDA FSIS Appendix B, option 1
    const e = evaluate(fsis1, [r(0, 131), r(10, 125), r(90, 80), r(390, 40)], at(400));
    expect(e.stages.map((s) => [s.status, s.deadline])).toEqual([
      ["met", at(90)],
      ["met", at(390)],
    ]);
    const c = evaluate(fsis1, [r(0, 55, "C"), r(10, 50, "C"), r(90, 26.7, "C"), r(391, 4.4, "C")], at(400), { siteUnit: "C" });
    expect(c.stages.map((s) => [s.status, s.limit.value])).toEqual([
      ["met", 26.7],
      ["missed", 4.4],
    ]);
  });

  it("USDA FSIS option 2: one 6 h stage from 120 °F to 55 °F, then a reminder to carry on to 40 °F", () => {
    // USDA FSIS Appendix B, option 2
    const e = evaluate(fsis2, [r(0, 125), r(20, 110), r(50, 80), r(300, 55)], at(310));
    expect(e.stages).toHaveLength(1);
    expect(e.stages[0]).toMatchObject({ status: "met", deadline: at(360) });
    expect(e.outcome).toBe("passed");
    expect(e.flags).toEqual([{ kind: "keepCooling", attempt: 1, limit: { value: 40, unit: "F" } }]);
    expect(evaluate(fsis2, [r(0, 125), r(20, 110), r(50, 80), r(300, 55), r(400, 40)], at(410)).flags).toEqual([]);
  });

  it("USDA FSIS option 2 flags food above 80 °F for more than 1 h, without failing it", () => {
    // USDA FSIS Appendix B, option 2: above 80 °F (26.7 °C) for more than 1 h
    const slow = evaluate(fsis2, [r(0, 125), r(20, 110), r(75, 79), r(300, 55), r(400, 40)], at(410));
    expect(slow.outcome).toBe("passed");
    expect(slow.flags).toEqual([expect.objectContaining({ kind: "advisory", code: "fsis-b2-above-80f-over-1h" })]);
    const exactlyOneHour = evaluate(fsis2, [r(0, 125), r(20, 110), r(60, 80), r(300, 55), r(400, 40)], at(410));
    expect(exactlyOneHour.flags).toEqual([]);
    const stillAbove = evaluate(fsis2, [r(0, 125), r(20, 110), r(50, 85)], at(61));
    expect(stillAbove.flags.map((f) => f.kind)).toEqual(["advisory"]);
  });

  it("FSANZ: 60 °C → 21 °C in 2 h, then 5 °C within a further 4 h", () => {
    // FSANZ Standard 3.2.2 clause 7(3)
    const e = evaluate(fsanz, [r(0, 62, "C"), r(10, 59, "C"), r(120, 21, "C"), r(360, 5, "C")], at(370), { siteUnit: "C" });
    expect(e.stages.map((s) => [s.status, s.deadline, s.limit.value])).toEqual([
      ["met", at(120), 21],
      ["met", at(360), 5],
    ]);
    expect(e.outcome).toBe("passed");
  });

  it("FSANZ at a °F site uses the derived °F figures: 69.8 °F meets 21 °C, 69.9 °F does not", () => {
    // FSANZ Standard 3.2.2 clause 7(3): 21 °C = 69.8 °F
    const f = (value: number) => evaluate(fsanz, [r(0, 145), r(10, 138), r(110, value)], at(125)).stages[0].status;
    expect(f(69.8)).toBe("met");
    expect(f(69.9)).toBe("missed");
  });

  it("a site's own schedule is judged like a published one", () => {
    const site = buildCustomRuleSet({
      code: "site-blast-chill",
      version: 1,
      name: "Blast chiller",
      citation: "Site HACCP plan 2026, section 4.2",
      source: "63 °C to 10 °C within 90 min",
      upper: { c: 63 },
      stages: [{ to: { c: 10 }, withinMinutes: 90, clockFrom: "start" }],
    });
    expect(evaluate(site, [r(0, 150), r(10, 140), r(90, 50)], at(95)).outcome).toBe("passed"); // 10 °C = 50 °F
    expect(evaluate(site, [r(0, 66, "C"), r(10, 60, "C"), r(91, 10, "C")], at(95)).outcome).toBe("failed");
  });
});

describe("reheat and restart", () => {
  // FDA Food Code 2022 §3-403.11: reheat to 74 °C (165 °F); one restart after a missed stage
  const missedFirst = [r(0, 150), r(10, 130), r(90, 90), r(125, 80)];

  it("a reheat to 165 °F after a missed stage restarts the clocks once, and the second attempt can pass", () => {
    const hot = r(150, 166, "F", "reheat");
    const restartAt = r(160, 150);
    const e = evaluate(fdaA, [...missedFirst, hot, restartAt, r(170, 130), r(260, 65), r(500, 40)], at(510));
    expect(e.attempts).toHaveLength(2);
    expect(e.attempts[0]).toMatchObject({ outcome: "failed", missedAt: at(120) });
    expect(e.attempts[0].stages.map((s) => s.status)).toEqual(["missed", "stopped"]);
    expect(e.attempts[1]).toMatchObject({ number: 2, reheatReadingId: hot.id, outcome: "passed" });
    expect(e.clockStart).toEqual({ at: at(160), basis: "measured", readingId: restartAt.id });
    expect(e.stages.map((s) => s.deadline)).toEqual([at(280), at(520)]);
    expect(e.outcome).toBe("passed");
    expect(e.flags).toEqual([]);
  });

  it("the reheat reading itself starts the clock when the next reading is already below 135 °F", () => {
    const hot = r(150, 74, "C", "reheat");
    const e = evaluate(fdaA, [...missedFirst, hot, r(180, 120)], at(190));
    expect(e.clockStart).toEqual({ at: at(150), basis: "measured", readingId: hot.id });
    expect(e.outcome).toBe("in-progress");
  });

  it("a second miss leaves only discard, and a further reheat is not counted", () => {
    const again = r(400, 170, "F", "reheat");
    const e = evaluate(fdaA, [...missedFirst, r(150, 165, "F", "reheat"), r(160, 150), r(170, 130), r(290, 90), again], at(410));
    expect(e.attempts.map((a) => a.outcome)).toEqual(["failed", "failed"]);
    expect(e.outcome).toBe("failed");
    expect(e.nextStep).toBe("discard");
    expect(e.flags).toContainEqual({ kind: "reheatNotCounted", readingId: again.id, reason: "alreadyRestarted" });
  });

  it("a reheat below 74 °C does not count and is flagged", () => {
    const cool = r(150, 73.9, "C", "reheat");
    const e = evaluate(fdaA, [...missedFirst, cool, r(160, 60, "C")], at(170), { siteUnit: "C" });
    expect(e.attempts).toHaveLength(1);
    expect(e.nextStep).toBe("reheat");
    expect(e.flags).toContainEqual({ kind: "reheatTooCool", readingId: cool.id, limit: { value: 74, unit: "C" } });
  });

  it("a reheat before any stage was missed does not restart the clocks", () => {
    const early = r(60, 170, "F", "reheat");
    const e = evaluate(fdaA, [r(0, 150), r(10, 130), early, r(100, 69)], at(110));
    expect(e.attempts).toHaveLength(1);
    expect(e.stages[0].status).toBe("met");
    expect(e.flags).toContainEqual({ kind: "reheatNotCounted", readingId: early.id, reason: "noMissedStage" });
  });
});

describe("properties", () => {
  const cooling = fc
    .array(fc.record({ gap: fc.integer({ min: 1, max: 60 }), drop: fc.double({ min: 0, max: 25, noNaN: true }) }), { minLength: 1, maxLength: 15 })
    .map((steps) => {
      let t = 0;
      let v = 160;
      return steps.map(({ gap, drop }, i) => ({ id: `p${i}`, takenAt: at((t += gap)), value: (v -= drop), unit: "F" as const }));
    });

  test.prop([cooling, fc.integer({ min: 0, max: 900 })], { numRuns: 150 })("the result ignores reading order and the clock never starts after the first reading below 135 °F", (readings, nowMin) => {
    const now = at(nowMin);
    const e = evaluate(fdaA, readings, now);
    expect(evaluate(fdaA, [...readings].reverse(), now)).toEqual(e);
    const firstBelow = readings.find((x) => x.value < 135);
    if (firstBelow) expect(e.clockStart!.at).toBeLessThanOrEqual(firstBelow.takenAt);
    for (const s of e.stages) if (s.status === "met") expect(readings.find((x) => x.id === s.metBy)!.takenAt).toBeLessThanOrEqual(s.deadline!);
  });
});
