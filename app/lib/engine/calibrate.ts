import { levenbergMarquardt } from "ml-levenberg-marquardt";
import { solveConduction, type Geometry, type Solution, type SurfaceH } from "./conduction";

/**
 * What the engine knows about a batch before and after its readings: the body (geometry with the
 * method's surface coefficients), the food, the surroundings and the start.
 */
export type BatchModel = {
  geometry: Geometry;
  k: number; // W/m·K
  alpha: number; // m²/s
  ambientC: number;
  initialC: number;
};

/** Probe readings in seconds from the batch start. */
export type TimedReading = { tS: number; c: number };

/**
 * Gaussian priors on the natural logs of the two calibration factors: s scales every finite surface
 * coefficient, f scales the diffusivity. Defaults: s from the method's plausible range (the range
 * spans ±2 sd), f ± 15 % (1 sd) — measured diffusivities of water-rich cooked foods sit within about
 * that of the composition estimate (ASHRAE Handbook—Refrigeration, "Thermal Properties of Foods").
 */
export type Prior = { lnS: { mean: number; sd: number }; lnF: { mean: number; sd: number } };

export const defaultPrior = (hRange?: { low: number; high: number; h: number }): Prior => ({
  lnS: hRange ? { mean: 0, sd: Math.max(0.1, Math.log(hRange.high / hRange.low) / 4) } : { mean: 0, sd: 0.5 },
  lnF: { mean: 0, sd: 0.15 },
});

/**
 * A food thermometer is accurate to ±1 °C (FDA Food Code §4-502.11(A)); read as a uniform error
 * that is a standard deviation of 1/√3 ≈ 0.58 K. The scatter of the batch's own residuals takes over
 * when it is larger.
 */
export const PROBE_SD_K = 1 / Math.sqrt(3);

const scaleH = (h: SurfaceH, s: number): SurfaceH => (h === "inf" ? "inf" : h * s);

export function scaleGeometry(g: Geometry, s: number): Geometry {
  switch (g.shape) {
    case "slab":
      return { ...g, bottomH: scaleH(g.bottomH, s), topH: scaleH(g.topH, s) };
    case "block":
      return { ...g, wallH: scaleH(g.wallH, s), bottomH: scaleH(g.bottomH, s), topH: scaleH(g.topH, s) };
    default:
      return { ...g, h: scaleH(g.h, s) };
  }
}

export function solveScaled(model: BatchModel, s: number, f: number): Solution {
  return solveConduction(scaleGeometry(model.geometry, s), { k: model.k, alpha: model.alpha * f }, model.initialC, model.ambientC);
}

export type Calibration = {
  /** Multipliers on the surface coefficients and the diffusivity, at the best fit. */
  s: number;
  f: number;
  /** Covariance of (ln s, ln f); a parameter left to its prior has its prior variance. */
  cov: [[number, number], [number, number]];
  fittedDiffusivity: boolean;
  residualSdK: number;
  readingsUsed: number;
  solution: Solution;
};

/**
 * Fits ln s (and ln f when the readings carry the information) to the batch's readings by
 * Levenberg–Marquardt least squares with the priors as extra residuals (a maximum a posteriori
 * fit); the covariance is the inverse of the Gauss–Newton Hessian at the optimum.
 */
