import { fc, test } from "@fast-check/vitest";
import { describe, expect, it } from "vitest";
import table from "../../reference/incropera-table-5-1.json";
import { continueFrom, erfc, solveConduction, type Geometry, type SurfaceH } from "~/lib/engine/conduction";
import { findRootBrent } from "~/lib/engine/roots";

const PI = Math.PI;
const food = { k: 0.5, alpha: 1.4e-7 };
const logUniform = (lo: number, hi: number) =>
  fc.double({ min: Math.log(lo), max: Math.log(hi), noNaN: true }).map(Math.exp);

// Independent of the engine: erfc(x) = (2/√π)∫ₓ^(x+7) exp(−s²) ds by composite 10-point
// Gauss–Legendre (nodes from Newton's method on P₁₀); the rest of the tail is below e^(−49).
const legendre10 = (() => {
  const m = 10;
  const nodes: number[] = [];
  const weights: number[] = [];
  for (let i = 0; i < m; i++) {
    let z = Math.cos((PI * (i + 0.75)) / (m + 0.5));
    let dp = 1;
    for (let it = 0; it < 50; it++) {
      let p0 = 1;
      let p1 = z;
      for (let k = 2; k <= m; k++) [p0, p1] = [p1, ((2 * k - 1) * z * p1 - (k - 1) * p0) / k];
      dp = (m * (z * p1 - p0)) / (z * z - 1);
      z -= p1 / dp;
    }
    nodes.push(z);
    weights.push(2 / ((1 - z * z) * dp * dp));
  }
  return { nodes, weights };
})();

function erfcByQuadrature(x: number): number {
  const panels = 60;
  const h = 7 / panels;
  let s = 0;
  for (let p = 0; p < panels; p++) {
    const mid = x + (p + 0.5) * h;
    for (let i = 0; i < 10; i++) s += legendre10.weights[i] * Math.exp(-((mid + 0.5 * h * legendre10.nodes[i]) ** 2));
  }
  return (2 / Math.sqrt(PI)) * 0.5 * h * s;
}

// Fraction of the way from Ti to T∞ at depth d below a face of a semi-infinite solid:
// erfc(η) − exp(hd/k + h²αt/k²)·erfc(η + h√(αt)/k)  (Incropera & DeWitt eq. 5.60); fixed surface
// erfc(η) (§5.7, constant surface temperature); insulated 0.
function semiInfiniteChange(h: SurfaceH, d: number, t: number, k: number, alpha: number): number {
  if (h === 0) return 0;
  const eta = d / (2 * Math.sqrt(alpha * t));
  if (h === "inf") return erfcByQuadrature(eta);
  const beta = (h * Math.sqrt(alpha * t)) / k;
  return erfcByQuadrature(eta) - Math.exp((h * d) / k + beta * beta) * erfcByQuadrature(eta + beta);
}

function maxOnGrid(f: (s: number) => number, n = 2000): number {
  let m = -Infinity;
  for (let i = 0; i <= n; i++) m = Math.max(m, f(i / n));
  return m;
}

