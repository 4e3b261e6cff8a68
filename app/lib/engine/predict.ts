import { calibrate, defaultPrior, PROBE_SD_K, scaleGeometry, solveScaled, type BatchModel, type Calibration, type Prior, type TimedReading } from "./calibrate";
import { fitLeastSquares, invertSmall } from "./least-squares";
import { continueFrom, solveConduction, type Geometry, type Solution } from "./conduction";

export const HORIZON_S = 48 * 3600;

/** A stage limit and its deadline, both from the rule evaluation, in seconds from the batch start. */
export type StageTarget = {
  targetC: number;
  deadlineS: number | null;
  metAtS?: number | null;
  /** The last reading still above the limit: the stage is known not to be met before it. */
  aboveUntilS?: number | null;
};

export type StagePrediction = {
  targetC: number;
  deadlineS: number | null;
  /** Predicted time the core reaches the limit, with a 90 % band; null when not within 48 h. */
  reachS: number | null;
  lowS: number | null;
  highS: number | null;
  /** Probability the core reaches the limit by the deadline; 1 or 0 once the readings decided it. */
  probability: number | null;
  /** True when a reading already met this stage (the record, not the model). */
  metByReading: boolean;
  /** Standard deviation of ln(reach time): parameter spread and the model floor. */
  sdLnT: number;
};

/** Three levels, in the product's own words: making it comfortably, cutting it close, will miss. */
export type Verdict = "ahead" | "tight" | "behind";

export type Alternative = {
  id: string;
  /** The new body and surfaces from the switch on (surface coefficients before calibration). */
  geometry: Geometry;
  /** The surroundings after the switch (an ice bath is colder than the walk-in). */
  ambientC: number;
  /**
   * "continue": the food stays where it is and its temperature field carries on (ice bath, blast
   * chiller, lid off). "remix": the food is moved into new pans, starting them at its mean temperature.
   */
  transfer: "continue" | "remix";
  /** Whether the batch's calibrated surface factor applies (same equipment, e.g. lid off) or not. */
  keepsSurfaceFactor: boolean;
  /** Prior sd of ln s for the new surfaces, when the calibration does not carry over. */
  surfaceSd?: number;
};

export type AlternativePrediction = { id: string; stages: StagePrediction[]; verdict: Verdict; finishS: number | null };

export type BatchPrediction = {
  stages: StagePrediction[];
  verdict: Verdict;
  calibration: Pick<Calibration, "s" | "f" | "cov" | "fittedDiffusivity" | "residualSdK" | "readingsUsed">;
  /** Current model estimates at `nowS`. */
  now: { centerC: number; warmestC: number; meanC: number };
  alternatives: AlternativePrediction[];
};

// Standard normal CDF (Abramowitz & Stegun 26.2.17, |error| < 7.5e-8).
export function normalCdf(z: number) {
  const t = 1 / (1 + 0.2316419 * Math.abs(z));
  const d = 0.3989422804014327 * Math.exp((-z * z) / 2);
  const p = d * t * (0.31938153 + t * (-0.356563782 + t * (1.781477937 + t * (-1.821255978 + t * 1.330274429))));
  return z >= 0 ? 1 - p : p;
}

const Z90 = 1.6448536269514722;
/**
 * What-ifs answer "about when", in minutes: a looser series (0.05 K, at most 80 terms) is plenty and
 * keeps a whole prediction within its time budget.
 */
const WHAT_IF_ACCURACY = { tolK: 0.05, maxTerms: 80 };
/** A floor on the spread of predicted times for what the model leaves out (common practice: ±5 %). */
const MODEL_SD_LN_T = 0.05;

/** Reach time of a target; `near` (optional) a time the answer is expected within 2 % of. */
type Reacher = (targetC: number, near?: number) => number | null;

/**
 * Spread of ln(reach time) from the covariance of (ln s, ln f) by first-order propagation, with the
 * model floor added in quadrature.
 */
function band(reach: (lnS: number, lnF: number, near?: number) => number | null, lnS: number, lnF: number, cov: Calibration["cov"]) {
  const t0 = reach(lnS, lnF);
  if (t0 === null || t0 <= 0) return { t: t0, sd: MODEL_SD_LN_T };
  const d = 0.02;
  // A 2 % step in ln s or ln f moves the time by about 2 % at most: the search starts there.
  const dS = reach(lnS + d, lnF, t0);
  const dF = reach(lnS, lnF + d, t0);
  const gS = dS === null ? 0 : (Math.log(dS) - Math.log(t0)) / d;
  const gF = dF === null ? 0 : (Math.log(dF) - Math.log(t0)) / d;
  const variance = gS * gS * cov[0][0] + 2 * gS * gF * cov[0][1] + gF * gF * cov[1][1];
  return { t: t0, sd: Math.sqrt(variance + MODEL_SD_LN_T ** 2) };
}

