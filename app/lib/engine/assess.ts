import type { RuleSet } from "../rule-sets";
import { toCelsius } from "../temperature";
import { buildBatchModel, standardAlternatives, type BatchSetup } from "./batch-model";
import { solveScaled, type TimedReading } from "./calibrate";
import type { Solution } from "./conduction";
import { estimateCrossing, predictBatch, type BatchPrediction, type StagePrediction, type StageTarget } from "./predict";
import { evaluateRuleSet, type RuleEvaluation, type RuleReading } from "./rules";

export type AssessInput = {
  ruleSet: RuleSet;
  /** The physics of the batch; `startC` is its temperature when it started cooling. */
  setup: BatchSetup;
  batchStartedAt: number;
  /** Readings as entered (their own unit), corrections already applied by the caller. */
  readings: RuleReading[];
  siteUnit: "F" | "C";
  now: number;
  /**
   * When the batch moved to other equipment (a corrective action), the model restarts there: from
   * the last reading before the move, uniform at its temperature, with the new method. `setup` holds
   * the new method; the rule's clocks are untouched.
   */
  movedAt?: number;
};

export type Assessment = {
  /** The record: what the readings say under the rule. */
  evaluation: RuleEvaluation;
  /** Guidance beside it: the model's view, calibrated on the same readings. */
  prediction: BatchPrediction;
  /** When the start was not captured: the model's estimate of the crossing, epoch ms, with its sd in seconds. */
  crossingEstimate: { at: number; sdS: number } | null;
  /** The calibrated model itself, for pictures of the curve and the depth profile (server side). */
  solution: Solution;
  /** Epoch ms that the prediction's seconds count from: the batch start, or the counted reheat. */
  originAt: number;
  /** True when some deadline the prediction used is not yet fixed by the readings (the clock has not started, or stage 1 is open). */
  provisionalDeadlines: boolean;
  alternativeLabels: Record<string, string>;
};

/**
 * The record half of `assessBatch`: the rule's evaluation of the readings, with the model's estimate
 * of the clock start when the first reading came in below the upper limit. The model is built only
 * then, so a long export can evaluate many batches cheaply and still agree with the batch page.
 */
export function evaluateRecord(
  input: AssessInput,
  physics: () => Pick<ReturnType<typeof buildBatchModel>, "model" | "prior"> = () => buildBatchModel(input.setup),
): { evaluation: RuleEvaluation; crossingEstimate: Assessment["crossingEstimate"] } {
  const { ruleSet, batchStartedAt, now } = input;
  const sorted = [...input.readings].sort((a, b) => a.takenAt - b.takenAt);
  const cooling = sorted.filter((r) => r.kind !== "reheat");
  // The first attempt's crossing is read from the readings before any reheat.
  const firstReheat = sorted.find((r) => r.kind === "reheat")?.takenAt ?? Infinity;
  const firstAttempt = cooling.filter((r) => r.takenAt < firstReheat);
  let crossingEstimate: Assessment["crossingEstimate"] = null;
  const upperC = ruleSet.clockStartsAt === "upper-limit" ? ruleSet.stages[0].from.c : null;
  if (upperC !== null && firstAttempt.length > 0 && toCelsius(firstAttempt[0].value, firstAttempt[0].unit) < upperC) {
    const { model, prior } = physics();
    const timed = firstAttempt.map((r) => ({ tS: (r.takenAt - batchStartedAt) / 1000, c: toCelsius(r.value, r.unit) }));
    const est = estimateCrossing(model, timed, upperC, prior);
    if (est) crossingEstimate = { at: batchStartedAt + est.crossedAtS * 1000, sdS: est.sdS };
  }
  const evaluation = evaluateRuleSet(ruleSet, {
    readings: sorted,
    batchStartedAt,
    siteUnit: input.siteUnit,
    clockStartEstimate: crossingEstimate ? Math.min(crossingEstimate.at, cooling[0].takenAt) : undefined,
    now,
  });
  return { evaluation, crossingEstimate };
}

/**
 * The app's one call for a batch: evaluate the rule on the readings (with the model's estimate of the
 * clock start when the first reading came late), then predict each open stage against its deadline
 * and rank what would help. After a counted reheat the model restarts from the reheat reading.
 */