describe("one-term limit and published examples", () => {
  it.each(table.planeWall)(
    "after Fo = 1 the insulated face follows C₁ exp(−ζ₁² Fo) (Incropera & DeWitt, Table 5.1, Bi = $bi)",
    ({ bi, zeta1, c1 }) => {
      const L = 0.04;
      const s = solveConduction({ shape: "slab", depthM: L, bottomH: 0, topH: (bi * food.k) / L }, food, 60, 3, {
        tolK: 1e-6,
      });
      for (const fo of [1, 2]) {
        const theta = (s.temperatureAt((fo * L * L) / food.alpha, 0) - 3) / 57;
        // 4-decimal table values move θ by up to ~2e-4 at these Fo.
        expect(theta).toBeCloseTo(c1 * Math.exp(-zeta1 * zeta1 * fo), 3);
      }
    },
  );

  it("Bi = 1e-4 agrees with lumped capacitance θ = exp(−Bi·Fo) (Incropera & DeWitt §5.2)", () => {
    const L = 0.05;
    const bi = 1e-4;
    const s = solveConduction({ shape: "slab", depthM: L, bottomH: 0, topH: (bi * food.k) / L }, food, 60, 3);
    for (const fo of [10, 100, 1000, 5000, 20000]) {
      const t = (fo * L * L) / food.alpha;
      for (const probe of [s.centerC(t), s.meanC(t), s.warmestC(t), s.temperatureAt(t, L)]) {
        expect((probe - 3) / 57).toBeCloseTo(Math.exp(-bi * fo), 4);
      }
    }
  });

  it("Çengel's refrigerated steaks: the surface reaches 2 °C after about 93 min", () => {
    // Çengel, Heat and Mass Transfer, steaks 2 cm thick (L = 1 cm each side), h = 9, k = 0.45,
    // α = 0.91e-7, Ti = 25 °C, T∞ = −11 °C. The book's 93 min is one-term (Fo = 5.085, ζ₁ = 0.4328,
    // C₁ = 1.0311); at Fo ≈ 5 the neglected terms are below e^(−ζ₂²Fo) ≈ 1e-22, so the multi-term answer
    // differs only by the book's rounding.
    const ex = table.workedExample;
    const steak = solveConduction(
      { shape: "slab", depthM: 2 * ex.halfThicknessM, bottomH: ex.h, topH: ex.h },
      { k: ex.k, alpha: ex.alpha },
      ex.initialC,
      ex.ambientC,
    );
    const t = findRootBrent((t) => steak.temperatureAt(t, 0) - ex.surfaceTargetC, 60, 6 * 3600, 0.5);
    expect(Math.abs(t / 60 - ex.answerMin)).toBeLessThan(3);
    expect((ex.oneTerm.fo * ex.halfThicknessM ** 2) / ex.alpha / 60).toBeCloseTo(t / 60, 0);
    expect(steak.terms(t)).toBe(1);
    // Both faces are surfaces: they stay equal, and the centre is warmer.
    expect(steak.temperatureAt(t, 0.02)).toBeCloseTo(steak.temperatureAt(t, 0), 10);
    expect(steak.centerC(t)).toBeGreaterThan(2);
  });
});

describe("non-uniform starts projected by quadrature", () => {
  const L = 0.06;
  const A = 40;
  const fixed: Geometry = { shape: "slab", depthM: L, bottomH: "inf", topH: "inf" };
  const parabola = (xM: number) => 2 + 4 * A * (xM / L) * (1 - xM / L);
  // Fourier sine series (standard result): bₙ = 2∫₀¹ 4Aξ(1−ξ) sin(nπξ) dξ = 16A(1 − (−1)ⁿ)/(nπ)³.
  const exact = (t: number, xM: number) => {
    const fo = (food.alpha * t) / (L * L);
    let s = 2;
    for (let n = 1; n < 4000; n += 2)
      s += ((32 * A) / (n * PI) ** 3) * Math.sin((n * PI * xM) / L) * Math.exp(-n * n * PI * PI * fo);
    return s;
  };

  it("a parabolic start between fixed faces matches the closed-form sine series", () => {
    const tight = solveConduction(fixed, food, parabola, 2, { tolK: 1e-7 });
    const usual = solveConduction(fixed, food, parabola, 2);
    for (const t of [5, 60, 600, 3600, 4 * 3600])
      for (let i = 0; i <= 24; i++) {
        const x = (L * i) / 24;
        expect(Math.abs(tight.temperatureAt(t, x) - exact(t, x))).toBeLessThan(1e-6);
        expect(Math.abs(usual.temperatureAt(t, x) - exact(t, x))).toBeLessThan(0.01);
      }
  });

  it("samples on a uniform grid, interpolated linearly, give the same answer as the function", () => {
    const samplesC = Array.from({ length: 201 }, (_, i) => parabola((L * i) / 200));
    const sampled = solveConduction(fixed, food, { samplesC }, 2);
    for (const t of [0, 30, 600, 3600])
      for (let i = 0; i <= 12; i++) {
        const x = (L * i) / 12;
        expect(Math.abs(sampled.temperatureAt(t, x) - (t === 0 ? parabola(x) : exact(t, x)))).toBeLessThan(2e-3);
      }
  });

  it("sine modes decay on their own: A sin πξ + B sin 3πξ", () => {
    const f = (x: number) => 5 + 30 * Math.sin((PI * x) / L) - 8 * Math.sin((3 * PI * x) / L);
    const s = solveConduction(fixed, food, f, 5, { tolK: 1e-6 });
    for (const t of [10, 300, 3000]) {
      const fo = (food.alpha * t) / (L * L);
      for (const x of [0.01, 0.02, 0.03, 0.047]) {
        const want =
          5 +
          30 * Math.exp(-PI * PI * fo) * Math.sin((PI * x) / L) -
          8 * Math.exp(-9 * PI * PI * fo) * Math.sin((3 * PI * x) / L);
        expect(s.temperatureAt(t, x)).toBeCloseTo(want, 6);
      }
    }
  });

  it("between insulated faces the mean is kept and a cosine mode decays: 20 + 10 cos πξ", () => {
    const s = solveConduction(
      { shape: "slab", depthM: L, bottomH: 0, topH: 0 },
      food,
      (x) => 20 + 10 * Math.cos((PI * x) / L),
      3,
    );
    for (const t of [0, 60, 1800, 7200]) {
      const fo = (food.alpha * t) / (L * L);
      expect(s.meanC(t)).toBeCloseTo(20, 6);
      expect(s.temperatureAt(t, 0)).toBeCloseTo(20 + 10 * Math.exp(-PI * PI * fo), 5);
      expect(s.warmestC(t)).toBeCloseTo(20 + 10 * Math.exp(-PI * PI * fo), 5);
    }
    expect(s.reachTime(15, "mean")).toBeNull();
  });

  it("a uniform start between insulated faces never changes", () => {
    const s = solveConduction({ shape: "slab", depthM: L, bottomH: 0, topH: 0 }, food, 60, 3);
    for (const t of [0, 1, 3600, 48 * 3600]) {
      expect(s.centerC(t)).toBe(60);
      expect(s.temperatureAt(t, 0.01)).toBe(60);
      expect(s.meanC(t)).toBe(60);
    }
    expect(s.reachTime(21, "center")).toBeNull();
  });

  it("finds an off-centre warmest point numerically", () => {
    const f = (x: number) => 4 + 50 * Math.exp(-(((x / L - 0.3) / 0.08) ** 2));
    const s = solveConduction({ shape: "slab", depthM: L, bottomH: 20, topH: "inf" }, food, f, 4);
    for (const t of [0, 60, 900, 3600]) {
      const brute = maxOnGrid((u) => s.temperatureAt(t, u * L));
      expect(s.warmestC(t)).toBeGreaterThanOrEqual(brute - 1e-6);
      expect(s.warmestC(t)).toBeLessThan(brute + 1e-4);
    }
  });
});

