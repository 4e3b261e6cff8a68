import { fc, test } from "@fast-check/vitest";
import stdlibJ0 from "@stdlib/math-base-special-besselj0";
import stdlibJ1 from "@stdlib/math-base-special-besselj1";
import { describe, expect, it } from "vitest";
import table from "../../reference/incropera-table-5-1.json";
import { besselJ0, besselJ1 } from "~/lib/engine/bessel";
import {
  besselJ0Zero,
  besselJ1Zero,
  cylinderCoefficient,
  cylinderRoot,
  findRootBrent,
  findRootNewton,
  nextSlabRoot,
  oneTermConstants,
  planeWallRoot,
  slabRoot,
  sphereCoefficient,
  sphereRoot,
} from "~/lib/engine/roots";

const PI = Math.PI;
const logUniform = (lo: number, hi: number) =>
  fc.double({ min: Math.log(lo), max: Math.log(hi), noNaN: true }).map(Math.exp);
const faceBiot = fc.oneof(
  { weight: 1, arbitrary: fc.constantFrom(0, Infinity) },
  { weight: 4, arbitrary: logUniform(1e-4, 1e4) },
);

describe("Bessel functions J0 and J1", () => {
  it("match the @stdlib implementations to 1e-12 relative (1e-15 absolute near zeros)", () => {
    const xs: number[] = [];
    for (let i = 0; i <= 20000; i++) xs.push(i * 0.003 + (i % 7) * 1e-6);
    for (let i = 0; i <= 2000; i++) xs.push(60 + i * 5.3, 1e4 + i * 17.1);
    for (const x of xs) {
      for (const [ours, ref] of [
        [besselJ0(x), stdlibJ0(x)],
        [besselJ1(x), stdlibJ1(x)],
      ]) {
        const err = Math.abs(ours - ref);
        if (Math.abs(ref) > 1e-3) expect(err / Math.abs(ref)).toBeLessThan(1e-12);
        else expect(err).toBeLessThan(2e-15);
      }
    }
  });

  it("are even and odd, and take the tabulated values at x = 1 and x = 10", () => {
    expect(besselJ0(-3.7)).toBe(besselJ0(3.7));
    expect(besselJ1(-3.7)).toBe(-besselJ1(3.7));
    expect(besselJ0(0)).toBe(1);
    expect(besselJ1(0)).toBe(0);
    // Abramowitz & Stegun, Table 9.1 (memory): J0(1), J1(1), J0(10), J1(10)
    expect(besselJ0(1)).toBeCloseTo(0.7651976865579666, 14);
    expect(besselJ1(1)).toBeCloseTo(0.4400505857449335, 14);
    expect(besselJ0(10)).toBeCloseTo(-0.2459357644513483, 14);
    expect(besselJ1(10)).toBeCloseTo(0.04347274616886144, 14);
  });

  it("have zeros at the tabulated places and the zeros interlace", () => {
    // Abramowitz & Stegun, Table 9.5 (memory): j0,1, j0,2, j1,1, j1,2
    expect(besselJ0Zero(1)).toBeCloseTo(2.404825557695773, 13);
    expect(besselJ0Zero(2)).toBeCloseTo(5.520078110286311, 13);
    expect(besselJ1Zero(1)).toBeCloseTo(3.831705970207512, 13);
    expect(besselJ1Zero(2)).toBeCloseTo(7.015586669815619, 13);
    for (let n = 1; n <= 500; n++) {
      const z0 = besselJ0Zero(n);
      const z1 = besselJ1Zero(n);
      expect(Math.abs(stdlibJ0(z0))).toBeLessThan(1e-14);
      expect(Math.abs(stdlibJ1(z1))).toBeLessThan(1e-14);
      expect(z0).toBeGreaterThan(besselJ1Zero(n - 1));
      expect(z1).toBeGreaterThan(z0);
    }
  });
});

