// Bessel functions of the first kind, orders 0 and 1, for real arguments.
// Absolute error below about 1e-15 everywhere (relative 1e-12 away from the zeros), in three ranges:
//   |x| < 4: power series (Abramowitz & Stegun 9.1.10), whose terms never exceed 4 in size;
//   4 ≤ |x| < 20: Miller's backward recurrence J_{k-1} = (2k/x) J_k − J_{k+1} (A&S 9.1.27),
//     normalised by J0 + 2(J2 + J4 + …) = 1 (A&S 9.1.46);
//   |x| ≥ 20: Hankel's asymptotic expansion (A&S 9.2.5, 9.2.9, 9.2.10), whose smallest term is
//     below e^(−2x) < 1e-17 there.

const SERIES_LIMIT = 4;
const ASYMPTOTIC_LIMIT = 20;
const TWO_OVER_PI = 2 / Math.PI;
const SQRT_HALF = Math.SQRT1_2;

// Written by millerJ01 / hankelJ01, read straight after: no allocation per call.
let outJ0 = 0;
let outJ1 = 0;

function seriesJ0(x: number): number {
  const q = -0.25 * x * x;
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 40; k++) {
    term *= q / (k * k);
    sum += term;
    if (Math.abs(term) < 1e-17) break;
  }
  return sum;
}

function seriesJ1(x: number): number {
  const q = -0.25 * x * x;
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 40; k++) {
    term *= q / (k * (k + 1));
    sum += term;
    if (Math.abs(term) < 1e-17) break;
  }
  return 0.5 * x * sum;
}

function millerJ01(x: number): void {
  // Start well above x so that J_m(x) is negligible; the recurrence is stable downwards.
  const m = 2 * Math.ceil((x + 30) / 2);
  const twoOverX = 2 / x;
  let jUpper = 0; // J_{k+1}
  let jk = 1; // J_k, unnormalised
  let evenSum = 0;
  for (let k = m; k >= 1; k--) {
    const jLower = k * twoOverX * jk - jUpper;
    jUpper = jk;
    jk = jLower;
    if (k > 1 && (k - 1) % 2 === 0) evenSum += jk;
  }
  const norm = jk + 2 * evenSum;
  outJ0 = jk / norm;
  outJ1 = jUpper / norm;
}

function hankelJ01(x: number): void {
  // t_k = Π_{j≤k} (4ν² − (2j−1)²) / (k! (8x)^k); P = t0 − t2 + t4 − …, Q = t1 − t3 + t5 − … (A&S 9.2.9,
  // 9.2.10), summed until the terms stop shrinking.
  const inv8x = 1 / (8 * x);
  let p0 = 1;
  let q0 = 0;
  let p1 = 1;
  let q1 = 0;
  let t0 = 1;
  let t1 = 1;
  let live0 = true;
  let live1 = true;
  for (let k = 1; k < 80 && (live0 || live1); k++) {
    const odd = (2 * k - 1) * (2 * k - 1);
    const sign = k % 4 === 0 || k % 4 === 1 ? 1 : -1;
    if (live0) {
      const next = (t0 * (0 - odd) * inv8x) / k;
      if (Math.abs(next) >= Math.abs(t0) || Math.abs(next) < 1e-18) live0 = false;
      t0 = next;
      if (k % 2 === 1) q0 += sign * t0;
      else p0 += sign * t0;
    }
    if (live1) {
      const next = (t1 * (4 - odd) * inv8x) / k;
      if (Math.abs(next) >= Math.abs(t1) || Math.abs(next) < 1e-18) live1 = false;
      t1 = next;
      if (k % 2 === 1) q1 += sign * t1;
      else p1 += sign * t1;
    }
  }
  const s = Math.sin(x);
  const c = Math.cos(x);
  const amp = Math.sqrt(TWO_OVER_PI / x);
  // cos and sin of x − π/4 and x − 3π/4 from sin x, cos x: forming x − π/4 first would lose the
  // phase for large x.
  const cA = (c + s) * SQRT_HALF;
  const sA = (s - c) * SQRT_HALF;
  const cB = (s - c) * SQRT_HALF;
  const sB = -(s + c) * SQRT_HALF;
  outJ0 = amp * (p0 * cA - q0 * sA);
  outJ1 = amp * (p1 * cB - q1 * sB);
}

/** J0(x), the Bessel function of the first kind of order 0. */
export function besselJ0(x: number): number {
  const ax = Math.abs(x);
  if (ax < SERIES_LIMIT) return seriesJ0(ax);
  if (ax < ASYMPTOTIC_LIMIT) millerJ01(ax);
  else if (ax === Infinity) return 0;
  else hankelJ01(ax);
  return outJ0;
}

/** J1(x), the Bessel function of the first kind of order 1 (odd in x). */
export function besselJ1(x: number): number {
  const ax = Math.abs(x);
  let v: number;
  if (ax < SERIES_LIMIT) v = seriesJ1(ax);
  else if (ax === Infinity) v = 0;
  else {
    if (ax < ASYMPTOTIC_LIMIT) millerJ01(ax);
    else hankelJ01(ax);
    v = outJ1;
  }
  return x < 0 ? -v : v;
}