function stagePredictions(
  targets: StageTarget[],
  reachFor: (lnS: number, lnF: number) => Reacher,
  lnS: number,
  lnF: number,
  cov: Calibration["cov"],
  offsetS: number,
  nowS: number,
  /** A spread per stage to reuse instead of propagating the covariance again (what-ifs). */
  spread?: number[],
): StagePrediction[] {
  return targets.map((stage, i) => {
    const metByReading = stage.metAtS != null;
    const reach = (a: number, c: number, near?: number) => {
      const t = reachFor(a, c)(stage.targetC, near === undefined ? undefined : near - offsetS);
      return t === null ? null : t + offsetS;
    };
    const b = spread ? { t: reach(lnS, lnF), sd: spread[i] } : band(reach, lnS, lnF, cov);
    const reachS = metByReading ? stage.metAtS! : b.t;
    let probability: number | null = null;
    if (metByReading) probability = stage.deadlineS === null || stage.metAtS! <= stage.deadlineS ? 1 : 0;

    // Conditioned on what the readings already say: not reached before the last reading above the limit.
    const known = stage.aboveUntilS && stage.aboveUntilS > 0 && b.t !== null ? normalCdf((Math.log(stage.aboveUntilS) - Math.log(b.t)) / b.sd) : 0;
    if (!metByReading && stage.deadlineS !== null) {
      if (nowS > stage.deadlineS) probability = 0;
      else if (b.t === null) probability = 0;
      else {
        const byDeadline = normalCdf((Math.log(Math.max(1, stage.deadlineS)) - Math.log(b.t)) / b.sd);
        probability = known >= 1 - 1e-12 ? 0 : Math.max(0, (byDeadline - known) / (1 - known));
      }
    }
    const floor = stage.aboveUntilS ?? 0;
    return {
      targetC: stage.targetC,
      deadlineS: stage.deadlineS,
      reachS: metByReading || reachS === null ? reachS : Math.max(reachS, floor),
      lowS: metByReading || b.t === null ? reachS : Math.max(floor, b.t * Math.exp(-Z90 * b.sd)),
      highS: metByReading || b.t === null ? reachS : Math.max(floor, b.t * Math.exp(Z90 * b.sd)),
      probability,
      metByReading,
      sdLnT: b.sd,
    };
  });
}

export function verdictOf(stages: StagePrediction[]): Verdict {
  const open = stages.filter((s) => s.probability !== null);
  if (open.length === 0) return "ahead";
  const worst = Math.min(...open.map((s) => s.probability!));
  return worst >= 0.9 ? "ahead" : worst >= 0.5 ? "tight" : "behind";
}

/** Time after `fromS` at which a solution (with its own clock) first reaches the target at the core. */
const reachAfter = (sol: Solution, fromS: number, targetC: number, near?: number) => {
  if (sol.centerC(fromS) <= targetC) return fromS;
  const t = sol.reachTime(targetC, "center", HORIZON_S, near);
  return t === null ? null : t;
};

export type PredictInput = {
  model: BatchModel;
  readings: TimedReading[];
  nowS: number;
  stages: StageTarget[];
  prior?: Prior;
  alternatives?: Alternative[];
};