describe("outputs", () => {
  const L = 0.05;
  const pan = solveConduction({ shape: "slab", depthM: L, bottomH: 0, topH: 10 }, food, 60, 3);

  it("at t = 0 every output is the initial state", () => {
    expect(pan.centerC(0)).toBe(60);
    expect(pan.meanC(0)).toBe(60);
    expect(pan.warmestC(0)).toBe(60);
    expect(pan.profile(0, 5).c).toEqual([60, 60, 60, 60, 60]);
    const f = (x: number) => 10 + 100 * x;
    const s = solveConduction({ shape: "slab", depthM: L, bottomH: 5, topH: 5 }, food, f, 3);
    expect(s.temperatureAt(0, 0.02)).toBeCloseTo(12, 12);
    expect(s.meanC(0)).toBeCloseTo(12.5, 10);
    expect(s.warmestC(0)).toBeCloseTo(15, 10);
    expect(() => pan.centerC(-1)).toThrow(RangeError);
  });

  it("with the top cooled and the base insulated, the warmest point is the base", () => {
    for (const t of [600, 3600, 7200]) {
      expect(pan.warmestC(t)).toBeCloseTo(pan.temperatureAt(t, 0), 6);
      expect(pan.warmestC(t)).toBeGreaterThan(pan.centerC(t));
    }
  });

  it("the profile runs from the bottom face to the top face", () => {
    const p = pan.profile(3600, 11);
    expect(p.xM[0]).toBe(0);
    expect(p.xM[10]).toBeCloseTo(L, 15);
    expect(p.c[0]).toBeCloseTo(pan.temperatureAt(3600, 0), 12);
    expect(p.c[10]).toBeCloseTo(pan.temperatureAt(3600, L), 12);
    for (let i = 1; i < 11; i++) expect(p.c[i]).toBeLessThan(p.c[i - 1]);
  });

  it("the mean is the volume average of the profile (slab, cylinder, sphere)", () => {
    const gl = (f: (s: number) => number) => {
      let sum = 0;
      const panels = 40;
      for (let p = 0; p < panels; p++)
        for (let i = 0; i < 10; i++)
          sum += (legendre10.weights[i] * f((p + 0.5 + 0.5 * legendre10.nodes[i]) / panels)) / (2 * panels);
      return sum;
    };
    const tight = { tolK: 1e-7 };
    const asym = solveConduction({ shape: "slab", depthM: L, bottomH: 300, topH: 7 }, food, 60, 3, tight);
    const cyl = solveConduction({ shape: "cylinder", radiusM: 0.04, h: 25 }, food, 60, 3, tight);
    const sph = solveConduction({ shape: "sphere", radiusM: 0.04, h: 25 }, food, 60, 3, tight);
    for (const t of [120, 1200, 7200]) {
      expect(asym.meanC(t)).toBeCloseTo(
        gl((s) => asym.temperatureAt(t, s * L)),
        5,
      );
      expect(cyl.meanC(t)).toBeCloseTo(
        gl((s) => 2 * s * cyl.temperatureAt(t, s * 0.04)),
        5,
      );
      expect(sph.meanC(t)).toBeCloseTo(
        gl((s) => 3 * s * s * sph.temperatureAt(t, s * 0.04)),
        5,
      );
    }
  });

  it("reachTime returns the first crossing to within 0.5 s", () => {
    for (const which of ["center", "warmest", "mean"] as const) {
      const t = pan.reachTime(21, which)!;
      const probe = (s: number) =>
        which === "center" ? pan.centerC(s) : which === "mean" ? pan.meanC(s) : pan.warmestC(s);
      expect(probe(t - 0.6)).toBeGreaterThan(21);
      expect(probe(t + 0.6)).toBeLessThan(21);
    }
    expect(pan.reachTime(21, "mean")!).toBeLessThan(pan.reachTime(21, "center")!);
    expect(pan.reachTime(21, "center")!).toBeLessThan(pan.reachTime(21, "warmest")!);
  });

  it("reachTime is null when the ambient is not below the target or the time runs out, 0 if already there", () => {
    expect(pan.reachTime(3, "center")).toBeNull();
    expect(pan.reachTime(2, "center")).toBeNull();
    expect(pan.reachTime(21, "center", 600)).toBeNull();
    expect(pan.reachTime(60, "center")).toBe(0);
    expect(pan.reachTime(59.9, "mean")).toBeGreaterThan(0);
  });

  it("rejects what it cannot solve", () => {
    expect(() => solveConduction({ shape: "slab", depthM: 0, bottomH: 0, topH: 1 }, food, 60, 3)).toThrow(RangeError);
    expect(() => solveConduction({ shape: "slab", depthM: L, bottomH: -1, topH: 1 }, food, 60, 3)).toThrow(RangeError);
    expect(() => solveConduction({ shape: "sphere", radiusM: 0.03, h: 5 }, food, () => 60, 3)).toThrow(RangeError);
    expect(() =>
      solveConduction({ shape: "slab", depthM: L, bottomH: 0, topH: 1 }, { k: 0, alpha: 1e-7 }, 60, 3),
    ).toThrow(RangeError);
    const cyl = solveConduction({ shape: "cylinder", radiusM: 0.03, h: 5 }, food, 60, 3);
    expect(() => continueFrom(cyl, 60, { shape: "cylinder", radiusM: 0.03, h: 50 })).toThrow(RangeError);
  });
});

