import { fc, test } from "@fast-check/vitest";
import { describe, expect, it } from "vitest";
import { continueFrom, solveConduction, type SurfaceH } from "~/lib/engine/conduction";
import {
  buildLineSystem,
  cellMean,
  integrateCrankNicolson,
  integrateWithOdex,
  solveRadialNumerically,
  solveSlabNumerically,
  type FaceH,
} from "../helpers/numerical-heat";

// The series against an independent method-of-lines solution (finite volumes, Crank–Nicolson): the
// two share nothing but the physics. Agreement within 0.05 K at every cell centre and in the mean.
const AGREE_K = 0.05;
const runs = { numRuns: 15 };

const logUniform = (lo: number, hi: number) =>
  fc.double({ min: Math.log(lo), max: Math.log(hi), noNaN: true }).map(Math.exp);
// Coefficients as Biot numbers on the depth, so every case is physically different.
const biot = logUniform(0.02, 300);
const material = fc.record({
  k: fc.double({ min: 0.35, max: 0.6, noNaN: true }),
  alpha: fc.double({ min: 1.1e-7, max: 1.6e-7, noNaN: true }),
});
const depth = logUniform(0.01, 0.1);
const temps = fc.record({
  initialC: fc.double({ min: 40, max: 85, noNaN: true }),
  ambientC: fc.double({ min: -2, max: 8, noNaN: true }),
});
// Three times between Fo = 0.005 and Fo = 1.
const fourier = fc.array(logUniform(0.005, 1), { minLength: 3, maxLength: 3 }).map((f) => f.sort((a, b) => a - b));

const h = (bi: number, lengthM: number, k: number) => (bi * k) / lengthM;

function compareSlab(opts: {
  depthM: number;
  bottomH: SurfaceH;
  topH: SurfaceH;
  k: number;
  alpha: number;
  ambientC: number;
  initial: number | ((xM: number) => number);
  fo: number[];
}): void {
  const { depthM, bottomH, topH, k, alpha, ambientC, initial } = opts;
  const timesS = opts.fo.map((f) => (f * depthM * depthM) / alpha);
  const engine = solveConduction({ shape: "slab", depthM, bottomH, topH }, { k, alpha }, initial, ambientC);
  const start = typeof initial === "number" ? () => initial : initial;
  const num = solveSlabNumerically({
    depthM,
    bottomH: bottomH as FaceH,
    topH: topH as FaceH,
    k,
    alpha,
    ambientC,
    initialC: start,
    timesS,
    cells: 160,
  });
  timesS.forEach((t, j) => {
    num.sys.centresM.forEach((x, i) => {
      expect(Math.abs(engine.temperatureAt(t, x) - num.temperatures[j][i])).toBeLessThan(AGREE_K);
    });
    expect(Math.abs(engine.meanC(t) - cellMean(num.sys, num.temperatures[j]))).toBeLessThan(AGREE_K);
  });
}

