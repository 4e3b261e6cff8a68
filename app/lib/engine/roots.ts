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
export function findRootBrent(
  f: (x: number) => number,
  a: number,
  b: number,
  xTol = 1e-12,
  /** f(a) and f(b) when the caller already has them. */
  known?: { fa: number; fb: number },
): number {
  let fa = known ? known.fa : f(a);
  let fb = known ? known.fb : f(b);
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

/**
 * n-th eigenvalue ζ (n ≥ 1) of a slab 0 ≤ ξ ≤ 1 with face Biot numbers b0 (ξ = 0) and b1 (ξ = 1).
 * Eigenfunction X = sin(ζξ + φ0), φi = atan(ζ/bi); the eigen-condition
 *   tan ζ = ζ(b0 + b1)/(ζ² − b0·b1)   (Özışık, Heat Conduction, ch. 2)
 * is written in its phase form ζ + φ0(ζ) + φ1(ζ) = nπ, whose left side increases strictly, so the
 * n-th root is the only one in [(n−1)π, nπ]. Both faces insulated: ζ = (n−1)π (n = 1 is the uniform
 * mode ζ = 0). `guess`, when given inside that bracket, replaces the built-in starting point.
 */
export function slabRoot(b0: number, b1: number, n: number, guess?: number): number {
  const closed = closedSlabRoot(b0, b1, n);
  if (closed >= 0) return closed;
  const a = (n - 1) * PI;
  if (guess !== undefined && guess > a && guess < n * PI) return solvePhase(b0, b1, n, guess);
  return solvePhase(b0, b1, n, n === 1 ? firstRootGuess(b0, b1) : slabGuess(b0, b1, n));
}

/**
 * slabRoot(b0, b1, n) from the root before it, `previous` = slabRoot(b0, b1, n − 1): the gap
 * Δ = ζn − ζn−1 solves the difference of the two phase conditions,
 *   Δ + Σ atan(Δ·bi / (bi² + ζn−1·(ζn−1 + Δ))) = π   (atan x − atan y = atan((x − y)/(1 + xy))),
 * whose arctangents have small arguments; one Newton step on it from Δ = π with a rational arctangent
 * gives a guess from which one Halley step on the phase condition reaches rounding, two for about
 * 1 root in 250 (Biot numbers 1e-4 to 1e4 on both faces, n to 200; tests/unit/engine-roots.test.ts).
 */
export function nextSlabRoot(b0: number, b1: number, n: number, previous: number): number {
  const closed = closedSlabRoot(b0, b1, n);
  if (closed >= 0) return closed;
  const z = previous;
  let gap = PI;
  for (let k = 0; k < 1; k++) {
    let h = gap - PI;
    let dh = 1;
    if (b0 > 0 && b0 < Infinity) {
      const q = b0 * b0 + z * z;
      const den = q + z * gap;
      const x = (gap * b0) / den;
      h += atanApprox(x);
      dh += (b0 * q) / (den * den * (1 + x * x));
    }
    if (b1 > 0 && b1 < Infinity) {
      const q = b1 * b1 + z * z;
      const den = q + z * gap;
      const x = (gap * b1) / den;
      h += atanApprox(x);
      dh += (b1 * q) / (den * den * (1 + x * x));
    }
    gap -= h / dh;
  }
  const guess = z + gap;
  return solvePhase(b0, b1, n, guess > (n - 1) * PI && guess < n * PI ? guess : slabGuess(b0, b1, n));
}

// atan x for x ≥ 0 to within 1e-10, without a library call: reduced to |y| ≤ tan(π/8) by
// atan x = π/2 − atan(1/x) and atan x = π/4 + atan((x − 1)/(x + 1)), then the [7/6] rational
// form of the continued fraction atan y = y/(1 + y²/(3 + 4y²/(5 + 9y²/(7 + …)))).
function atanApprox(x: number): number {
  let y = x;
  let offset = 0;
  let sign = 1;
  if (y > 1) {
    y = 1 / y;
    offset = HALF_PI;
    sign = -1;
  }
  if (y > 0.41421356237309503) {
    y = (y - 1) / (y + 1);
    offset += sign * 0.25 * PI;
  }
  const t = y * y;
  const r = (y * (135135 + t * (173250 + t * (53487 + t * 2304)))) / (135135 + t * (218295 + t * (99225 + t * 11025)));
  return offset + sign * r;
}

// Faces that are each insulated or held fixed: φ0 + φ1 is a constant and ζ follows at once
// (−1 otherwise).
function closedSlabRoot(b0: number, b1: number, n: number): number {
  const fixed0 = b0 === 0 || b0 === Infinity;
  const fixed1 = b1 === 0 || b1 === Infinity;
  if (!fixed0 || !fixed1) return -1;
  return (n - 0.5 * ((b0 === 0 ? 1 : 0) + (b1 === 0 ? 1 : 0))) * PI;
}

/**
 * Root of G(ζ) = ζ + φ0 + φ1 − nπ in [(n−1)π, nπ] from z: Halley steps (G″ and G‴ are as cheap as
 * G′ here), bisection whenever a step would leave the shrinking bracket. Halley's remainder is
 * (c2² − c3)·e³ with c2 = G″/2G′, c3 = G‴/6G′: a small step whose remainder bound is below rounding
 * ends the search without another evaluation.
 * Written out (no closures): this runs once per term of every new solution.
 *
 * With both faces convective, φ0 + φ1 = atan2(ζ(b0 + b1), b0·b1 − ζ²) (tan of the sum; the sum lies
 * in (0, π) as atan2 of a positive ordinate does): one arctangent instead of two. It is as well
 * conditioned as the two: a relative rounding ε in b0·b1 − ζ² moves the angle by at most
 * ε·(b0·b1 + ζ²)/√((b0² + ζ²)(b1² + ζ²)) ≤ ε (Cauchy–Schwarz).
 */
function solvePhase(b0: number, b1: number, n: number, z: number): number {
  const target = n * PI;
  let a = (n - 1) * PI; // G(a) ≤ 0
  let b = target; // G(b) ≥ 0
  if (!(z > a && z < b)) z = 0.5 * (a + b);
  const both = b0 > 0 && b0 < Infinity && b1 > 0 && b1 < Infinity;
  const sumB = b0 + b1;
  const prodB = b0 * b1;
  for (let i = 0; i < 100; i++) {
    // G and its first three derivatives; each convective face adds atan(ζ/B) and, with
    // r = 1/(B² + ζ²), the derivatives B·r, −2Bζ·r², 2B(3ζ² − B²)·r³.
    let f = z - target;
    let d1 = 1;
    let d2 = 0;
    let d3 = 0;
    // Two convective faces: one arctangent for both phases (see the note above).
    if (both) f += Math.atan2(z * sumB, prodB - z * z);
    if (b0 === 0) f += HALF_PI;
    else if (b0 !== Infinity) {
      if (!both) f += Math.atan2(z, b0);
      const r = 1 / (b0 * b0 + z * z);
      d1 += b0 * r;
      d2 -= 2 * b0 * z * r * r;
      d3 += 2 * b0 * (3 * z * z - b0 * b0) * r * r * r;
    }
    if (b1 === 0) f += HALF_PI;
    else if (b1 !== Infinity) {
      if (!both) f += Math.atan2(z, b1);
      const r = 1 / (b1 * b1 + z * z);
      d1 += b1 * r;
      d2 -= 2 * b1 * z * r * r;
      d3 += 2 * b1 * (3 * z * z - b1 * b1) * r * r * r;
    }
    if (f === 0) return z;
    if (f < 0) a = z;
    else b = z;
    const inv = 1 / d1;
    const newton = f * inv;
    const c2 = 0.5 * d2 * inv;
    const step = newton / (1 - newton * c2);
    const next = z - step;
    const e = Math.abs(step);
    if (next === z || e <= 2e-16 * z) return next;
    if (!(next > a && next < b)) {
      z = 0.5 * (a + b);
      if (b - a <= 4e-16 * b) return z;
      continue;
    }
    if (e <= 1e-4 * next && (c2 * c2 + Math.abs(d3 * inv) / 6) * e * e * e <= 1e-17 * next) return next;
    z = next;
  }
  return z;
}

function slabGuess(b0: number, b1: number, n: number): number {
  // One fixed-point step of ζ = nπ − φ0(ζ) − φ1(ζ) from the middle of the bracket.
  const mid = (n - 0.5) * PI;
  return n * PI - facePhase(mid, b0) - facePhase(mid, b1);
}

// First root: a rough form with the right limits, z² ≈ b0 + b1 + b0·b1 for small Biot numbers and
// z → (π/2)(1 + β0·β1) for large ones (β = B/(1 + B)), times a correction tabulated on (β0, β1) and
// interpolated bilinearly: within 0.2 % everywhere, so two Halley steps reach rounding.
const GUESS_GRID = 16;
let firstRootRatio: Float64Array | null = null;

function biotFraction(bi: number): number {
  return bi === Infinity ? 1 : bi / (1 + bi);
}

function roughFirstRoot(b0: number, b1: number): number {
  const c = HALF_PI * (1 + biotFraction(b0) * biotFraction(b1));
  const x = b0 + b1 + b0 * b1;
  if (!(x < Infinity)) return c;
  return Math.sqrt(x / (1 + x / (c * c)));
}

function firstRootTable(): Float64Array {
  const m = GUESS_GRID;
  const t = new Float64Array((m + 1) * (m + 1));
  for (let i = 0; i <= m; i++) {
    for (let j = 0; j <= m; j++) {
      const b0 = i === m ? Infinity : i / (m - i);
      const b1 = j === m ? Infinity : j / (m - j);
      const closed = closedSlabRoot(b0, b1, 1);
      const rough = roughFirstRoot(b0, b1);
      const z = closed >= 0 ? closed : solvePhase(b0, b1, 1, rough);
      t[i * (m + 1) + j] = rough > 0 ? z / rough : 1;
    }
  }
  return t;
}

function firstRootGuess(b0: number, b1: number): number {
  const t = (firstRootRatio ??= firstRootTable());
  const m = GUESS_GRID;
  const x = biotFraction(b0) * m;
  const y = biotFraction(b1) * m;
  const i = Math.min(m - 1, Math.floor(x));
  const j = Math.min(m - 1, Math.floor(y));
  const fx = x - i;
  const fy = y - j;
  const k = i * (m + 1) + j;
  const ratio =
    (1 - fx) * ((1 - fy) * t[k] + fy * t[k + 1]) + fx * ((1 - fy) * t[k + m + 1] + fy * t[k + m + 2]);
  return ratio * roughFirstRoot(b0, b1);
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
