// Eigenvalues of transient conduction in a slab, an infinite cylinder and a sphere, and the two
// root finders they (and the time searches in conduction.ts) share. Every eigenvalue is found inside
// a bracket known to hold exactly one root; Newton steps are taken only while they stay inside it.
//
// Biot numbers here are on the length the caller passes (full depth for a slab, radius for the
// curved bodies); Infinity means a face held at the ambient temperature, 0 an insulated face.

import { besselJ0, besselJ1 } from "./bessel";

const PI = Math.PI;
const HALF_PI = PI / 2;

/**
 * Root of f in [lo, hi] (f(lo), f(hi) of opposite signs or zero) by Newton's method, falling back to
 * bisection whenever a step would leave the shrinking bracket or fails to halve the error.
 * Converges to a few ulp of the root.
 */
export function findRootNewton(
  f: (x: number) => number,
  df: (x: number) => number,
  lo: number,
  hi: number,
  guess = 0.5 * (lo + hi),
): number {
  let flo = f(lo);
  const fhi = f(hi);
  if (flo === 0) return lo;
  if (fhi === 0) return hi;
  if (flo * fhi > 0 || Number.isNaN(flo * fhi)) {
    throw new RangeError(`no sign change in [${lo}, ${hi}]`);
  }
  // Keep a where f < 0 and b where f > 0.
  let a = lo;
  let b = hi;
  if (flo > 0) {
    a = hi;
    b = lo;
    flo = fhi;
  }
  let x = guess > Math.min(lo, hi) && guess < Math.max(lo, hi) ? guess : 0.5 * (lo + hi);
  let dxOld = Math.abs(hi - lo);
  let dx = dxOld;
  let fx = f(x);
  let dfx = df(x);
  for (let i = 0; i < 200; i++) {
    if (fx === 0) return x;
    if (fx < 0) a = x;
    else b = x;
    const newton = x - fx / dfx;
    const outside = !(newton > Math.min(a, b) && newton < Math.max(a, b));
    if (outside || Math.abs(2 * fx) > Math.abs(dxOld * dfx)) {
      dxOld = dx;
      dx = 0.5 * (b - a);
      x = a + dx;
      if (x === a || x === b) return x;
    } else {
      dxOld = dx;
      dx = newton - x;
      if (newton === x) return x;
      x = newton;
    }
    if (Math.abs(dx) <= 2e-16 * Math.abs(x) || Math.abs(b - a) <= 4e-16 * Math.abs(x)) return x;
    fx = f(x);
    dfx = df(x);
  }
  return x;
}

/**
 * Root of f in [a, b] (f(a), f(b) of opposite signs or zero) by Brent's method (inverse quadratic
 * interpolation, secant and bisection), to within xTol.
 */
export function findRootBrent(f: (x: number) => number, a: number, b: number, xTol = 1e-12): number {
  let fa = f(a);
  let fb = f(b);
  if (fa === 0) return a;
  if (fb === 0) return b;
  if (fa * fb > 0) throw new RangeError(`no sign change in [${a}, ${b}]`);
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let i = 0; i < 200; i++) {
    if (fb * fc > 0) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const tol = 2 * Number.EPSILON * Math.abs(b) + 0.5 * xTol;
    const m = 0.5 * (c - b);
    if (Math.abs(m) <= tol || fb === 0) return b;
    if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * m * s;
        q = 1 - s;
      } else {
        const qa = fa / fc;
        const r = fb / fc;
        p = s * (2 * m * qa * (qa - r) - (b - a) * (r - 1));
        q = (qa - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      if (2 * p < Math.min(3 * m * q - Math.abs(tol * q), Math.abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = m;
        e = m;
      }
    } else {
      d = m;
      e = m;
    }
    a = b;
    fa = fb;
    b += Math.abs(d) > tol ? d : m > 0 ? tol : -tol;
    fb = f(b);
  }
  return b;
}

/** Phase φ = atan(ζ/B) of a face with Biot number B (π/2 insulated, 0 fixed temperature). */
export function facePhase(zeta: number, bi: number): number {
  if (bi === 0) return HALF_PI;
  if (bi === Infinity) return 0;
  return Math.atan2(zeta, bi);
}

function phaseSlope(zeta: number, bi: number): number {
  if (bi === 0 || bi === Infinity) return 0;
  return bi / (bi * bi + zeta * zeta);
}