describe("accuracy at early times", () => {
  const cases: { depthM: number; bottomH: SurfaceH; topH: SurfaceH }[] = [
    { depthM: 0.05, bottomH: 0, topH: 10 },
    { depthM: 0.05, bottomH: 500, topH: 8 },
    { depthM: 0.1, bottomH: "inf", topH: 25 },
    { depthM: 0.2, bottomH: 1000, topH: "inf" },
  ];

  it.each(cases)(
    "at 1 s, 10 s and 60 s: initial temperature inside, semi-infinite solution at each face, within 0.01 K ($depthM m, $bottomH / $topH)",
    ({ depthM, bottomH, topH }) => {
      const geometry = { shape: "slab" as const, depthM, bottomH, topH };
      const series = solveConduction(geometry, food, 60, 3, { preferSeries: true });
      const usual = solveConduction(geometry, food, 60, 3);
      for (const t of [1, 10, 60]) {
        expect(series.terms(t)).toBeGreaterThan(0);
        for (let i = 0; i <= 200; i++) {
          const x = (depthM * i) / 200;
          // Carslaw & Jaeger ch. II / Incropera & DeWitt eq. 5.60 at each face; the two layers are
          // millimetres thick and never meet at these times.
          const change =
            semiInfiniteChange(bottomH, x, t, food.k, food.alpha) +
            semiInfiniteChange(topH, depthM - x, t, food.k, food.alpha);
          expect(Math.abs(series.temperatureAt(t, x) - (60 + (3 - 60) * change))).toBeLessThan(0.01);
          expect(Math.abs(usual.temperatureAt(t, x) - (60 + (3 - 60) * change))).toBeLessThan(0.01);
        }
        expect(Math.abs(series.centerC(t) - 60)).toBeLessThan(0.01);
        expect(Math.abs(usual.centerC(t) - 60)).toBeLessThan(0.01);
      }
    },
  );

  test.prop(
    [
      fc.oneof(fc.constantFrom(0, Infinity), logUniform(1e-4, 1e4)),
      fc.oneof(fc.constantFrom(Infinity), logUniform(1e-4, 1e4)),
      fc.double({ min: 1e-4, max: 0.04, noNaN: true }),
    ],
    { numRuns: 60 },
  )("where the two faces' semi-infinite solutions stand in for a long series, they agree with it", (b0, b1, fo) => {
    const L = 0.05;
    const h = (b: number): SurfaceH => (b === Infinity ? "inf" : (b * food.k) / L);
    const geometry = { shape: "slab" as const, depthM: L, bottomH: h(b0), topH: h(b1) };
    const t = (fo * L * L) / food.alpha;
    const usual = solveConduction(geometry, food, 60, 3);
    const series = solveConduction(geometry, food, 60, 3, { preferSeries: true, tolK: 1e-5, maxTerms: 20000 });
    for (let i = 0; i <= 50; i++) {
      expect(Math.abs(usual.temperatureAt(t, (L * i) / 50) - series.temperatureAt(t, (L * i) / 50))).toBeLessThan(0.01);
    }
    expect(Math.abs(usual.centerC(t) - series.centerC(t))).toBeLessThan(0.01);
    expect(Math.abs(usual.meanC(t) - series.meanC(t))).toBeLessThan(0.01);
  });

  it("below the term cap the early-time form takes over and agrees with the series where both apply", () => {
    for (const { depthM, bottomH, topH } of cases) {
      const series = solveConduction({ shape: "slab", depthM, bottomH, topH }, food, 60, 3, {
        maxTerms: 4000,
        preferSeries: true,
      });
      const early = solveConduction({ shape: "slab", depthM, bottomH, topH }, food, 60, 3, { maxTerms: 3 });
      for (const t of [0.5, 5]) {
        expect(early.terms(t)).toBe(0);
        for (let i = 0; i <= 100; i++) {
          const x = (depthM * i) / 100;
          expect(Math.abs(early.temperatureAt(t, x) - series.temperatureAt(t, x))).toBeLessThan(0.01);
        }
        expect(Math.abs(early.meanC(t) - series.meanC(t))).toBeLessThan(0.01);
      }
      const tiny = solveConduction({ shape: "slab", depthM, bottomH, topH }, food, 60, 3);
      expect(tiny.terms(1e-3)).toBe(0);
      const x = 1e-5;
      const change = semiInfiniteChange(bottomH, x, 1e-3, food.k, food.alpha);
      expect(Math.abs(tiny.temperatureAt(1e-3, x) - (60 - 57 * change))).toBeLessThan(0.01);
    }
  });

  it("the cylinder's and sphere's early-time forms agree with their series", () => {
    for (const shape of ["cylinder", "sphere"] as const)
      for (const h of [0.5, 6.25, 12.5, 80, "inf"] as const) {
        const g = { shape, radiusM: 0.04, h };
        const series = solveConduction(g, food, 60, 3, { maxTerms: 4000 });
        const early = solveConduction(g, food, 60, 3, { maxTerms: 3 });
        for (const t of [0.5, 5]) {
          expect(early.terms(t)).toBe(0);
          for (let i = 0; i <= 100; i++) {
            const r = (0.04 * i) / 100;
            expect(Math.abs(early.temperatureAt(t, r) - series.temperatureAt(t, r))).toBeLessThan(0.01);
          }
          expect(Math.abs(early.meanC(t) - series.meanC(t))).toBeLessThan(0.01);
        }
      }
  });

  it("the engine's erfc matches quadrature", () => {
    for (const x of [0, 0.1, 0.5, 1, 1.9, 2, 2.1, 3, 5, 8]) {
      expect(Math.abs(erfc(x) / erfcByQuadrature(x) - 1)).toBeLessThan(1e-12);
    }
  });
});

