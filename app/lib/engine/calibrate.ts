import { fitLeastSquares, invertSmall } from "./least-squares";
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
 * fit); the covariance is the inverse of JᵀJ of the standardised residuals at the optimum.
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
  // Standardised residuals: the readings over their sd, then the priors over theirs (a maximum a
  // posteriori fit is least squares with the priors as extra residuals).
  const residualsFor = (sd: number) => (p: readonly number[]) => {
    const lnS = p[0];
    const lnF = fitF ? p[1] : prior.lnF.mean;
    const sol = solutionFor(lnS, lnF);
    const r = usable.map((x) => (x.c - sol.centerC(x.tS)) / sd);
    r.push((lnS - prior.lnS.mean) / prior.lnS.sd);
    if (fitF) r.push((lnF - prior.lnF.mean) / prior.lnF.sd);
    return r;
  };
  const fitOnce = (sd: number, from: number[]) =>
    fitLeastSquares(residualsFor(sd), from, {
      lo: fitF ? [-4, -1] : [-4],
      hi: fitF ? [4, 1] : [4],
      step: fitF ? [1e-3, 1e-3] : [1e-3],
      tol: 1e-4,
    });

  const n = usable.length;
  let fit = fitOnce(PROBE_SD_K, fitF ? [prior.lnS.mean, prior.lnF.mean] : [prior.lnS.mean]);
  // The batch's own scatter takes over when it is clearly larger than the probe's.
  const params = fitF ? 2 : 1;
  const readingCost = residualsFor(1)(fit.p).slice(0, n).reduce((a, v) => a + v * v, 0);
  const rms = n > params ? Math.sqrt(readingCost / (n - params)) : 0;
  const sd = Math.max(PROBE_SD_K, rms);
  if (sd > PROBE_SD_K) fit = fitOnce(sd, fit.p);

  const lnS = fit.p[0];
  const lnF = fitF ? fit.p[1] : prior.lnF.mean;
  const inv = invertSmall(fit.jtj);
  const cov: [[number, number], [number, number]] = fitF
    ? [
        [inv[0][0], inv[0][1]],
        [inv[1][0], inv[1][1]],
      ]
    : [
        [inv[0][0], 0],
        [0, prior.lnF.sd ** 2],
      ];
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