describe("plane wall roots of ζ tan ζ = Bi", () => {
  it.each(table.planeWall)("Incropera & DeWitt, Table 5.1, Bi = $bi: ζ₁ = $zeta1, C₁ = $c1", ({ bi, zeta1, c1 }) => {
    const r = oneTermConstants("plane-wall", bi);
    expect(r.zeta1).toBeCloseTo(zeta1, 4);
    expect(r.c1).toBeCloseTo(c1, 4);
  });

  it("tend to ζ₁ = π/2 and C₁ = 4/π as Bi → ∞ (Incropera & DeWitt, Table 5.1, Bi = ∞)", () => {
    expect(oneTermConstants("plane-wall", Infinity).zeta1).toBe(PI / 2);
    expect(oneTermConstants("plane-wall", Infinity).c1).toBeCloseTo(4 / PI, 15);
    const big = oneTermConstants("plane-wall", 1e8);
    expect(big.zeta1).toBeCloseTo(PI / 2, 7);
    expect(big.c1).toBeCloseTo(4 / PI, 7);
  });

  it("tend to ζ₁² = Bi as Bi → 0 (lumped capacitance, Incropera & DeWitt §5.2)", () => {
    const z = planeWallRoot(1e-4);
    expect(z * z).toBeCloseTo(1e-4 * (1 - 1e-4 / 3), 12);
  });

  test.prop([logUniform(1e-4, 1e4), fc.integer({ min: 1, max: 4000 })], { numRuns: 200 })(
    "the n-th root lies in ((n−1)π, (n−½)π) and satisfies ζ sin ζ = Bi cos ζ",
    (bi, n) => {
      const z = planeWallRoot(bi, n);
      expect(z).toBeGreaterThan((n - 1) * PI);
      expect(z).toBeLessThan((n - 0.5) * PI);
      const residual = z * Math.sin(z) - bi * Math.cos(z);
      expect(Math.abs(residual)).toBeLessThan(1e-12 * (1 + bi + z) * Math.max(1, z));
    },
  );
});

describe("slab roots with two different faces", () => {
  // Özışık, Heat Conduction, ch. 2: tan ζ = ζ(B0 + B1)/(ζ² − B0·B1), multiplied through by
  // p0·p1 with Bi = q/p, so that insulated (q = 0) and fixed (p = 0) faces need no special case.
  const weights = (b: number): [number, number] => (b === Infinity ? [0, 1] : [1 / (1 + b), b / (1 + b)]);
  const ozisik = (z: number, b0: number, b1: number) => {
    const [p0, q0] = weights(b0);
    const [p1, q1] = weights(b1);
    return (z * z * p0 * p1 - q0 * q1) * Math.sin(z) - z * (q0 * p1 + q1 * p0) * Math.cos(z);
  };

  test.prop([faceBiot, faceBiot, fc.integer({ min: 1, max: 3000 })], { numRuns: 300 })(
    "every root sits alone in [(n−1)π, nπ], rises with n and satisfies Özışık's condition",
    (b0, b1, n) => {
      const z = slabRoot(b0, b1, n);
      expect(z).toBeGreaterThanOrEqual((n - 1) * PI);
      expect(z).toBeLessThanOrEqual(n * PI * (1 + 1e-15));
      if (n > 1) expect(z).toBeGreaterThan(slabRoot(b0, b1, n - 1));
      // A root good to ~1e-14 relative leaves a residual of order ζ³·1e-14 (the left side grows like ζ²).
      expect(Math.abs(ozisik(z, b0, b1))).toBeLessThan(1e-14 * (1 + z * z) * Math.max(1, z));
    },
  );

  it("covers the nine insulated / convective / fixed combinations", () => {
    // Closed forms: both insulated (n−1)π; both fixed nπ; insulated and fixed (n−½)π.
    expect(slabRoot(0, 0, 1)).toBe(0);
    expect(slabRoot(0, 0, 3)).toBeCloseTo(2 * PI, 14);
    expect(slabRoot(Infinity, Infinity, 3)).toBeCloseTo(3 * PI, 14);
    expect(slabRoot(0, Infinity, 2)).toBeCloseTo(1.5 * PI, 14);
    expect(slabRoot(Infinity, 0, 2)).toBeCloseTo(1.5 * PI, 14);
    for (const b0 of [0, 2.5, Infinity])
      for (const b1 of [0, 2.5, Infinity]) {
        for (let n = 1; n <= 5; n++) expect(Math.abs(ozisik(slabRoot(b0, b1, n), b0, b1))).toBeLessThan(1e-13);
        expect(slabRoot(b0, b1, 2)).toBeCloseTo(slabRoot(b1, b0, 2), 13);
      }
  });

  it("from the root before it (one predictor step, one arctangent for both faces) agree with a plain bracketed search to 1e-14, n to 200, Biot 1e-4 to 1e4", () => {
    // The reference: the phase condition ζ + atan(ζ/B0) + atan(ζ/B1) = nπ with one arctangent per
    // face, by Brent's method in [(n−1)π, nπ] to rounding (no starting guess, no derivative).
    const biots = [0, Infinity];
    for (let e = -4; e <= 4; e += 0.5) biots.push(10 ** e);
    biots.push(1, 1 + 2e-10); // the bench's nearly alike faces
    let worst = 0;
    for (const b0 of biots)
      for (const b1 of biots) {
        const phase = (n: number) => (z: number) =>
          z - n * PI + (b0 === 0 ? PI / 2 : b0 === Infinity ? 0 : Math.atan2(z, b0)) + (b1 === 0 ? PI / 2 : b1 === Infinity ? 0 : Math.atan2(z, b1));
        let z = slabRoot(b0, b1, 1);
        for (let n = 1; n <= 200; n++) {
          if (n > 1) z = nextSlabRoot(b0, b1, n, z);
          const lo = (n - 1) * PI;
          const f = phase(n);
          const ref = f(lo) >= 0 ? lo : findRootBrent(f, lo, n * PI, 0);
          const err = Math.abs(z - ref) / Math.max(ref, 1e-300);
          worst = Math.max(worst, ref === 0 ? Math.abs(z) : err);
          expect(slabRoot(b0, b1, n)).toBeCloseTo(z, 12);
        }
      }
    expect(worst).toBeLessThan(1e-14);
  });

  test.prop([logUniform(1e-4, 1e4), fc.integer({ min: 1, max: 500 })], { numRuns: 100 })(
    "a wall cooled on both faces has the half-thickness roots: ζ(2m−1) on the full depth = 2ζm",
    (biHalf, m) => {
      expect(slabRoot(2 * biHalf, 2 * biHalf, 2 * m - 1)).toBeCloseTo(2 * planeWallRoot(biHalf, m), 10);
    },
  );
});