/** The whole prediction for a batch: calibrate, predict each stage with a band, rank the alternatives. */
export function predictBatch(input: PredictInput): BatchPrediction {
  const prior = input.prior ?? defaultPrior();
  const cal = calibrate(input.model, input.readings, prior);
  const targets = input.stages.map((s) => ({
    ...s,
    aboveUntilS: s.aboveUntilS ?? Math.max(0, ...input.readings.filter((r) => r.c > s.targetC).map((r) => r.tS)),
  }));
  const lnS = Math.log(cal.s);
  const lnF = Math.log(cal.f);
  const sols = new Map<string, Solution>();
  const solFor = (a: number, c: number) => {
    const key = `${a}|${c}`;
    let s = sols.get(key);
    if (!s) {
      s = a === lnS && c === lnF ? cal.solution : solveScaled(input.model, Math.exp(a), Math.exp(c));
      sols.set(key, s);
    }
    return s;
  };
  const stages = stagePredictions(targets, (a, c) => (target, near) => reachAfter(solFor(a, c), 0, target, near), lnS, lnF, cal.cov, 0, input.nowS);
  const nowS = Math.max(0, input.nowS);
  const sol = cal.solution;

  const alternatives = (input.alternatives ?? []).map((alt) => {
    const built = new Map<string, Reacher>();
    const altFor = (a: number, c: number): Reacher => {
      const key = `${a}|${c}`;
      const cached = built.get(key);
      if (cached) return cached;
      const base = solFor(a, c);
      const geometry = alt.keepsSurfaceFactor ? scaleGeometry(alt.geometry, Math.exp(a)) : alt.geometry;
      const next =
        alt.transfer === "continue"
          ? continueFrom(base, nowS, geometry, alt.ambientC, WHAT_IF_ACCURACY)
          : solveConduction(geometry, { k: input.model.k, alpha: input.model.alpha * Math.exp(c) }, base.meanC(nowS), alt.ambientC, WHAT_IF_ACCURACY);
      const startC = base.centerC(nowS);
      const reacher: Reacher = (target) => (alt.transfer === "continue" && startC <= target ? 0 : next.reachTime(target, "center", HORIZON_S));
      built.set(key, reacher);
      return reacher;
    };
    // A what-if's times carry the same relative spread as the batch's own (first order): one build
    // per what-if instead of three.
    // An uncalibrated surface (new equipment) adds its own prior spread: reach time scales at most
    // as 1/h, so its ln-spread is at most that of h.
    const extra = alt.keepsSurfaceFactor ? 0 : (alt.surfaceSd ?? 0);
    const altStages = stagePredictions(targets, altFor, lnS, lnF, cal.cov, nowS, input.nowS, stages.map((s) => Math.sqrt(s.sdLnT ** 2 + extra ** 2)));
    return { id: alt.id, stages: altStages, verdict: verdictOf(altStages), finishS: lastReach(altStages) };
  });
  alternatives.sort((a, b) => rank(a) - rank(b));

  return {
    stages,
    verdict: verdictOf(stages),
    calibration: { s: cal.s, f: cal.f, cov: cal.cov, fittedDiffusivity: cal.fittedDiffusivity, residualSdK: cal.residualSdK, readingsUsed: cal.readingsUsed },
    now: { centerC: sol.centerC(nowS), warmestC: sol.warmestC(nowS), meanC: sol.meanC(nowS) },
    alternatives,
  };
}

const lastReach = (stages: StagePrediction[]) => (stages.some((s) => s.reachS === null) ? null : Math.max(...stages.map((s) => s.reachS!)));
// Ranked by the chance of meeting every deadline, then by how soon the last limit is reached.
const rank = (a: AlternativePrediction) => {
  const p = Math.min(1, ...a.stages.map((s) => s.probability ?? 1));
  return -p * 1e9 + (a.finishS ?? 1e8);
};

/**
 * When the first reading came in below the rule's upper limit, estimates when the core crossed it:
 * the food is taken as uniform at the limit at an unknown time t₀ before the first reading, and t₀
 * is fitted together with the surface factor to the readings (priors as in `calibrate`). Returns
 * seconds relative to the batch start (negative = before it) with a standard deviation.
 */
export function estimateCrossing(model: BatchModel, readings: TimedReading[], upperC: number, prior: Prior = defaultPrior()) {
  const usable = readings.filter((r) => Number.isFinite(r.c)).sort((a, b) => a.tS - b.tS);
  if (usable.length === 0 || usable[0].c >= upperC) return null;
  const first = usable[0];
  const shifted: BatchModel = { ...model, initialC: upperC };
  const cache = new Map<number, Solution>();
  const solFor = (lnS: number) => {
    let s = cache.get(lnS);
    if (!s) {
      s = solveScaled(shifted, Math.exp(lnS), 1);
      cache.set(lnS, s);
    }
    return s;
  };
  // Start from the prior's guess: the time the model takes from the limit to the first reading.
  const guess = solFor(prior.lnS.mean).reachTime(first.c, "center", HORIZON_S) ?? 1800;
  const fit = fitLeastSquares(
    ([lnS, lag]) => {
      const sol = solFor(lnS);
      const r = usable.map((x) => (x.c - sol.centerC(Math.max(0, x.tS - (first.tS - lag)))) / PROBE_SD_K);
      r.push((lnS - prior.lnS.mean) / prior.lnS.sd);
      return r;
    },
    [prior.lnS.mean, guess],
    { lo: [-4, 0], hi: [4, HORIZON_S], step: [1e-3, 1], tol: 1e-3 },
  );
  const [lnS, lag] = fit.p;
  const sd = Math.sqrt(Math.max(0, invertSmall(fit.jtj)[1][1]) + 60 ** 2);
  return { crossedAtS: first.tS - lag, sdS: sd, surfaceFactor: Math.exp(lnS) };
}