export function calibrate(model: BatchModel, readings: TimedReading[], prior: Prior = defaultPrior()): Calibration {
  const usable = readings.filter((r) => r.tS > 0 && Number.isFinite(r.c));
  const noPrior = (): Calibration => ({
    s: Math.exp(prior.lnS.mean),
    f: Math.exp(prior.lnF.mean),
    cov: [
      [prior.lnS.sd ** 2, 0],
      [0, prior.lnF.sd ** 2],
    ],
    fittedDiffusivity: false,
    residualSdK: PROBE_SD_K,
    readingsUsed: 0,
    solution: solveScaled(model, Math.exp(prior.lnS.mean), Math.exp(prior.lnF.mean)),
  });
  if (usable.length === 0) return noPrior();

  // The diffusivity shows itself in the shape of the curve, separately from the surface, only once
  // the core has covered a good part of its fall (common practice in parameter estimation: don't
  // fit what the data cannot separate).
  const span = model.initialC - model.ambientC;
  const drop = model.initialC - Math.min(...usable.map((r) => r.c));
  const fitF = usable.length >= 3 && span > 0 && drop / span > 0.3;

  const n = usable.length;
  const xs = Array.from({ length: n + (fitF ? 2 : 1) }, (_, i) => i);
  const ys = [...usable.map((r) => r.c), prior.lnS.mean, ...(fitF ? [prior.lnF.mean] : [])];
  const cache = new Map<string, Solution>();
  const solutionFor = (lnS: number, lnF: number) => {
    const key = `${lnS}|${lnF}`;
    let sol = cache.get(key);
    if (!sol) {
      sol = solveScaled(model, Math.exp(lnS), Math.exp(lnF));
      cache.set(key, sol);
    }
    return sol;
  };
  const model_ = (p: ArrayLike<number>) => {
    const lnS = p[0];
    const lnF = fitF ? p[1] : prior.lnF.mean;
    const sol = solutionFor(lnS, lnF);
    return (i: number) => (i < n ? sol.centerC(usable[i].tS) : i === n ? lnS : lnF);
  };

  // Residuals are standardised here (data and model divided by each point's sd) rather than through
  // the library's `weights` option, whose scaling stalled the steps in our checks.
  const fitOnce = (sd: number) => {
    const scale = [...usable.map(() => sd), prior.lnS.sd, ...(fitF ? [prior.lnF.sd] : [])];
    return levenbergMarquardt({ x: xs, y: ys.map((y, i) => y / scale[i]) }, (p) => {
      const f = model_(p);
      return (i: number) => f(i) / scale[i];
    }, {
      initialValues: fitF ? [prior.lnS.mean, prior.lnF.mean] : [prior.lnS.mean],
      minValues: fitF ? [-4, -1] : [-4],
      maxValues: fitF ? [4, 1] : [4],
      damping: 1e-2,
      gradientDifference: 1e-3,
      centralDifference: true,
      maxIterations: 40,
      errorTolerance: 1e-9,
      improvementThreshold: 1e-4,
    });
  };

  let fit = fitOnce(PROBE_SD_K);
  const residuals = (p: ArrayLike<number>) => {
    const f = model_(p);
    return usable.map((r, i) => r.c - f(i));
  };
  const dof = Math.max(1, n - (fitF ? 2 : 1));
  const rms = Math.sqrt(residuals(fit.parameterValues).reduce((a, r) => a + r * r, 0) / dof);
  const sd = Math.max(PROBE_SD_K, n > (fitF ? 2 : 1) ? rms : 0);
  if (sd > PROBE_SD_K * 1.5) fit = fitOnce(sd);

  const p = fit.parameterValues;
  const lnS = p[0];
  const lnF = fitF ? p[1] : prior.lnF.mean;
  const cov = posteriorCovariance(usable, lnS, lnF, fitF, sd, prior, solutionFor);
  return {
    s: Math.exp(lnS),
    f: Math.exp(lnF),
    cov,
    fittedDiffusivity: fitF,
    residualSdK: sd,
    readingsUsed: n,
    solution: solutionFor(lnS, lnF),
  };
}

function posteriorCovariance(
  readings: TimedReading[],
  lnS: number,
  lnF: number,
  fitF: boolean,
  sd: number,
  prior: Prior,
  solutionFor: (lnS: number, lnF: number) => Solution,
): [[number, number], [number, number]] {
  const d = 1e-3;
  const at = (a: number, b: number) => {
    const sol = solutionFor(a, b);
    return readings.map((r) => sol.centerC(r.tS));
  };
  const ps = at(lnS + d, lnF);
  const ms = at(lnS - d, lnF);
  const js = ps.map((v, i) => (v - ms[i]) / (2 * d) / sd);
  let jf = readings.map(() => 0);
  if (fitF) {
    const pf = at(lnS, lnF + d);
    const mf = at(lnS, lnF - d);
    jf = pf.map((v, i) => (v - mf[i]) / (2 * d) / sd);
  }
  // Gauss–Newton Hessian of the weighted residuals plus the prior precision.
  const a = js.reduce((acc, v) => acc + v * v, 0) + 1 / prior.lnS.sd ** 2;
  const b = js.reduce((acc, v, i) => acc + v * jf[i], 0);
  const c = jf.reduce((acc, v) => acc + v * v, 0) + 1 / prior.lnF.sd ** 2;
  if (!fitF) return [[1 / a, 0], [0, prior.lnF.sd ** 2]];
  const det = a * c - b * b;
  return [
    [c / det, -b / det],
    [-b / det, a / det],
  ];
}