// Independent roots from the @stdlib Bessel functions by plain bisection.
function bisect(f: (x: number) => number, a: number, b: number): number {
  let fa = f(a);
  for (let i = 0; i < 200 && b - a > 1e-15 * b; i++) {
    const m = 0.5 * (a + b);
    const fm = f(m);
    if (Math.sign(fm) === Math.sign(fa)) {
      a = m;
      fa = fm;
    } else b = m;
  }
  return 0.5 * (a + b);
}

describe("cylinder and sphere roots", () => {
  // Incropera & DeWitt, Table 5.1, cylinder and sphere columns (memory; each is also recomputed from
  // the @stdlib Bessel functions below).
  const cylinder = [
    { bi: 0.01, zeta1: 0.1412, c1: 1.0025 },
    { bi: 0.1, zeta1: 0.4417, c1: 1.0246 },
    { bi: 1, zeta1: 1.2558, c1: 1.2071 },
    { bi: 10, zeta1: 2.1795, c1: 1.5677 },
    { bi: 100, zeta1: 2.3809, c1: 1.6015 },
  ];
  const sphere = [
    { bi: 0.01, zeta1: 0.173, c1: 1.003 },
    { bi: 0.1, zeta1: 0.5423, c1: 1.0298 },
    { bi: 1, zeta1: 1.5708, c1: 1.2732 },
    { bi: 10, zeta1: 2.8363, c1: 1.9249 },
    { bi: 100, zeta1: 3.1102, c1: 1.999 },
  ];

  it.each(cylinder)("cylinder, Bi = $bi: ζ₁ = $zeta1, C₁ = $c1 (Table 5.1, memory)", ({ bi, zeta1, c1 }) => {
    const r = oneTermConstants("cylinder", bi);
    expect(r.zeta1).toBeCloseTo(zeta1, 4);
    expect(r.c1).toBeCloseTo(c1, 4);
    const independent = bisect((z) => z * stdlibJ1(z) - bi * stdlibJ0(z), 1e-12, 2.404825557695773);
    expect(r.zeta1).toBeCloseTo(independent, 12);
    const j0 = stdlibJ0(independent);
    const j1 = stdlibJ1(independent);
    expect(r.c1).toBeCloseTo(((2 / independent) * j1) / (j0 * j0 + j1 * j1), 11);
  });

  it.each(sphere)("sphere, Bi = $bi: ζ₁ = $zeta1, C₁ = $c1 (Table 5.1, memory)", ({ bi, zeta1, c1 }) => {
    const r = oneTermConstants("sphere", bi);
    expect(r.zeta1).toBeCloseTo(zeta1, 4);
    expect(r.c1).toBeCloseTo(c1, 4);
    const independent = bisect((z) => 1 - z / Math.tan(z) - bi, 1e-6, PI - 1e-12);
    expect(r.zeta1).toBeCloseTo(independent, 12);
  });

  it("reach the fixed-surface limits ζ₁ = j0,1, C₁ = 2/(j0,1·J1(j0,1)) and ζ₁ = π, C₁ = 2", () => {
    const j01 = 2.404825557695773; // Abramowitz & Stegun, Table 9.5 (memory)
    expect(oneTermConstants("cylinder", Infinity).zeta1).toBeCloseTo(j01, 14);
    expect(oneTermConstants("cylinder", Infinity).c1).toBeCloseTo(2 / (j01 * stdlibJ1(j01)), 13);
    // Incropera & DeWitt, Table 5.1, Bi = ∞ (memory) prints 2.4050 and 1.6018, a little off the exact
    // limit 1.60197: close to the table, exact against the closed form.
    expect(oneTermConstants("cylinder", Infinity).c1).toBeCloseTo(1.6018, 3);
    expect(oneTermConstants("sphere", Infinity).zeta1).toBeCloseTo(PI, 14);
    expect(oneTermConstants("sphere", Infinity).c1).toBeCloseTo(2, 14);
  });

  test.prop([logUniform(1e-4, 1e4), fc.integer({ min: 1, max: 1500 })], { numRuns: 150 })(
    "cylinder: the n-th root satisfies ζ J1(ζ) = Bi J0(ζ) between j1,n−1 and j0,n",
    (bi, n) => {
      const z = cylinderRoot(bi, n);
      expect(z).toBeGreaterThanOrEqual(besselJ1Zero(n - 1));
      expect(z).toBeLessThanOrEqual(besselJ0Zero(n));
      const residual = z * stdlibJ1(z) - bi * stdlibJ0(z);
      expect(Math.abs(residual)).toBeLessThan(1e-13 * (1 + bi + z) * Math.sqrt(1 + z));
    },
  );

  test.prop([logUniform(1e-4, 1e4), fc.integer({ min: 1, max: 1500 })], { numRuns: 150 })(
    "sphere: the n-th root satisfies (1 − Bi) sin ζ = ζ cos ζ in ((n−1)π, nπ)",
    (bi, n) => {
      const z = sphereRoot(bi, n);
      expect(z).toBeGreaterThan((n - 1) * PI);
      expect(z).toBeLessThan(n * PI);
      const residual = (1 - bi) * Math.sin(z) - z * Math.cos(z);
      expect(Math.abs(residual)).toBeLessThan(1e-12 * (1 + bi + z) * Math.max(1, z));
    },
  );

  test.prop([fc.oneof(logUniform(1e-4, 1e4), fc.constant(Infinity))], { numRuns: 40 })(
    "series coefficients stay within ±2, the amplitude bound the engine's term count relies on",
    (bi) => {
      for (let n = 1; n <= 300; n++) {
        expect(Math.abs(cylinderCoefficient(cylinderRoot(bi, n)))).toBeLessThanOrEqual(2);
        expect(Math.abs(sphereCoefficient(sphereRoot(bi, n)))).toBeLessThanOrEqual(2 + 1e-12);
      }
    },
  );
});

describe("root finders", () => {
  it("Brent's method finds cos x = x to the requested tolerance", () => {
    // Dottie number, 0.7390851332151607 (memory)
    expect(findRootBrent((x) => Math.cos(x) - x, 0, 1, 1e-14)).toBeCloseTo(0.7390851332151607, 13);
    expect(findRootBrent((x) => x * x * x - 2, 0, 2, 0.5)).toBeGreaterThan(Math.cbrt(2) - 0.5);
  });

  it("safeguarded Newton stays inside its bracket when a plain Newton step would leave it", () => {
    // atan has Newton steps that diverge from |x| > 1.39; the bracket keeps it on course.
    expect(findRootNewton(Math.atan, (x) => 1 / (1 + x * x), -1, 20, 15)).toBeCloseTo(0, 14);
    expect(() => findRootNewton(Math.exp, Math.exp, 0, 1)).toThrow(RangeError);
  });
});