describe("rectangular block", () => {
  const dims = { lengthM: 0.325, widthM: 0.265, depthM: 0.065 };
  const block = (wallH: SurfaceH, bottomH: SurfaceH, topH: SurfaceH, tolK = 0.01) =>
    solveConduction({ shape: "block", ...dims, wallH, bottomH, topH }, food, 60, 3, { tolK });

  it("with insulated walls it is the depth slab", () => {
    const b = block(0, 12, 6, 1e-7);
    const s = solveConduction({ shape: "slab", depthM: dims.depthM, bottomH: 12, topH: 6 }, food, 60, 3, {
      tolK: 1e-7,
    });
    for (const t of [60, 1800, 7200]) {
      expect(b.centerC(t)).toBeCloseTo(s.centerC(t), 6);
      expect(b.meanC(t)).toBeCloseTo(s.meanC(t), 6);
      expect(b.warmestC(t)).toBeCloseTo(s.warmestC(t), 5);
      expect(b.temperatureAt(t, { xM: 0.01, yM: 0.2, zM: 0.05 })).toBeCloseTo(s.temperatureAt(t, 0.05), 6);
    }
  });

  it("is the product of three slab solutions (Incropera & DeWitt §5.8)", () => {
    const b = block(9, 30, 6);
    const slab = (depthM: number, bottomH: SurfaceH, topH: SurfaceH) =>
      solveConduction({ shape: "slab", depthM, bottomH, topH }, food, 1, 0, { tolK: 1e-8 });
    const sx = slab(dims.lengthM, 9, 9);
    const sy = slab(dims.widthM, 9, 9);
    const sz = slab(dims.depthM, 30, 6);
    for (const t of [300, 3600, 4 * 3600]) {
      const theta = sx.temperatureAt(t, 0.1) * sy.temperatureAt(t, 0.05) * sz.temperatureAt(t, 0.02);
      expect(b.temperatureAt(t, { xM: 0.1, yM: 0.05, zM: 0.02 })).toBeCloseTo(3 + 57 * theta, 2);
      expect(b.meanC(t)).toBeCloseTo(3 + 57 * sx.meanC(t) * sy.meanC(t) * sz.meanC(t), 2);
      expect(b.centerC(t)).toBeCloseTo(3 + 57 * sx.centerC(t) * sy.centerC(t) * sz.centerC(t), 2);
    }
  });

  it("after a move, the early-time shortcuts agree with the full series everywhere", () => {
    const b = block(8, 8, 10);
    const bath = { shape: "block" as const, ...dims, wallH: 400, bottomH: 400, topH: 10 };
    for (const tSwitch of [120, 2700]) {
      const quick = continueFrom(b, tSwitch, bath, 0);
      const full = continueFrom(b, tSwitch, bath, 0, { preferSeries: true });
      for (const t of [1, 5, 30, 120, 600, 3600]) {
        expect(Math.abs(quick.centerC(t) - full.centerC(t))).toBeLessThan(0.01);
        expect(Math.abs(quick.meanC(t) - full.meanC(t))).toBeLessThan(0.01);
        for (const [fx, fy, fz] of [
          [0.5, 0.5, 0.1],
          [0.02, 0.5, 0.5],
          [0.2, 0.1, 0.9],
          [0.5, 0.03, 0.02],
        ]) {
          const p = { xM: fx * dims.lengthM, yM: fy * dims.widthM, zM: fz * dims.depthM };
          expect(Math.abs(quick.temperatureAt(t, p) - full.temperatureAt(t, p))).toBeLessThan(0.01);
        }
      }
    }
  });

  it("finds the warmest point of a pan with a hot base at the middle of the base", () => {
    const b = block(9, 0, 15);
    for (const t of [600, 3600]) {
      const atBase = b.temperatureAt(t, { xM: dims.lengthM / 2, yM: dims.widthM / 2, zM: 0 });
      expect(b.warmestC(t)).toBeCloseTo(atBase, 4);
      expect(b.profile(t, 5).c[0]).toBeCloseTo(atBase, 10);
    }
  });

  it("continues exactly through a move, with or without a new ambient", () => {
    const b = block(9, 20, 6);
    const same = continueFrom(b, 1800, b.geometry);
    for (const t of [0, 60, 1800])
      expect(
        Math.abs(
          same.temperatureAt(t, { xM: 0.05, yM: 0.1, zM: 0.03 }) -
            b.temperatureAt(1800 + t, { xM: 0.05, yM: 0.1, zM: 0.03 }),
        ),
      ).toBeLessThan(0.01);
    // With insulated walls a block is its depth slab; a move to a colder ambient must agree with the
    // slab's own continuation.
    const flat = block(0, 20, 6);
    const slab = solveConduction({ shape: "slab", depthM: dims.depthM, bottomH: 20, topH: 6 }, food, 60, 3);
    const iceBlock = continueFrom(flat, 1200, { shape: "block", ...dims, wallH: 0, bottomH: 400, topH: 6 }, 0);
    const iceSlab = continueFrom(slab, 1200, { shape: "slab", depthM: dims.depthM, bottomH: 400, topH: 6 }, 0);
    const moved = continueFrom(b, 900, { shape: "block", ...dims, wallH: 9, bottomH: 400, topH: 6 }, 0);
    for (const t of [0, 600, 2400]) {
      // Brute force: a 20³ grid, then a 40³ grid over the two cells around its best point.
      const at = (u: number[]) =>
        moved.temperatureAt(t, { xM: dims.lengthM * u[0], yM: dims.widthM * u[1], zM: dims.depthM * u[2] });
      let best = [0, 0, 0];
      let brute = -Infinity;
      const search = (centre: number[], half: number, n: number) => {
        const c0 = [...centre];
        for (let i = 0; i <= n; i++)
          for (let j = 0; j <= n; j++)
            for (let k = 0; k <= n; k++) {
              const u = [i, j, k].map((m, a) => Math.min(1, Math.max(0, c0[a] - half + (2 * half * m) / n)));
              const v = at(u);
              if (v > brute) [brute, best] = [v, u];
            }
      };
      search([0.5, 0.5, 0.5], 0.5, 20);
      search(best, 0.05, 40);
      expect(moved.warmestC(t)).toBeGreaterThanOrEqual(brute - 1e-6);
      expect(moved.warmestC(t)).toBeLessThan(brute + 1e-3);
    }
    for (const t of [0, 30, 600, 3600]) {
      expect(Math.abs(iceBlock.centerC(t) - iceSlab.centerC(t))).toBeLessThan(0.01);
      expect(Math.abs(iceBlock.meanC(t) - iceSlab.meanC(t))).toBeLessThan(0.01);
      expect(Math.abs(iceBlock.warmestC(t) - iceSlab.warmestC(t))).toBeLessThan(0.01);
    }
  });
});