export function assessBatch(input: AssessInput): Assessment {
  const { setup, batchStartedAt, now } = input;
  const sorted = [...input.readings].sort((a, b) => a.takenAt - b.takenAt);
  const cooling = sorted.filter((r) => r.kind !== "reheat");
  const { model, prior } = buildBatchModel(setup);
  const timed = (from: number, list: RuleReading[]): TimedReading[] => list.map((r) => ({ tS: (r.takenAt - from) / 1000, c: toCelsius(r.value, r.unit) }));
  const { evaluation, crossingEstimate } = evaluateRecord(input, () => ({ model, prior }));
  const ruleSet = input.ruleSet;
  const upperC = ruleSet.clockStartsAt === "upper-limit" ? ruleSet.stages[0].from.c : null;

  // After a counted reheat the food starts afresh, uniform at the reheat temperature.
  const attempt = evaluation.attempts[evaluation.attempts.length - 1];
  const reheat = attempt.reheatReadingId ? sorted.find((r) => r.id === attempt.reheatReadingId) : undefined;
  const lastBeforeMove = input.movedAt !== undefined ? cooling.filter((r) => r.takenAt <= input.movedAt! && (!reheat || r.takenAt >= reheat.takenAt)).at(-1) : undefined;
  const restart = lastBeforeMove ?? reheat;
  const origin = restart ? restart.takenAt : batchStartedAt;
  const physics = restart ? buildBatchModel({ ...setup, startC: toCelsius(restart.value, restart.unit) }) : { model, prior };
  const since = cooling.filter((r) => r.takenAt > origin || (!restart && r.takenAt >= origin));
  const byId = new Map(sorted.map((r) => [r.id, r]));
  // A clock that has not started yet (no reading below the upper limit so far) would start, at the
  // earliest, at the last reading at or above it: that gives provisional deadlines to predict against.
  const ruleStages = ruleSet.stages;
  const lastAbove = [...since].reverse().find((r) => upperC !== null && toCelsius(r.value, r.unit) >= upperC);
  const provisionalStart = attempt.clockStart?.at ?? lastAbove?.takenAt ?? origin;
  const stages: StageTarget[] = [];
  evaluation.stages.forEach((s, i) => {
    const metAtS = s.metBy ? (byId.get(s.metBy)!.takenAt - origin) / 1000 : null;
    let deadlineS = s.deadline === null ? null : (s.deadline - origin) / 1000;
    if (deadlineS === null && ruleStages[i].clockFrom === "start") deadlineS = (provisionalStart - origin) / 1000 + ruleStages[i].withinMinutes * 60;
    stages.push({ targetC: toCelsius(s.limit.value, s.limit.unit), deadlineS, metAtS });
  });
  const provisional = evaluation.stages.some((s) => s.deadline === null);
  const alternatives = standardAlternatives(setup);
  const prediction = predictBatch({
    model: physics.model,
    readings: timed(origin, since),
    nowS: (now - origin) / 1000,
    stages,
    prior: physics.prior,
    alternatives,
  });
  // A stage timed from the end of the one before: its deadline follows the predicted end of that one.
  let previous: StagePrediction | null = null;
  let again = false;
  for (let i = 0; i < ruleStages.length; i++) {
    if (stages[i].deadlineS === null && ruleStages[i].clockFrom === "previous-stage" && previous?.reachS != null) {
      stages[i] = { ...stages[i], deadlineS: previous.reachS + ruleStages[i].withinMinutes * 60 };
      again = true;
    }
    previous = prediction.stages[i];
  }
  const final = again ? predictBatch({ model: physics.model, readings: timed(origin, since), nowS: (now - origin) / 1000, stages, prior: physics.prior, alternatives }) : prediction;
  const solution = solveScaled(physics.model, final.calibration.s, final.calibration.f);
  return { evaluation, prediction: final, solution, originAt: origin, provisionalDeadlines: provisional, crossingEstimate, alternativeLabels: Object.fromEntries(alternatives.map((a) => [a.id, a.label])) };
}