/**
 * n-th eigenvalue ζ (n ≥ 1) of a slab 0 ≤ ξ ≤ 1 with face Biot numbers b0 (ξ = 0) and b1 (ξ = 1).
 * Eigenfunction X = sin(ζξ + φ0), φi = atan(ζ/bi); the eigen-condition
 *   tan ζ = ζ(b0 + b1)/(ζ² − b0·b1)   (Özışık, Heat Conduction, ch. 2)
 * is written in its phase form ζ + φ0(ζ) + φ1(ζ) = nπ, whose left side increases strictly, so the
 * n-th root is the only one in [(n−1)π, nπ]. Both faces insulated: ζ = (n−1)π (n = 1 is the uniform
 * mode ζ = 0).
 */
export function slabRoot(b0: number, b1: number, n: number, guess?: number): number {
  if (b0 === 0 && b1 === 0) return (n - 1) * PI;
  // Safeguarded Newton written out (no closures): this runs once per term of every new solution.
  const target = n * PI;
  let a = (n - 1) * PI; // F(a) ≤ 0
  let b = target; // F(b) ≥ 0
  let z = guess !== undefined && guess > a && guess < b ? guess : slabGuess(b0, b1, n);
  if (!(z > a && z < b)) z = 0.5 * (a + b);
  for (let i = 0; i < 100; i++) {
    const f = z + facePhase(z, b0) + facePhase(z, b1) - target;
    if (f === 0) return z;
    if (f < 0) a = z;
    else b = z;
    const step = f / (1 + phaseSlope(z, b0) + phaseSlope(z, b1));
    let next = z - step;
    if (!(next > a && next < b)) next = 0.5 * (a + b);
    if (next === z || Math.abs(next - z) <= 2e-16 * z || b - a <= 4e-16 * b) return next;
    z = next;
  }
  return z;
}

function slabGuess(b0: number, b1: number, n: number): number {
  // One fixed-point step of ζ = nπ − φ0(ζ) − φ1(ζ) from the middle of the bracket.
  const mid = (n - 0.5) * PI;
  return n * PI - facePhase(mid, b0) - facePhase(mid, b1);
}

/**
 * n-th root of ζ tan ζ = Bi for a plane wall of half-thickness L cooled on both faces, Bi = hL/k
 * (Incropera & DeWitt §5.5.1, Table 5.1). It lies in ((n−1)π, (n−½)π). Same as a slab of
 * thickness L insulated on one face.
 */
export function planeWallRoot(bi: number, n = 1): number {
  return slabRoot(0, bi, n);
}

/**
 * n-th root of 1 − ζ cot ζ = Bi for a sphere, Bi = hR/k (Incropera & DeWitt §5.6.2), found in
 * [(n−1)π, nπ] as the root of (sin ζ − ζ cos ζ)/ζ − Bi·sin ζ/ζ, which is free of poles.
 */
export function sphereRoot(bi: number, n = 1): number {
  if (bi === 0) return n === 1 ? 0 : sphereRoot0(n);
  if (bi === Infinity) return n * PI;
  const f = (z: number) => sinMinusXCosOverX(z) - bi * sinc(z);
  const df = (z: number) => {
    if (z === 0) return 0;
    const s3 = sinMinusXCos(z);
    return Math.sin(z) - ((1 - bi) * s3) / (z * z);
  };
  return findRootNewton(f, df, (n - 1) * PI, n * PI);
}

// Insulated sphere: tan ζ = ζ, n-th non-zero root in (nπ − π, nπ − π/2) shifted by one.
function sphereRoot0(n: number): number {
  const m = n - 1;
  const f = (z: number) => Math.sin(z) - z * Math.cos(z);
  const df = (z: number) => z * Math.sin(z);
  return findRootNewton(f, df, m * PI + 1e-9, m * PI + HALF_PI - 1e-12);
}

/** sin x − x cos x, accurate for small x too (series x³/3 − x⁵/30 + … below 0.5). */
export function sinMinusXCos(x: number): number {
  if (Math.abs(x) < 0.5) {
    const x2 = x * x;
    // Σ (−1)^k x^(2k+3) · 2(k+1) / (2k+3)!
    let term = (x2 * x) / 3;
    let sum = term;
    for (let k = 1; k < 12; k++) {
      term *= (-x2 * (k + 1)) / (k * (2 * k + 2) * (2 * k + 3));
      sum += term;
    }
    return sum;
  }
  return Math.sin(x) - x * Math.cos(x);
}