describe("continueFrom", () => {
  const L = 0.065;
  const fridge = solveConduction({ shape: "slab", depthM: L, bottomH: 6, topH: 9 }, food, 70, 3);

  it("continuing with nothing changed reproduces the original", () => {
    const again = continueFrom(fridge, 2400, fridge.geometry);
    for (const t of [0, 1, 30, 600, 7200])
      for (const x of [0, 0.01, 0.03, L])
        expect(Math.abs(again.temperatureAt(t, x) - fridge.temperatureAt(2400 + t, x))).toBeLessThan(0.01);
    expect(again.reachTime(21, "warmest")! + 2400).toBeCloseTo(fridge.reachTime(21, "warmest")!, -1);
  });

  test.prop(
    [
      fc.double({ min: 60, max: 4 * 3600, noNaN: true }),
      fc.oneof(fc.constant<SurfaceH>("inf"), logUniform(20, 2000)),
      fc.oneof(fc.constant<SurfaceH>(0), logUniform(2, 50)),
      fc.double({ min: -1, max: 8, noNaN: true }),
      logUniform(1, 4 * 3600),
    ],
    { numRuns: 15 },
  )(
    "the closed-form projection of a continued solution matches a quadrature of its profile, from the first second",
    (tSwitch, bottomH, topH, ambientC, t) => {
      const geometry = { shape: "slab" as const, depthM: L, bottomH, topH };
      const continued = continueFrom(fridge, tSwitch, geometry, ambientC);
      const byQuadrature = solveConduction(geometry, food, (x) => fridge.temperatureAt(tSwitch, x), ambientC, {
        preferSeries: true,
      });
      for (let i = 0; i <= 20; i++) {
        const x = (L * i) / 20;
        expect(Math.abs(continued.temperatureAt(t, x) - byQuadrature.temperatureAt(t, x))).toBeLessThan(0.01);
      }
      expect(Math.abs(continued.meanC(t) - byQuadrature.meanC(t))).toBeLessThan(0.01);
    },
  );

  it("a move to an ice bath starts from the profile at the moment of the move and cools faster", () => {
    const ice = continueFrom(fridge, 2400, { shape: "slab", depthM: L, bottomH: 600, topH: 9 }, 0);
    expect(ice.centerC(0)).toBeCloseTo(fridge.centerC(2400), 10);
    expect(ice.warmestC(0)).toBeCloseTo(fridge.warmestC(2400), 8);
    expect(ice.meanC(0)).toBeCloseTo(fridge.meanC(2400), 8);
    expect(ice.reachTime(21, "warmest")! + 2400).toBeLessThan(fridge.reachTime(21, "warmest")!);
    expect(() => continueFrom(fridge, 2400, { shape: "slab", depthM: 0.1, bottomH: 600, topH: 9 })).toThrow(RangeError);
  });
});

