import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { buildBatchModel, standardAlternatives, type BatchSetup } from "~/lib/engine/batch-model";
import { calibrate, solveScaled } from "~/lib/engine/calibrate";
import { estimateCrossing, normalCdf, predictBatch } from "~/lib/engine/predict";

// A 50 mm layer of a water-rich cooked food in a GN 1/1 pan: k and α near the measured values of
// cooked foods (ASHRAE Handbook—Refrigeration, "Thermal Properties of Foods": 1.2–1.5e-7 m²/s).
const food = { k: 0.52, alpha: 1.35e-7, rhoCp: 0.52 / 1.35e-7 };
const setup = (over: Partial<BatchSetup> = {}): BatchSetup => ({
  food,
  pan: { size: "gn-1/1", depthMm: 65 },
  fillDepthMm: 50,
  panMaterial: "stainless-steel",
  lid: false,
  method: "walk-in",
  startC: 65,
  ...over,
});
const h = 3600;

// A deterministic pseudo-random ±0.5 K noise (a linear congruential generator), so failures replay.
const noise = (seed: number) => {
  let x = seed;
  return () => {
    x = (x * 1103515245 + 12345) % 2 ** 31;
    return (x / 2 ** 31 - 0.5) * 1.0;
  };
};

describe("normal distribution", () => {
  it("matches the standard normal table (Abramowitz & Stegun, Table 26.1)", () => {
    expect(normalCdf(0)).toBeCloseTo(0.5, 7);
    expect(normalCdf(1.96)).toBeCloseTo(0.975, 4);
    expect(normalCdf(-1.6448536)).toBeCloseTo(0.05, 5);
    expect(normalCdf(3)).toBeCloseTo(0.99865, 5);
  });
});

describe("calibration on the batch's own readings", () => {
  it("with no reading the prior stands: factor 1 and the method's spread", () => {
    const { model, prior } = buildBatchModel(setup());
    const cal = calibrate(model, [], prior);
    expect(cal.s).toBe(1);
    expect(cal.cov[0][0]).toBeCloseTo(prior.lnS.sd ** 2, 12);
    expect(cal.readingsUsed).toBe(0);
  });

  it("recovers a known surface factor from noisy readings (±0.5 K) inside its reported 95 % band", () => {
    const { model, prior } = buildBatchModel(setup());
    fc.assert(
      fc.property(fc.double({ min: 0.6, max: 2.5, noNaN: true }), fc.integer({ min: 1, max: 1e6 }), (trueS, seed) => {
        const truth = solveScaled(model, trueS, 1);
        const rnd = noise(seed);
        const readings = [0.5, 1, 1.5, 2, 2.5, 3].map((t) => ({ tS: t * h, c: truth.centerC(t * h) + rnd() }));
        const cal = calibrate(model, readings, prior);
        const sd = Math.sqrt(cal.cov[0][0]);
        expect(Math.abs(Math.log(cal.s) - Math.log(trueS))).toBeLessThan(1.96 * sd + 1e-9);
        expect(sd).toBeLessThan(0.2);
      }),
      { numRuns: 12, seed: 4242 },
    );
  });

  it("fits the diffusivity too once the core has fallen far enough", () => {
    const { model, prior } = buildBatchModel(setup({ method: "blast-chiller" }));
    const truth = solveScaled(model, 1.3, 0.85);
    const readings = [0.25, 0.5, 0.75, 1, 1.25, 1.5, 2].map((t) => ({ tS: t * h, c: truth.centerC(t * h) }));
    const cal = calibrate(model, readings, prior);
    expect(cal.fittedDiffusivity).toBe(true);
    // Surface and diffusivity trade off against each other, so the check is joint: the true pair lies
    // inside the fit's 95 % ellipse (Mahalanobis distance² < 5.99, χ² with 2 degrees of freedom),
    // and the fitted curve carries on like the true one.
    const d = [Math.log(1.3) - Math.log(cal.s), Math.log(0.85) - Math.log(cal.f)];
    const [[a, b], [, c]] = cal.cov;
    const det = a * c - b * b;
    const m2 = (c * d[0] * d[0] - 2 * b * d[0] * d[1] + a * d[1] * d[1]) / det;
    expect(m2).toBeLessThan(5.99);
    expect(Math.abs(cal.solution.centerC(4 * h) - truth.centerC(4 * h))).toBeLessThan(0.5);
    const few = calibrate(model, readings.slice(0, 2), prior);
    expect(few.fittedDiffusivity).toBe(false);
  });
});