describe("series against a Crank–Nicolson method-of-lines solution", () => {
  test.prop([depth, biot, material, temps, fourier], runs)(
    "slab cooled alike on both faces",
    (depthM, bi, { k, alpha }, { initialC, ambientC }, fo) => {
      const hh = h(bi, depthM, k);
      compareSlab({ depthM, bottomH: hh, topH: hh, k, alpha, ambientC, initial: initialC, fo });
    },
  );

  test.prop([depth, biot, material, temps, fourier], runs)(
    "slab with an insulated base (a pan on a bench, open top)",
    (depthM, bi, { k, alpha }, { initialC, ambientC }, fo) => {
      compareSlab({ depthM, bottomH: 0, topH: h(bi, depthM, k), k, alpha, ambientC, initial: initialC, fo });
    },
  );

  test.prop([depth, biot, biot, material, temps, fourier], runs)(
    "slab with different coefficients at the base and the top",
    (depthM, b0, b1, { k, alpha }, { initialC, ambientC }, fo) => {
      compareSlab({
        depthM,
        bottomH: h(b0, depthM, k),
        topH: h(b1, depthM, k),
        k,
        alpha,
        ambientC,
        initial: initialC,
        fo,
      });
    },
  );

  test.prop([depth, fc.oneof(biot, fc.constant(0), fc.constant(Infinity)), material, temps, fourier], runs)(
    "slab with a face held at the ambient temperature (ice-water contact)",
    (depthM, b1, { k, alpha }, { initialC, ambientC }, fo) => {
      const topH: SurfaceH = b1 === Infinity ? "inf" : h(b1, depthM, k);
      compareSlab({ depthM, bottomH: "inf", topH, k, alpha, ambientC, initial: initialC, fo });
    },
  );

  test.prop(
    [
      depth,
      biot,
      biot,
      material,
      fc.record({
        base: fc.double({ min: 20, max: 60, noNaN: true }),
        slope: fc.double({ min: -30, max: 30, noNaN: true }),
        bump: fc.double({ min: -15, max: 25, noNaN: true }),
        at: fc.double({ min: 0.2, max: 0.8, noNaN: true }),
      }),
      fourier,
    ],
    runs,
  )("slab starting from a non-uniform profile", (depthM, b0, b1, { k, alpha }, { base, slope, bump, at }, fo) => {
    const initial = (x: number) => base + slope * (x / depthM) + bump * Math.exp(-(((x / depthM - at) / 0.15) ** 2));
    compareSlab({ depthM, bottomH: h(b0, depthM, k), topH: h(b1, depthM, k), k, alpha, ambientC: 3, initial, fo });
  });

  test.prop([depth, biot, biot, material, fc.double({ min: 0.01, max: 0.3, noNaN: true }), fourier], runs)(
    "slab moved from a cold room to an ice bath part-way (continueFrom)",
    (depthM, bRoom, bBath, { k, alpha }, foSwitch, fo) => {
      const tSwitch = (foSwitch * depthM * depthM) / alpha;
      const room = solveConduction(
        { shape: "slab", depthM, bottomH: 0, topH: h(bRoom, depthM, k) },
        { k, alpha },
        65,
        4,
      );
      const bath = { shape: "slab" as const, depthM, bottomH: h(bBath, depthM, k), topH: h(bRoom, depthM, k) };
      const moved = continueFrom(room, tSwitch, bath, 0.5);
      // Numerically: integrate to the move, then carry on from the cells with the new faces.
      const first = solveSlabNumerically({
        depthM,
        bottomH: 0,
        topH: bath.topH,
        k,
        alpha,
        ambientC: 4,
        initialC: () => 65,
        timesS: [tSwitch],
        cells: 160,
      });
      const sys = buildLineSystem({
        power: 0,
        extentM: depthM,
        cells: 160,
        k,
        alpha,
        h0: bath.bottomH,
        h1: bath.topH,
        ambientC: 0.5,
      });
      const timesS = fo.map((f) => (f * depthM * depthM) / alpha);
      const after = integrateCrankNicolson(sys, first.temperatures[0], timesS);
      timesS.forEach((t, j) => {
        sys.centresM.forEach((x, i) => expect(Math.abs(moved.temperatureAt(t, x) - after[j][i])).toBeLessThan(AGREE_K));
        expect(Math.abs(moved.meanC(t) - cellMean(sys, after[j]))).toBeLessThan(AGREE_K);
      });
    },
  );

  test.prop(
    [
      fc.constantFrom("cylinder" as const, "sphere" as const),
      logUniform(0.01, 0.08),
      fc.oneof(biot, fc.constant(Infinity)),
      material,
      temps,
      fourier,
    ],
    { numRuns: 20 },
  )("cylinder and sphere (radial method of lines)", (shape, radiusM, bi, { k, alpha }, { initialC, ambientC }, fo) => {
    const hh: SurfaceH = bi === Infinity ? "inf" : h(bi, radiusM, k);
    const engine = solveConduction({ shape, radiusM, h: hh }, { k, alpha }, initialC, ambientC);
    const timesS = fo.map((f) => (f * radiusM * radiusM) / alpha);
    const num = solveRadialNumerically({
      shape,
      radiusM,
      h: hh as FaceH,
      k,
      alpha,
      ambientC,
      initialC,
      timesS,
      cells: 160,
    });
    timesS.forEach((t, j) => {
      num.sys.centresM.forEach((r, i) =>
        expect(Math.abs(engine.temperatureAt(t, r) - num.temperatures[j][i])).toBeLessThan(AGREE_K),
      );
      expect(Math.abs(engine.meanC(t) - cellMean(num.sys, num.temperatures[j]))).toBeLessThan(AGREE_K);
    });
  });
});

describe("the numerical reference itself", () => {
  it("Crank–Nicolson stepping matches odex (Gragg–Bulirsch–Stoer) on the same semi-discrete system", () => {
    const sys = buildLineSystem({
      power: 0,
      extentM: 0.02,
      cells: 30,
      k: 0.5,
      alpha: 1.4e-7,
      h0: 10,
      h1: "inf",
      ambientC: 3,
    });
    const start = sys.centresM.map(() => 60);
    const byOdex = integrateWithOdex(sys, start, 1800);
    const byCn = integrateCrankNicolson(sys, start, [1800])[0];
    byOdex.forEach((v, i) => expect(Math.abs(v - byCn[i])).toBeLessThan(1e-4));
  });

  it("keeps an insulated body's heat: the mean of a non-uniform start stays put", () => {
    const sys = buildLineSystem({
      power: 0,
      extentM: 0.05,
      cells: 80,
      k: 0.5,
      alpha: 1.4e-7,
      h0: 0,
      h1: 0,
      ambientC: 3,
    });
    const start = sys.centresM.map((x) => 20 + 400 * x);
    const [later] = integrateCrankNicolson(sys, start, [3600]);
    expect(cellMean(sys, later)).toBeCloseTo(cellMean(sys, start), 10);
  });
});