describe("properties over the whole input range", () => {
  const biot = fc.oneof(
    { weight: 1, arbitrary: fc.constantFrom(0, Infinity) },
    { weight: 5, arbitrary: logUniform(1e-4, 1e4) },
  );
  const toH = (bi: number, lengthM: number, k: number): SurfaceH => (bi === Infinity ? "inf" : (bi * k) / lengthM);
  const body = fc
    .record({
      shape: fc.constantFrom("slab", "slab", "cylinder", "sphere", "block"),
      lengthM: logUniform(0.005, 0.2),
      b0: biot,
      b1: biot,
      b2: biot,
      k: fc.double({ min: 0.3, max: 0.6, noNaN: true }),
      alpha: fc.double({ min: 1.1e-7, max: 1.6e-7, noNaN: true }),
      initialC: fc.double({ min: 20, max: 90, noNaN: true }),
      ambientC: fc.double({ min: -20, max: 10, noNaN: true }),
    })
    .map((c) => {
      const { lengthM: L, k } = c;
      let geometry: Geometry;
      if (c.shape === "slab") geometry = { shape: "slab", depthM: L, bottomH: toH(c.b0, L, k), topH: toH(c.b1, L, k) };
      else if (c.shape === "block")
        geometry = {
          shape: "block",
          lengthM: 6 * L,
          widthM: 4 * L,
          depthM: L,
          wallH: toH(c.b2, 4 * L, k),
          bottomH: toH(c.b0, L, k),
          topH: toH(c.b1, L, k),
        };
      else geometry = { shape: c.shape, radiusM: L, h: toH(c.b0, L, k) };
      return { ...c, geometry };
    });
  const times = fc
    .array(logUniform(1, 48 * 3600), { minLength: 2, maxLength: 2 })
    .map((ts) => ts.sort((a, b) => a - b));

  test.prop([body, times], { numRuns: 40 })(
    "no NaN; temperatures stay between ambient and initial; the centre never warms; the mean sits inside the profile",
    ({ geometry, k, alpha, initialC, ambientC }, [t1, t2]) => {
      const solution = solveConduction(geometry, { k, alpha }, initialC, ambientC);
      for (const t of [t1, t2]) {
        const p = solution.profile(t, 21);
        const values = [...p.c, solution.centerC(t), solution.meanC(t), solution.warmestC(t)];
        for (const v of values) {
          expect(Number.isFinite(v)).toBe(true);
          expect(v).toBeGreaterThanOrEqual(ambientC - 0.01);
          expect(v).toBeLessThanOrEqual(initialC + 0.01);
        }
        // A block's profile is its vertical centre line, warmer than the walls: bound it by a corner.
        const coolest =
          geometry.shape === "block" ? solution.temperatureAt(t, { xM: 0, yM: 0, zM: 0 }) : Math.min(...p.c);
        expect(solution.meanC(t)).toBeGreaterThanOrEqual(Math.min(coolest, ...p.c) - 0.01);
        expect(solution.meanC(t)).toBeLessThanOrEqual(solution.warmestC(t) + 0.01);
        expect(solution.warmestC(t)).toBeGreaterThanOrEqual(Math.max(...p.c) - 0.01);
      }
      expect(solution.centerC(t2)).toBeLessThanOrEqual(solution.centerC(t1) + 0.02);
    },
  );
});

describe("speed", () => {
  it("a series evaluation for a 50 mm pan past the first minutes costs well under a microsecond", () => {
    const pan = solveConduction({ shape: "slab", depthM: 0.05, bottomH: 0, topH: 10 }, food, 60, 3);
    let sink = 0;
    const run = (n: number) => {
      for (let i = 0; i < n; i++)
        sink += pan.centerC(600 + (i % 5000) * 1.3) + pan.temperatureAt(900 + (i % 5000) * 1.1, 0.02);
    };
    run(20000);
    const t0 = performance.now();
    run(100000);
    const perEvalUs = ((performance.now() - t0) * 1000) / 200000;
    expect(sink).toBeGreaterThan(0);
    expect(perEvalUs).toBeLessThan(1);
  });
});
