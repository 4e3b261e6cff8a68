import { describe, expect, it } from "vitest";
import { runPredictRequest } from "~/lib/engine/request";

const example = {
  shape: "slab",
  depthMm: 50,
  faces: { top: { h: 10 }, bottom: { h: 10 } },
  food: { k: 0.5, rho: 1050, cp: 3600 },
  initialC: 60,
  ambientC: 3,
  timesS: [0, 600, 1200],
  targetsC: [21, 5],
};

describe("the predict request", () => {
  it("answers the documented slab example with one value per time and both targets", () => {
    const r = runPredictRequest(example);
    if (!r.ok) throw new Error(JSON.stringify(r.errors));
    expect(r.response.centerC).toHaveLength(3);
    expect(r.response.centerC[0]).toBe(60);
    expect(Object.keys(r.response.reachS).sort()).toEqual(["21", "5"]);
    // A symmetric slab: the centre is the warmest point.
    expect(r.response.reachS["21"].warmest).toBeCloseTo(r.response.reachS["21"].center!, 0);
  });

  it("null where a target is not reached within 48 h", () => {
    const r = runPredictRequest({ ...example, faces: { top: { h: 0 }, bottom: { h: 0.2 } }, targetsC: [5, 2] });
    if (!r.ok) throw new Error(JSON.stringify(r.errors));
    // Ambient 3 °C never takes the food to 2 °C.
    expect(r.response.reachS["2"]).toEqual({ center: null, warmest: null, mean: null });
  });

  it("accepts h = 0 and h = \"inf\", and a composition instead of properties", () => {
    const r = runPredictRequest({
      ...example,
      faces: { top: { h: "inf" }, bottom: { h: 0 } },
      food: { composition: { water: 78, protein: 2, fat: 4, carbohydrate: 15, fibre: 0, ash: 1 } },
    });
    if (!r.ok) throw new Error(JSON.stringify(r.errors));
    expect(r.response.properties.alpha).toBeGreaterThan(1.2e-7);
    expect(r.response.properties.alpha).toBeLessThan(1.6e-7);
  });

  it("blocks, cylinders and spheres, and a depth profile", () => {
    for (const shape of [
      { shape: "block", lengthMm: 325, widthMm: 265, depthMm: 65, faces: { top: { h: 10 }, bottom: { h: 5 }, walls: { h: 5 } } },
      { shape: "cylinder", radiusMm: 150, surface: { h: 300 } },
      { shape: "sphere", radiusMm: 40, surface: { h: 20 } },
    ]) {
      const { faces: _f, depthMm: _d, ...rest } = example;
      const r = runPredictRequest({ ...rest, ...shape, profilePoints: 5 });
      if (!r.ok) throw new Error(`${shape.shape}: ${JSON.stringify(r.errors)}`);
      expect(r.response.profile!.c).toHaveLength(3);
      expect(r.response.profile!.c[0]).toHaveLength(5);
    }
  });

  it("readings calibrate the model and deadlines give each stage a probability", () => {
    const r = runPredictRequest({ ...example, readings: [{ tS: 1800, c: 55 }, { tS: 3600, c: 47 }], deadlinesS: [7200, 21600] });
    if (!r.ok) throw new Error(JSON.stringify(r.errors));
    expect(r.response.calibration!.readingsUsed).toBe(2);
    expect(r.response.stages).toHaveLength(2);
    // The verdict follows the weakest stage: ≥ 90 % ahead, ≥ 50 % tight, else behind.
    const worst = Math.min(...r.response.stages!.map((s) => s.probability ?? 1));
    expect(r.response.verdict).toBe(worst >= 0.9 ? "ahead" : worst >= 0.5 ? "tight" : "behind");
    for (const s of r.response.stages!) expect(s.lowS! <= s.reachS! && s.reachS! <= s.highS!).toBe(true);
  });

  it("evaluates a rule set on readings in their own unit", () => {
    const t0 = Date.parse("2026-12-01T10:00:00Z");
    const r = runPredictRequest({
      ...example,
      ruleSet: {
        code: "fda-3-501.14-a",
        batchStartedAt: t0,
        now: t0 + 7 * 3600e3,
        siteUnit: "F",
        readings: [
          { takenAt: t0, value: 140, unit: "F" },
          { takenAt: t0 + 2 * 3600e3, value: 70, unit: "F" },
          { takenAt: t0 + 6 * 3600e3, value: 41, unit: "F" },
        ],
      },
    });
    if (!r.ok) throw new Error(JSON.stringify(r.errors));
    // FDA Food Code §3-501.14(A): 70 °F at exactly 2 h and 41 °F at exactly 6 h both meet their limits.
    expect(r.response.evaluation!.outcome).toBe("passed");
  });

  it("refuses requests that would answer more than 20 000 temperatures", () => {
    const r = runPredictRequest({ ...example, timesS: Array.from({ length: 5000 }, (_, i) => i * 10), profilePoints: 400 });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors.profilePoints).toMatch(/at most 20 000/);
  });

  it("bad input gets one message per field", () => {
    const r = runPredictRequest({ shape: "cube", timesS: [] });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.errors.shape).toMatch(/shape must be/);
    const r2 = runPredictRequest({ ...example, food: { k: 0.5, rho: 1050, cp: 3.6 }, ambientC: "cold" });
    expect(r2.ok).toBe(false);
    if (r2.ok) return;
    expect(Object.keys(r2.errors)).toEqual(expect.arrayContaining(["ambientC"]));
  });
});
