import { fc, test } from "@fast-check/vitest";
import { describe, expect, it } from "vitest";
import { continueFrom, solveConduction, type Geometry, type Initial, type Solution, type SurfaceH } from "~/lib/engine/conduction";
import { cellMean, solveRadialNumerically, solveSlabNumerically, type FaceH } from "../helpers/numerical-heat";

// temperaturesAt (a whole depth profile in one pass, eigenfunction values kept per set of
// positions) against temperatureAt point by point, and against the independent numerical solver.
const SAME_K = 1e-9;
const food = { k: 0.5, alpha: 1.4e-7 };

const logUniform = (lo: number, hi: number) =>
  fc.double({ min: Math.log(lo), max: Math.log(hi), noNaN: true }).map(Math.exp);
const face: fc.Arbitrary<SurfaceH> = fc.oneof(
  { weight: 1, arbitrary: fc.constantFrom<SurfaceH>(0, "inf") },
  { weight: 5, arbitrary: logUniform(0.5, 3000) },
);

const extentOf = (g: Geometry) => (g.shape === "cylinder" || g.shape === "sphere" ? g.radiusM : g.depthM);
const evenGrid = (len: number, n: number) => Array.from({ length: n }, (_, i) => (len * i) / (n - 1));

/** Largest |temperaturesAt − temperatureAt| over the positions, asking twice (the second from the kept table). */
function worstDifference(sol: Solution, tS: number, at: number[]): number {
  const first = sol.temperaturesAt(tS, at);
  const again = sol.temperaturesAt(tS, at, new Float64Array(at.length + 3));
  let worst = 0;
  at.forEach((x, j) => {
    const single = sol.temperatureAt(tS, x);
    worst = Math.max(worst, Math.abs(first[j] - single), Math.abs(again[j] - single));
  });
  return worst;
}

describe("temperaturesAt: the whole profile in one pass", () => {
  const times = [0, 0.5, 5, 60, 600, 3600, 7200, 40000];

  test.prop([logUniform(0.01, 0.2), face, face, fc.boolean(), fc.integer({ min: 2, max: 120 })], { numRuns: 40 })(
    "matches temperatureAt at every depth of a slab, on even and uneven grids, first call and from the kept table",
    (depthM, bottomH, topH, alike, points) => {
      const g: Geometry = { shape: "slab", depthM, bottomH, topH: alike ? bottomH : topH };
      const sol = solveConduction(g, food, 60, 3);
      const even = evenGrid(depthM, points);
      const uneven = even.map((x, i) => x * (1 - 0.3 * Math.abs(Math.sin(i))));
      for (const t of times) {
        expect(worstDifference(sol, t, even)).toBeLessThan(SAME_K);
        expect(worstDifference(sol, t, uneven)).toBeLessThan(SAME_K);
      }
    },
  );

  it("matches temperatureAt for non-uniform and continued slabs, blocks, cylinders and spheres", () => {
    const cases: { g: Geometry; initial: Initial }[] = [];
    for (const h of [0, 4, 25, 400, "inf"] as const) {
      cases.push({ g: { shape: "slab", depthM: 0.06, bottomH: h, topH: 12 }, initial: (x: number) => 70 - 300 * x });
      cases.push({ g: { shape: "slab", depthM: 0.04, bottomH: 8, topH: h }, initial: { samplesC: [60, 64, 58, 40] } });
      cases.push({ g: { shape: "block", lengthM: 0.53, widthM: 0.325, depthM: 0.075, wallH: 6, bottomH: h, topH: 2.5 }, initial: 68 });
      cases.push({ g: { shape: "cylinder", radiusM: 0.04, h }, initial: 60 });
      cases.push({ g: { shape: "sphere", radiusM: 0.03, h }, initial: 60 });
    }
    const sols: Solution[] = cases.map(({ g, initial }) => solveConduction(g, food, initial, 3));
    // Moves: a slab to an ice bath, a block with its lid taken off and a new ambient.
    const slab = solveConduction({ shape: "slab", depthM: 0.05, bottomH: 10, topH: 10 }, food, 60, 3);
    sols.push(continueFrom(slab, 1200, { shape: "slab", depthM: 0.05, bottomH: 500, topH: 500 }, 0.5));
    sols.push(continueFrom(slab, 1200, { shape: "slab", depthM: 0.05, bottomH: 500, topH: 12 }, 0.5));
    const block = solveConduction({ shape: "block", lengthM: 0.3, widthM: 0.2, depthM: 0.06, wallH: 6, bottomH: 4, topH: 2 }, food, 68, 3);
    sols.push(continueFrom(block, 3600, { shape: "block", lengthM: 0.3, widthM: 0.2, depthM: 0.06, wallH: 6, bottomH: 4, topH: 11 }, 1));
    for (const sol of sols) {
      const len = extentOf(sol.geometry);
      for (const t of times) {
        for (const n of [3, 20, 41, 200]) expect(worstDifference(sol, t, evenGrid(len, n))).toBeLessThan(SAME_K);
        // Outside the body: clamped to its faces, as temperatureAt does.
        expect(worstDifference(sol, t, [-0.01, len * 0.3, len * 1.5])).toBeLessThan(SAME_K);
      }
    }
  });

  it("the same positions asked at many times (a depth × time picture) keep matching, and other positions after them", () => {
    const sol = solveConduction({ shape: "block", lengthM: 0.53, widthM: 0.325, depthM: 0.075, wallH: 6, bottomH: 4, topH: 2 }, food, 68, 3);
    const grid = evenGrid(0.075, 20);
    const out = new Float64Array(20);
    for (let i = 0; i < 40; i++) {
      const t = 60 + i * 600;
      const res = sol.temperaturesAt(t, grid, out);
      expect(res).toBe(out);
      grid.forEach((x, j) => expect(Math.abs(res[j] - sol.temperatureAt(t, x))).toBeLessThan(SAME_K));
    }
    // The same array with new contents is new positions, not the kept ones.
    grid.forEach((x, j) => (grid[j] = x / 2));
    const moved = sol.temperaturesAt(7200, grid);
    grid.forEach((x, j) => expect(Math.abs(moved[j] - sol.temperatureAt(7200, x))).toBeLessThan(SAME_K));
  });

  it("profile() is temperaturesAt on its even grid", () => {
    const sol = solveConduction({ shape: "slab", depthM: 0.05, bottomH: 10, topH: 3 }, food, 60, 3);
    for (const t of [0, 30, 600, 7200]) {
      const p = sol.profile(t, 41);
      expect(p.xM).toHaveLength(41);
      expect(p.c).toHaveLength(41);
      const batch = sol.temperaturesAt(t, p.xM);
      p.c.forEach((c, j) => expect(c).toBe(batch[j]));
      p.xM.forEach((x, j) => expect(Math.abs(p.c[j] - sol.temperatureAt(t, x))).toBeLessThan(SAME_K));
    }
  });

  it("rejects a negative time like temperatureAt", () => {
    const sol = solveConduction({ shape: "slab", depthM: 0.05, bottomH: 10, topH: 3 }, food, 60, 3);
    expect(() => sol.temperaturesAt(-1, [0.01])).toThrow(RangeError);
  });
});