function sinMinusXCosOverX(x: number): number {
  return x === 0 ? 0 : sinMinusXCos(x) / x;
}

function sinc(x: number): number {
  return x === 0 ? 1 : Math.sin(x) / x;
}

// Zeros of J0 and J1 are universal: computed once, kept for every cylinder.
const j0Zeros: number[] = [];
const j1Zeros: number[] = [0];

/** n-th positive zero of J0 (n ≥ 1), just above (n − ¼)π (A&S 9.5.12). */
export function besselJ0Zero(n: number): number {
  while (j0Zeros.length < n) {
    const beta = (j0Zeros.length + 0.75) * PI;
    j0Zeros.push(findRootNewton(besselJ0, (x) => -besselJ1(x), beta, beta + 0.1, beta + 1 / (8 * beta)));
  }
  return j0Zeros[n - 1];
}

/** n-th positive zero of J1 (n ≥ 1; n = 0 gives 0), just below (n + ¼)π (A&S 9.5.12). */
export function besselJ1Zero(n: number): number {
  while (j1Zeros.length <= n) {
    const beta = (j1Zeros.length + 0.25) * PI;
    j1Zeros.push(
      findRootNewton(besselJ1, (x) => besselJ0(x) - besselJ1(x) / x, beta - 0.15, beta, beta - 3 / (8 * beta)),
    );
  }
  return j1Zeros[n];
}

/**
 * n-th root of ζ J1(ζ)/J0(ζ) = Bi for an infinite cylinder, Bi = hR/k (Incropera & DeWitt §5.6.1),
 * solved as ζJ1 − Bi·J0 = 0 between the (n−1)-th zero of J1 and the n-th zero of J0, where ζJ1/J0
 * rises monotonically from 0 to +∞ (its derivative is ζ(J0² + J1²)/J0²).
 */
export function cylinderRoot(bi: number, n = 1): number {
  if (bi === Infinity) return besselJ0Zero(n);
  if (bi === 0) return besselJ1Zero(n - 1);
  const f = (z: number) => z * besselJ1(z) - bi * besselJ0(z);
  const df = (z: number) => z * besselJ0(z) + bi * besselJ1(z);
  return findRootNewton(f, df, besselJ1Zero(n - 1), besselJ0Zero(n));
}

/** First root and one-term coefficient C₁ (Incropera & DeWitt, Table 5.1, §§5.5–5.6). */
export function oneTermConstants(
  shape: "plane-wall" | "cylinder" | "sphere",
  bi: number,
): { zeta1: number; c1: number } {
  if (shape === "plane-wall") {
    const z = planeWallRoot(bi, 1);
    // C₁ = 4 sin ζ₁ / (2ζ₁ + sin 2ζ₁)  (Incropera & DeWitt, Table 5.1)
    return { zeta1: z, c1: (4 * Math.sin(z)) / (2 * z + Math.sin(2 * z)) };
  }
  if (shape === "cylinder") {
    const z = cylinderRoot(bi, 1);
    return { zeta1: z, c1: cylinderCoefficient(z) };
  }
  const z = sphereRoot(bi, 1);
  return { zeta1: z, c1: sphereCoefficient(z) };
}

/** Cₙ = (2/ζ) J1(ζ) / (J0²(ζ) + J1²(ζ))  (Incropera & DeWitt §5.6.1). */
export function cylinderCoefficient(zeta: number): number {
  if (zeta === 0) return 1;
  const j0 = besselJ0(zeta);
  const j1 = besselJ1(zeta);
  return ((2 / zeta) * j1) / (j0 * j0 + j1 * j1);
}

/** Cₙ = 4 (sin ζ − ζ cos ζ) / (2ζ − sin 2ζ)  (Incropera & DeWitt §5.6.2). */
export function sphereCoefficient(zeta: number): number {
  if (zeta === 0) return 1;
  return (4 * sinMinusXCos(zeta)) / xMinusSin(2 * zeta);
}

/** x − sin x, accurate for small x (series x³/6 − x⁵/120 + … below 1). */
export function xMinusSin(x: number): number {
  if (Math.abs(x) < 1) {
    const x2 = x * x;
    let term = (x2 * x) / 6;
    let sum = term;
    for (let k = 1; k < 14; k++) {
      term *= -x2 / ((2 * k + 2) * (2 * k + 3));
      sum += term;
    }
    return sum;
  }
  return x - Math.sin(x);
}
