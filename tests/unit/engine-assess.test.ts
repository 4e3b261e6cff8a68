import { describe, expect, it } from "vitest";
import { assessBatch } from "~/lib/engine/assess";
import type { BatchSetup } from "~/lib/engine/batch-model";
import { buildBatchModel } from "~/lib/engine/batch-model";
import { solveScaled } from "~/lib/engine/calibrate";
import { getRuleSet } from "~/lib/rule-sets";
import { fromCelsius } from "~/lib/temperature";

const fda = getRuleSet("fda-3-501.14-a")!;
const setup: BatchSetup = {
  food: { k: 0.52, alpha: 1.35e-7, rhoCp: 0.52 / 1.35e-7 },
  pan: { size: "gn-1/1", depthMm: 65 },
  fillDepthMm: 50,
  panMaterial: "stainless-steel",
  lid: false,
  method: "walk-in",
  startC: 62,
};
const t0 = Date.parse("2026-12-01T14:00:00Z");
const min = 60_000;

describe("assessing a batch", () => {
  it("a °F batch on track: the record says in progress, the model says when each stage will be met", () => {
    const { model } = buildBatchModel(setup);
    const truth = solveScaled(model, 1.2, 1);
    const readings = [0, 30, 60].map((m, i) => ({ id: `r${i}`, takenAt: t0 + m * min, value: Math.round(fromCelsius(truth.centerC(m * 60), "F") * 10) / 10, unit: "F" as const }));
    const a = assessBatch({ ruleSet: fda, setup, batchStartedAt: t0, readings, siteUnit: "F", now: t0 + 61 * min });
    expect(a.evaluation.outcome).toBe("in-progress");
    expect(a.evaluation.clockStart?.basis).toBe("measured");
    expect(a.prediction.stages).toHaveLength(2);
    // FDA §3-501.14(A): stage 1 to 70 °F within 2 h of passing 135 °F, and to 41 °F within 6 h.
    const clock = (a.evaluation.clockStart!.at - t0) / 1000;
    expect(a.prediction.stages[0].deadlineS).toBe(clock + 7200);
    expect(a.prediction.stages[1].deadlineS).toBe(clock + 21600);
    expect(a.prediction.stages[0].targetC).toBeCloseTo(21.1, 1);
    expect(a.prediction.calibration.readingsUsed).toBe(2);
    expect(Object.keys(a.alternativeLabels)).toContain("ice-bath-stirred");
  });

  it("a late first reading gets the model's estimate of the crossing as its clock start", () => {
    const { model } = buildBatchModel({ ...setup, startC: 57 });
    const truth = solveScaled(model, 1, 1);
    // Crossed 57 °C at t0; first probed 45 minutes later.
    const readings = [45, 75, 105].map((m, i) => ({ id: `r${i}`, takenAt: t0 + m * min, value: truth.centerC(m * 60), unit: "C" as const }));
    const a = assessBatch({ ruleSet: fda, setup: { ...setup, startC: readings[0].value }, batchStartedAt: t0 + 45 * min, readings, siteUnit: "C", now: t0 + 106 * min });
    expect(a.crossingEstimate).not.toBeNull();
    expect(a.evaluation.clockStart?.basis).toBe("estimated");
    expect(a.evaluation.flags.some((f) => f.kind === "startNotCaptured")).toBe(true);
    // The estimate lands near the true crossing (within 20 min), and never after the first reading.
    expect(Math.abs(a.evaluation.clockStart!.at - t0)).toBeLessThan(20 * min);
    expect(a.evaluation.clockStart!.at).toBeLessThanOrEqual(readings[0].takenAt);
  });

  it("the readings decide; the model never turns a missed stage into a met one", () => {
    const readings = [
      { id: "a", takenAt: t0, value: 60, unit: "C" as const },
      { id: "b", takenAt: t0 + 150 * min, value: 30, unit: "C" as const },
    ];
    const a = assessBatch({ ruleSet: fda, setup, batchStartedAt: t0, readings, siteUnit: "C", now: t0 + 151 * min });
    expect(a.evaluation.stages[0].status).toBe("missed");
    expect(a.evaluation.nextStep).toBe("reheat");
    expect(a.prediction.stages[0].probability).toBe(0);
    expect(a.prediction.verdict).toBe("behind");
  });

  it("after a reheat the model restarts from the reheat reading", () => {
    const readings = [
      { id: "a", takenAt: t0, value: 60, unit: "C" as const },
      { id: "b", takenAt: t0 + 150 * min, value: 30, unit: "C" as const },
      // FDA Food Code §3-403.11: reheat to 74 °C (165 °F).
      { id: "c", takenAt: t0 + 200 * min, value: 75, unit: "C" as const, kind: "reheat" as const },
      { id: "d", takenAt: t0 + 230 * min, value: 58, unit: "C" as const },
    ];
    const a = assessBatch({ ruleSet: fda, setup, batchStartedAt: t0, readings, siteUnit: "C", now: t0 + 231 * min });
    expect(a.evaluation.attempts).toHaveLength(2);
    expect(a.evaluation.outcome).toBe("in-progress");
    // The second clock has not started (58 °C is still above 57 °C): provisional deadlines from the
    // last reading at or above the limit, 30 min after the reheat.
    expect(a.provisionalDeadlines).toBe(true);
    expect(a.prediction.stages[0].deadlineS).toBe(30 * 60 + 2 * 3600);
    // The model restarted at the reheat: it is fitted on the one reading after it, not the earlier ones.
    expect(a.originAt).toBe(t0 + 200 * min);
    expect(a.prediction.calibration.readingsUsed).toBe(1);
  });

  it("a stage timed from the end of the one before gets its deadline from the predicted end of it", () => {
    // FSANZ Standard 3.2.2 cl. 7(3): 60 °C to 21 °C within 2 h, then to 5 °C within a further 4 h.
    const fsanz = getRuleSet("fsanz-3.2.2-7")!;
    const readings = [
      { id: "a", takenAt: t0, value: 62, unit: "C" as const },
      { id: "b", takenAt: t0 + 30 * min, value: 52, unit: "C" as const },
    ];
    const a = assessBatch({ ruleSet: fsanz, setup, batchStartedAt: t0, readings, siteUnit: "C", now: t0 + 31 * min });
    expect(a.evaluation.stages[1].deadline).toBeNull();
    const [one, two] = a.prediction.stages;
    expect(two.deadlineS).toBeCloseTo(one.reachS! + 4 * 3600, 0);
    expect(a.provisionalDeadlines).toBe(true);
  });
});