describe("temperaturesAt against the independent numerical solver", () => {
  // Crank–Nicolson on 160 cells: its own error is a few thousandths of a kelvin at these times.
  const AGREE_K = 0.05;
  const depth = logUniform(0.01, 0.1);
  const biot = logUniform(0.02, 300);

  test.prop([depth, biot, biot, fc.array(logUniform(0.005, 1), { minLength: 3, maxLength: 3 }).map((f) => f.sort((a, b) => a - b))], { numRuns: 12 })(
    "every cell centre of a slab, and the mean of the profile",
    (depthM, b0, b1, fo) => {
      const bottomH = (b0 * food.k) / depthM;
      const topH = (b1 * food.k) / depthM;
      const timesS = fo.map((f) => (f * depthM * depthM) / food.alpha);
      const sol = solveConduction({ shape: "slab", depthM, bottomH, topH }, food, 65, 2);
      const num = solveSlabNumerically({ depthM, bottomH: bottomH as FaceH, topH: topH as FaceH, k: food.k, alpha: food.alpha, ambientC: 2, initialC: () => 65, timesS, cells: 160 });
      timesS.forEach((t, j) => {
        const series = sol.temperaturesAt(t, num.sys.centresM);
        num.sys.centresM.forEach((_, i) => expect(Math.abs(series[i] - num.temperatures[j][i])).toBeLessThan(AGREE_K));
        expect(Math.abs(cellMean(num.sys, Array.from(series)) - cellMean(num.sys, num.temperatures[j]))).toBeLessThan(AGREE_K);
      });
    },
  );

  it("every cell centre of a cylinder and a sphere", () => {
    for (const shape of ["cylinder", "sphere"] as const) {
      const radiusM = 0.04;
      const timesS = [600, 3600, 10800];
      const sol = solveConduction({ shape, radiusM, h: 12 }, food, 65, 2);
      const num = solveRadialNumerically({ shape, radiusM, h: 12, k: food.k, alpha: food.alpha, ambientC: 2, initialC: 65, timesS, cells: 160 });
      timesS.forEach((t, j) => {
        const series = sol.temperaturesAt(t, num.sys.centresM);
        num.sys.centresM.forEach((_, i) => expect(Math.abs(series[i] - num.temperatures[j][i])).toBeLessThan(AGREE_K));
      });
    }
  });
});

describe("the centre of a wide pan's walls", () => {
  it("from the early-time form where it is exact, agrees with the full series within 0.01 K, and with temperatureAt", () => {
    const dims = { lengthM: 0.53, widthM: 0.325, depthM: 0.075 };
    for (const wallH of [2, 6, 40, "inf"] as const) {
      const g: Geometry = { shape: "block", ...dims, wallH, bottomH: 4, topH: 2.5 };
      const usual = solveConduction(g, food, 68, 3);
      const series = solveConduction(g, food, 68, 3, { preferSeries: true });
      for (const t of [60, 300, 900, 1800, 3600, 7200, 14400, 28800, 86400]) {
        expect(Math.abs(usual.centerC(t) - series.centerC(t))).toBeLessThan(0.01);
        const mid = { xM: dims.lengthM / 2, yM: dims.widthM / 2, zM: dims.depthM / 2 };
        expect(usual.temperatureAt(t, mid)).toBeCloseTo(usual.centerC(t), 10);
        expect(usual.temperaturesAt(t, [dims.depthM / 2])[0]).toBeCloseTo(usual.centerC(t), 10);
      }
    }
  });
});