describe("batch prediction", () => {
  const fda = (startS = 0) => [
    { targetC: 21, deadlineS: startS + 2 * h },
    { targetC: 5, deadlineS: startS + 6 * h },
  ];

  it("a shallow pan in a blast chiller makes both FDA stages comfortably", () => {
    const s = setup({ method: "blast-chiller", fillDepthMm: 40 });
    const { model, prior } = buildBatchModel(s);
    const truth = solveScaled(model, 1, 1);
    const readings = [0.5, 1].map((t) => ({ tS: t * h, c: truth.centerC(t * h) }));
    const p = predictBatch({ model, readings, nowS: h, stages: fda(), prior });
    expect(p.verdict).toBe("ahead");
    expect(p.stages[0].reachS!).toBeLessThan(2 * h);
    expect(p.stages[0].probability!).toBeGreaterThan(0.9);
    expect(p.stages[0].lowS!).toBeLessThan(p.stages[0].reachS!);
    expect(p.stages[0].highS!).toBeGreaterThan(p.stages[0].reachS!);
  });

  it("a deep lidded pan in a walk-in will miss, and an ice bath or shallower pans rank above doing nothing", () => {
    const s = setup({ pan: { size: "gn-1/1", depthMm: 100 }, fillDepthMm: 90, lid: true });
    const { model, prior } = buildBatchModel(s);
    const truth = solveScaled(model, 1, 1);
    const readings = [0.5, 1].map((t) => ({ tS: t * h, c: truth.centerC(t * h) }));
    const p = predictBatch({ model, readings, nowS: h, stages: fda(), prior, alternatives: standardAlternatives(s) });
    expect(p.verdict).toBe("behind");
    expect(p.stages[0].probability!).toBeLessThan(0.5);
    const ids = p.alternatives.map((a) => a.id);
    expect(ids).toEqual(expect.arrayContaining(["lid-off", "ice-bath-stirred", "blast-chiller", "shallower-pans"]));
    const best = p.alternatives[0];
    expect(best.finishS!).toBeLessThan(p.stages[1].reachS!);
    // The ranking puts the better chance first.
    const chance = (a: (typeof p.alternatives)[number]) => Math.min(...a.stages.map((x) => x.probability ?? 1));
    for (let i = 1; i < p.alternatives.length; i++) expect(chance(p.alternatives[i - 1])).toBeGreaterThanOrEqual(chance(p.alternatives[i]) - 1e-9);
    const stirred = p.alternatives.find((a) => a.id === "ice-bath-stirred")!;
    expect(stirred.stages[0].reachS!).toBeLessThan(p.stages[0].reachS!);
  });

  it("a stage a reading already met is certain; a passed deadline without it is lost", () => {
    const { model, prior } = buildBatchModel(setup());
    const p = predictBatch({
      model,
      readings: [{ tS: 1.5 * h, c: 20 }],
      nowS: 2.5 * h,
      stages: [
        { targetC: 21, deadlineS: 2 * h, metAtS: 1.5 * h },
        { targetC: 5, deadlineS: 2.2 * h },
      ],
      prior,
    });
    expect(p.stages[0]).toMatchObject({ probability: 1, metByReading: true, reachS: 1.5 * h });
    expect(p.stages[1].probability).toBe(0);
    expect(p.verdict).toBe("behind");
  });

  it("what the readings show is taken into account: 1.5 K above the limit a minute before the deadline is unlikely to make it", () => {
    const { model, prior } = buildBatchModel(setup());
    const truth = solveScaled(model, 1, 1);
    const tAt = truth.reachTime(22.5, "center", 48 * h)!;
    const readings = [0.25, 0.5, 0.75].map((f) => ({ tS: f * tAt, c: truth.centerC(f * tAt) })).concat([{ tS: tAt, c: 22.5 }]);
    const p = predictBatch({ model, readings, nowS: tAt, stages: [{ targetC: 21, deadlineS: tAt + 60 }], prior });
    const [stage] = p.stages;
    // The core falls well under 1.5 K a minute here, so the chance is small, and no band starts in the past.
    expect(stage.probability!).toBeLessThan(0.2);
    expect(stage.lowS!).toBeGreaterThanOrEqual(tAt);
    expect(stage.reachS!).toBeGreaterThan(tAt);
  });

  it("temperatures it reports stay between the surroundings and the start", () => {
    const { model, prior } = buildBatchModel(setup());
    const p = predictBatch({ model, readings: [], nowS: 3 * h, stages: fda(), prior });
    for (const v of Object.values(p.now)) {
      expect(v).toBeGreaterThanOrEqual(model.ambientC - 0.01);
      expect(v).toBeLessThanOrEqual(model.initialC + 0.01);
    }
    expect(p.now.meanC).toBeLessThanOrEqual(p.now.warmestC);
  });
});

describe("a late first reading", () => {
  it("estimates when the core crossed the upper limit, within its band", () => {
    const s = setup({ startC: 57 });
    const { model, prior } = buildBatchModel(s);
    const truth = solveScaled(model, 1.2, 1);
    // The food crossed 57 °C 40 minutes before anyone probed it.
    const lag = 40 * 60;
    const readings = [0, 0.5, 1, 1.5].map((t) => ({ tS: t * h, c: truth.centerC(lag + t * h) }));
    const est = estimateCrossing(model, readings, 57, prior)!;
    expect(est).not.toBeNull();
    expect(Math.abs(est.crossedAtS - -lag)).toBeLessThan(Math.max(2 * est.sdS, 300));
    expect(est.crossedAtS).toBeLessThan(0);
  });

  it("says nothing when the first reading is above the limit", () => {
    const { model, prior } = buildBatchModel(setup());
    expect(estimateCrossing(model, [{ tS: 0, c: 63 }], 57, prior)).toBeNull();
  });
});
