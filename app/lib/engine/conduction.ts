// Transient heat conduction in a slab, an infinite cylinder, a sphere and a rectangular block with
// constant properties, by separation of variables (Fourier series with exponential decay).
// Pure TypeScript with no platform APIs, so the browser and the server run the same numbers.
//
// One ambient temperature T∞ for every face of a body, for simplicity: a pan sits in one air (or one
// bath) at a time, and the coefficients already carry the difference between its faces. A move
// (fridge to ice bath) is a new solution started from the old one's profile: continueFrom.
//
// Accuracy: for any t > 0 the series keeps the fewest terms whose tail is provably below tolK/10
// (default tolK 0.01 K). In the first moments after a start, where a long series would be needed, the
// body is still at its initial state away from its faces, and each face follows the exact
// semi-infinite solution with its own coefficient (Carslaw & Jaeger ch. II; Incropera & DeWitt §5.7,
// eq. 5.60). That form is used wherever its own error bound is below tolK/10 and it is the cheaper
// of the two, and past the term cap, where a uniform start is still well within tolK and a
// non-uniform one is off by about (curvature of the start) × αt.

import { besselJ0, besselJ1 } from "./bessel";
import {
  cylinderCoefficient,
  cylinderRoot,
  facePhase,
  findRootBrent,
  nextSlabRoot,
  sinMinusXCos,
  slabRoot,
  sphereCoefficient,
  sphereRoot,
} from "./roots";

/** Surface heat-transfer coefficient in W/m²K: 0 insulated, "inf" held at the ambient temperature. */
export type SurfaceH = number | "inf";

/**
 * Body shapes. Slab depth runs from the bottom face (x = 0) to the top face (x = depth). A block is a
 * pan's contents: walls on the four sides (one coefficient), base and top (lid or open surface).
 */
export type Geometry =
  | { shape: "slab"; depthM: number; bottomH: SurfaceH; topH: SurfaceH }
  | { shape: "cylinder"; radiusM: number; h: SurfaceH }
  | { shape: "sphere"; radiusM: number; h: SurfaceH }
  | {
      shape: "block";
      lengthM: number;
      widthM: number;
      depthM: number;
      wallH: SurfaceH;
      bottomH: SurfaceH;
      topH: SurfaceH;
    };

/** Thermal conductivity k (W/m·K) and diffusivity α (m²/s). */
export type Conductor = { k: number; alpha: number };

/**
 * Initial temperature in °C: uniform, samples on a uniform grid from the bottom face to the top face
 * (linear between samples), or a function of the depth coordinate in metres. Non-uniform starts are
 * for slabs only.
 */
export type Initial = number | { samplesC: readonly number[] } | ((xM: number) => number);

export type Probe = "center" | "warmest" | "mean";

/** A point in a block, metres from one corner: x along the length, y across, z up from the base. */
export interface BlockPoint {
  xM: number;
  yM: number;
  zM: number;
}

export interface ConductionOptions {
  /** Largest error allowed in any temperature, K. Default 0.01. */
  tolK?: number;
  /**
   * Most series terms per evaluation for a uniform start before the early-time form takes over
   * (counted over all modes, also the zero ones a symmetric slab leaves out).
   * Default 1000. A non-uniform start sums until the early-time form is accurate for it, up to 600
   * terms (4000 for a continued solution).
   */
  maxTerms?: number;
  /**
   * Sum the series up to maxTerms even where a uniform slab's early-time form is just as exact and
   * cheaper (for cross-checks). Default false.
   */
  preferSeries?: boolean;
}

export interface Solution {
  readonly geometry: Geometry;
  readonly material: Conductor;
  readonly ambientC: number;
  readonly tolK: number;
  /**
   * Temperature at time tS (s) at a depth from the bottom (slab; block: on the vertical centre line),
   * a radius (cylinder, sphere), or a block point.
   */
  temperatureAt(tS: number, at: number | BlockPoint): number;
  /** At the geometric centre. */
  centerC(tS: number): number;
  /** Highest temperature anywhere in the body, found numerically. */
  warmestC(tS: number): number;
  /** Volume (mass) average. */
  meanC(tS: number): number;
  /** Temperatures at `points` evenly spaced depths from bottom to top (block: centre line; radial: 0 to R). */
  profile(tS: number, points?: number): { xM: number[]; c: number[] };
  /**
   * temperatureAt(tS, x) for every depth (block: on the vertical centre line) or radius x in `atM`,
   * in one pass: each term's decay is computed once, and the eigenfunctions at those positions are
   * kept, so asking again at other times for the same positions costs a product per term and point.
   * Fills and returns `out` when given (at least as long as `atM`), else a new array.
   */
  temperaturesAt(tS: number, atM: ArrayLike<number>, out?: Float64Array): Float64Array;
  /**
   * First time (s, to 0.5 s) at which the probe is at or below targetC; 0 if it starts there; null if
   * the ambient is not below the target or it takes longer than maxS. Brackets on a time grid, so a
   * dip shorter than one grid step after a non-uniform start can be missed. `near`, a time the answer
   * is expected within 2 % of (the same target on a slightly different solution), is tried as the
   * bracket first: for a probe that only falls (a uniform start) the answer is the same.
   */
  reachTime(targetC: number, which: Probe, maxS?: number, near?: number): number | null;
  /**
   * Series terms one evaluation sums at tS (block: over all factors); 0 at t = 0 and where the
   * early-time form is used. A slab alike on both faces from a symmetric start sums its odd modes
   * only (its even ones are zero), and counts those.
   */
  terms(tS: number): number;
}

const PI = Math.PI;
const PI2 = PI * PI;
const INV_SQRT_PI = 1 / Math.sqrt(PI);
const DEFAULT_TOL_K = 0.01;
const DEFAULT_MAX_TERMS = 1000;
// Projections of a non-uniform start cost one quadrature per term: fewer terms before the early-time
// form, whose error there (curvature of the start × αt) stays in the thousandths of a kelvin.
const MAX_TERMS_PROFILE = 600;
// A continued solution's projection is closed-form and cheap: it may sum far longer.
const MAX_TERMS_MODAL = 4000;
const SERIES_PREFERRED_TERMS = 24;
// At the centre, where the early-time form is cheap, the series is kept only up to this many terms.
const CENTRE_SERIES_TERMS = 8;
// Largest table of eigenfunction values a series keeps for batch evaluations (modes × positions).
const MAX_GRID_TABLE = 1 << 16;
const WALK_STEPS = 64;
const BEND_BLOCK = 16;
const FAR = 27; // erfc(27) < 1e-318: beyond η = 27 a face has not been felt

// ---------------------------------------------------------------------------------------------
// Error function, complementary and scaled.

/** erfcx(x) = exp(x²)·erfc(x): series for |x| < 2 (A&S 7.1.6), continued fraction above (A&S 7.1.14). */
export function erfcx(x: number): number {
  if (x < 0) return 2 * Math.exp(x * x) - erfcx(-x);
  if (x < 2) {
    const x2 = 2 * x * x;
    let term = x;
    let sum = x;
    for (let n = 1; n < 200 && term > 1e-17 * sum; n++) {
      term *= x2 / (2 * n + 1);
      sum += term;
    }
    return Math.exp(x * x) - 2 * INV_SQRT_PI * sum;
  }
  let f = x;
  let c = x;
  let d = 0;
  for (let n = 1; n < 500; n++) {
    const a = 0.5 * n;
    d = 1 / (x + a * d);
    c = x + a / c;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return INV_SQRT_PI / f;
}

/** erfc(x) for x ≥ 0. */
export function erfc(x: number): number {
  if (x < 0) return 2 - erfc(-x);
  return Math.exp(-x * x) * erfcx(x);
}

// exp(−η²)·erfcx(z), safe for the slightly negative z of a curved surface's effective coefficient.
function gaussErfcx(eta: number, z: number): number {
  if (z >= 0) return Math.exp(-eta * eta) * erfcx(z);
  return 2 * Math.exp(z * z - eta * eta) - Math.exp(-eta * eta) * erfcx(-z);
}

// E(η, β) = [erfc η − exp(−η²) erfcx(η + β)] / β, and its limit 2·ierfc(η) as β → 0.
function faceKernel(eta: number, beta: number): number {
  const g = Math.exp(-eta * eta);
  const ex = erfcx(eta);
  if (Math.abs(beta) < 1e-4) {
    const d1 = 2 * eta * ex - 2 * INV_SQRT_PI;
    const d2 = 2 * ex + 2 * eta * d1;
    const d3 = 4 * d1 + 2 * eta * d2;
    return -g * (d1 + 0.5 * beta * d2 + (beta * beta * d3) / 6);
  }
  return (g * ex - gaussErfcx(eta, eta + beta)) / beta;
}

/**
 * Change w at dimensionless distance s from a face of a semi-infinite solid whose excess temperature
 * starts as f0 + g·s, with face Biot number bi on the length that made s and Fo dimensionless:
 *   fixed face: w = −f0·erfc η;  convective: w = −(bi·f0 − g)·√Fo·E(η, bi√Fo), η = s/(2√Fo)
 * (Carslaw & Jaeger ch. II, surface heat transfer; Incropera & DeWitt eq. 5.60 for g = 0; the
 * linear part g·s is itself a solution, which leaves only the face's flux mismatch to diffuse in).
 */
function faceResponse(s: number, fo: number, bi: number, f0: number, g: number): number {
  const sq = Math.sqrt(fo);
  const eta = s / (2 * sq);
  if (eta > FAR) return 0;
  if (bi === Infinity) return -f0 * erfc(eta);
  return -(bi * f0 - g) * sq * faceKernel(eta, bi * sq);
}

// ---------------------------------------------------------------------------------------------
// Quadrature and one-dimensional searches.

function gaussLegendre(m: number): { x: Float64Array; w: Float64Array } {
  const x = new Float64Array(m);
  const w = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    let z = Math.cos((PI * (i + 0.75)) / (m + 0.5));
    let dp = 0;
    for (let it = 0; it < 100; it++) {
      let p0 = 1;
      let p1 = z;
      for (let k = 2; k <= m; k++) {
        const p2 = ((2 * k - 1) * z * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      dp = (m * (z * p1 - p0)) / (z * z - 1);
      const dz = p1 / dp;
      z -= dz;
      if (Math.abs(dz) < 1e-16) break;
    }
    x[i] = z;
    w[i] = 2 / ((1 - z * z) * dp * dp);
  }
  return { x, w };
}

const GL8 = gaussLegendre(8);

/** ∫_a^b f by composite 8-point Gauss–Legendre on `panels` equal panels. */
function integrate(f: (s: number) => number, a: number, b: number, panels: number): number {
  const h = (b - a) / panels;
  let sum = 0;
  for (let p = 0; p < panels; p++) {
    const mid = a + (p + 0.5) * h;
    for (let i = 0; i < 8; i++) sum += GL8.w[i] * f(mid + 0.5 * h * GL8.x[i]);
  }
  return 0.5 * h * sum;
}

const INV_PHI = (Math.sqrt(5) - 1) / 2;

/** Largest value of f on [0, 1]: samples, then golden-section search around the best sample. */
function maximiseOnUnit(f: (s: number) => number, samples = 16): { s: number; v: number } {
  let bestS = 0;
  let best = -Infinity;
  for (let i = 0; i <= samples; i++) {
    const s = i / samples;
    const v = f(s);
    if (v > best) {
      best = v;
      bestS = s;
    }
  }
  let a = Math.max(0, bestS - 1 / samples);
  let b = Math.min(1, bestS + 1 / samples);
  let c = b - INV_PHI * (b - a);
  let d = a + INV_PHI * (b - a);
  let fc = f(c);
  let fd = f(d);
  while (b - a > 1e-5) {
    if (fc > fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - INV_PHI * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + INV_PHI * (b - a);
      fd = f(d);
    }
  }
  if (fc > best) return { s: c, v: fc };
  if (fd > best) return { s: d, v: fd };
  return { s: bestS, v: best };
}

// Scratch for batch evaluations, shared (typed arrays cost far more to allocate than a new solution's
// whole set-up): eigenfunction values, a block's vertical factor, a profile's values.
let rowScratch = new Float64Array(1024);
let factorScratch = new Float64Array(64);
let profileScratch = new Float64Array(64);
/** The step of evenly spaced positions (to 1e-15), or 0. */
// cos θ from sin θ for a turn θ ≥ 0 of a walk: √((1 − sin θ)(1 + sin θ)) up to π/4, within a few
// ulp there (1 − sin θ ≥ 0.29 loses nothing), one trigonometric call instead of two; cos θ beyond.
function turnCos(th: number, sinTh: number): number {
  return th <= 0.25 * PI ? Math.sqrt((1 - sinTh) * (1 + sinTh)) : Math.cos(th);
}

function evenStep(s: readonly number[]): number {
  const m = s.length;
  if (m < 3) return 0;
  const step = (s[m - 1] - s[0]) / (m - 1);
  if (!(step > 0)) return 0;
  for (let j = 1; j < m - 1; j++) if (Math.abs(s[j] - (s[0] + j * step)) > 1e-15) return 0;
  return step;
}

const walkState = new Float64Array(4);

// What a batch evaluation needs to know of its positions, kept for the last array asked about: unit
// positions come from BaseSolution.unitPositions, which never changes an array once made, so the
// same array (by identity) has the same step and the same centre points.
interface GridInfo {
  s: readonly number[];
  centreS: number;
  step: number; // evenStep(s)
  centres: number[]; // indices j with s[j] === centreS
  mirrored: boolean; // s[j] + s[m − 1 − j] = 1 to rounding (an even grid from face to face)
}
let lastGrid: GridInfo | null = null;
function gridOf(s: readonly number[], centreS: number): GridInfo {
  const last = lastGrid;
  if (last !== null && last.s === s && last.centreS === centreS) return last;
  const centres: number[] = [];
  for (let j = 0; j < s.length; j++) if (s[j] === centreS) centres.push(j);
  const step = evenStep(s);
  const info = { s, centreS, step, centres, mirrored: step > 0 && Math.abs(s[0] + s[s.length - 1] - 1) <= 1e-15 };
  lastGrid = info;
  return info;
}

function scratchTable(m: number): Float64Array {
  return rowScratch.length >= m ? rowScratch : (rowScratch = new Float64Array(2 * m));
}

function scratchFactor(m: number): Float64Array {
  return factorScratch.length >= m ? factorScratch : (factorScratch = new Float64Array(2 * m));
}
function scratchProfile(m: number): Float64Array {
  return profileScratch.length >= m ? profileScratch : (profileScratch = new Float64Array(2 * m));
}

// ---------------------------------------------------------------------------------------------
// One-dimensional series, dimensionless: position s ∈ [0, 1], Fourier number fo, excess temperature
// (T − T∞, or θ for the factors of a block).

interface Series1D {
  value(s: number, fo: number): number;
  /**
   * value(s[j], fo) into out[j] for j < s.length. The same array s (never changed once passed) may
   * keep its eigenfunction values for later calls.
   */
  valuesAt(s: readonly number[], fo: number, out: Float64Array): void;
  centre(fo: number): number;
  mean(fo: number): number;
  terms(fo: number): number;
  /** A slab's state as a sine series at fo, when it has one. */
  state?(fo: number): ModalState | null;
}

class ConstantSeries implements Series1D {
  constructor(private readonly u: number) {}
  value(): number {
    return this.u;
  }
  valuesAt(s: readonly number[], _fo: number, out: Float64Array): void {
    out.fill(this.u, 0, s.length);
  }
  centre(): number {
    return this.u;
  }
  mean(): number {
    return this.u;
  }
  terms(): number {
    return 1;
  }
  state(): ModalState {
    return { constant: this.u, zeta: [], phi: [], amp: [], symmetric: true };
  }
}

// ln n of a term count (an integer, mostly small) from a table up to 256: the same values, no call.
const LOG_INT = Float64Array.from({ length: 257 }, (_, n) => Math.log(n));
function logInt(n: number): number {
  return n <= 256 ? LOG_INT[n] : Math.log(n);
}

// Σ_{m ≥ N} exp(−m²π²Fo) ≤ exp(−N²π²Fo) / (1 − exp(−(2N+1)π²Fo)): successive ratios only shrink.
function gaussTail(n: number, fo: number): number {
  return Math.exp(-n * n * PI2 * fo) / -Math.expm1(-(2 * n + 1) * PI2 * fo);
}

/**
 * Common machinery: lazily grown modes ζₙ (all roots satisfy ζₙ ≥ (n−1)π), amplitude bounds for the
 * tail, the number of terms for a Fourier number, and a cache of exp(−ζₙ²Fo) for the last Fo.
 */
abstract class ModalSeries implements Series1D {
  protected count = 0;
  // Plain arrays: a solution is created for every trial of a fit, and typed arrays cost far more to
  // allocate than the few terms most solutions ever need.
  protected readonly zeta: number[] = [];
  protected readonly amp: number[] = []; // coefficient of the eigenfunction
  protected readonly ampCentre: number[] = []; // coefficient × eigenfunction at the centre
  protected readonly ampMean: number[] = []; // coefficient × mean of the eigenfunction
  private readonly decay: number[] = [];
  private decayFo = NaN;
  private decayN = 0;
  private termsFo = NaN;
  private termsN = 0;
  /** Up to this Fo the early-time form is exact to within tol/10 (0: only when the cap forces it). */
  protected earlyUpToFo = 0;
  /**
   * Uniform start whose earlyUpToFo is still a bound from above, to be made exact by earlyLimitFo
   * when a time below it is first asked (0: earlyUpToFo is exact). Most solutions are only ever
   * asked about later times.
   */
  protected earlyPendingU = 0;
  /**
   * 2 when only every other mode is excited (a slab alike on both faces from a start symmetric about
   * its mid-plane: the odd modes; the even ones are zero and are neither found nor summed). Term
   * counts and tail bounds stay in the full numbering; the arrays hold the excited modes only.
   */
  protected stride = 1;

  constructor(
    protected readonly tol: number,
    protected readonly cap: number,
  ) {}

  /** Bound on |aₙ·eigenfunction| for every n > N (N ≥ 1). */
  protected abstract ampTail(n: number): number;
  /** Whether ampTail(n) is ampTail(1)/n (else it is constant). */
  protected ampFalls = false;
  /** Computes mode n (0-based index i = n − 1) into the arrays. */
  protected abstract computeMode(i: number): void;
  protected abstract eigen(i: number, s: number): number;
  protected abstract initial(s: number): number;
  protected abstract initialMean(): number;
  protected abstract early(s: number, fo: number): number;
  protected abstract earlyMean(fo: number): number;

  protected ensure(n: number): void {
    if (n <= this.count) return;
    for (let i = this.count; i < n; i++) this.computeMode(i);
    this.count = n;
  }

  protected tailOk(n: number, fo: number): boolean {
    return this.ampTail(n) * gaussTail(n, fo) < this.tol / 10;
  }

  /** Terms an evaluation at fo sums; 0 where the early-time form is used (past the cap, or where it is as exact and cheaper). */
  terms(fo: number): number {
    if (fo === this.termsFo) return this.termsN;
    let n: number;
    // Where both forms are good, a long series loses to two erfc evaluations.
    if (fo <= this.earlyUpToFo && fo <= this.earlyLimit() && !this.tailOk(SERIES_PREFERRED_TERMS * this.stride, fo)) n = 0;
    else n = this.stored(this.countTerms(fo));
    this.termsFo = fo;
    this.termsN = n;
    return n;
  }

  /** Stored modes that cover the first n modes of the full numbering. */
  protected stored(n: number): number {
    return this.stride === 1 ? n : (n + 1) >> 1;
  }

  protected earlyLimit(): number {
    if (this.earlyPendingU !== 0) {
      this.earlyUpToFo = earlyLimitFo(this.earlyPendingU, this.tol);
      this.earlyPendingU = 0;
    }
    return this.earlyUpToFo;
  }

  /** Terms the series alone needs at fo (0 past the cap), whichever form evaluations use. */
  protected countTerms(fo: number): number {
    // Closed form, no search: with K = 1/(1 − e^(−3π²Fo)) bounding the geometric factor for every N,
    // N = ⌈√(ln(A·K/lim)/(π²Fo))⌉ is enough; a second pass with the amplitude bound at that N trims
    // it, kept only if the exact test still passes.
    // In logarithms: one exponential and one logarithm fewer. With an amplitude bound that falls as
    // 1/n (a uniform slab), ln(A(n)·K/lim) = ln(A(1)·K/lim) − ln n; with a constant one the second
    // pass would give n again.
    const lim = this.tol / 10;
    const c = PI2 * fo;
    const k = 1 / -Math.expm1(-3 * c);
    const a1 = this.ampTail(1);
    const logFirst = Math.log((a1 * k) / lim);
    if (logFirst < c) return 1;
    let n = Math.max(2, Math.ceil(Math.sqrt(logFirst / c)));
    if (n > this.cap) return this.tailOk(this.cap, fo) ? this.cap : 0;
    if (!this.ampFalls) return n;
    const trimmed = Math.max(1, Math.ceil(Math.sqrt(Math.max(0, logFirst - logInt(n)) / c)));
    if (trimmed < n && this.tailOk(trimmed, fo)) n = trimmed;
    return n;
  }

  protected decays(fo: number, n: number): number[] {
    this.ensure(n);
    if (fo !== this.decayFo) {
      this.decayFo = fo;
      this.decayN = 0;
    }
    const z = this.zeta;
    const d = this.decay;
    for (let i = this.decayN; i < n; i++) d[i] = Math.exp(-z[i] * z[i] * fo);
    if (n > this.decayN) this.decayN = n;
    return d;
  }

  /** Whether the early-time form is within tol/10 at this one point (see SlabSeries). */
  protected earlyAt(_s: number, _fo: number): boolean {
    return false;
  }

  value(s: number, fo: number): number {
    if (fo === 0) return this.initial(s);
    // The centre itself by the same rule as centre(), so that the two agree.
    if (s === this.centreS()) return this.centre(fo);
    const n = this.terms(fo);
    if (n === 0 || (n > SERIES_PREFERRED_TERMS && this.earlyAt(s, fo))) return this.early(s, fo);
    return this.sumModes(s, n, this.decays(fo, n));
  }

  /** Σ amp·eigenfunction·decay over the first n modes at s. */
  protected sumModes(s: number, n: number, d: number[]): number {
    let sum = 0;
    for (let i = 0; i < n; i++) sum += this.amp[i] * this.eigen(i, s) * d[i];
    return sum;
  }

  valuesAt(s: readonly number[], fo: number, out: Float64Array): void {
    const m = s.length;
    if (fo === 0) {
      for (let j = 0; j < m; j++) out[j] = this.initial(s[j]);
      return;
    }
    const n = this.terms(fo);
    if (n === 0) {
      for (let j = 0; j < m; j++) out[j] = this.early(s[j], fo);
      return;
    }
    const d = this.decays(fo, n);
    const amp = this.amp;
    out.fill(0, 0, m);
    // The first call for these positions (or too many values to keep): the eigenfunction values in
    // shared scratch. From the second call on for the same positions: a table the series keeps.
    let table: Float64Array | null = null;
    if (s === this.gridS && n * m <= MAX_GRID_TABLE) table = this.eigenTable(s, n);
    else {
      this.gridS = s;
      this.gridRows = 0;
      if (!this.addModes(s, n, d, out)) {
        table = scratchTable(n * m);
        this.eigenRows(s, 0, n, table);
      }
    }
    // Same order of operations as a single point: Σ over modes of (amp·decay)·eigenfunction.
    if (table) {
      for (let i = 0; i < n; i++) {
        const w = amp[i] * d[i];
        const row = i * m;
        for (let j = 0; j < m; j++) out[j] += w * table[row + j];
      }
    }
    if (n > SERIES_PREFERRED_TERMS) {
      for (let j = 0; j < m; j++) if (this.earlyAt(s[j], fo)) out[j] = this.early(s[j], fo);
    }
    // The centre as value() gives it: by centre()'s rule.
    const centres = gridOf(s, this.centreS()).centres;
    for (let k = 0; k < centres.length; k++) out[centres[k]] = this.centre(fo);
  }

  // Eigenfunction values at the positions last asked for (by identity), one row per mode.
  private gridS: readonly number[] | null = null;
  private gridTable: Float64Array | null = null;
  private gridRows = 0;

  private eigenTable(s: readonly number[], n: number): Float64Array {
    const m = s.length;
    let t = this.gridTable;
    if (n > this.gridRows) {
      if (!t || t.length < n * m) {
        const grown = new Float64Array(Math.max(n, 2 * this.gridRows, 4) * m);
        if (t && this.gridRows > 0) grown.set(t.subarray(0, this.gridRows * m));
        t = this.gridTable = grown;
      }
      this.eigenRows(s, this.gridRows, n, t);
      this.gridRows = n;
    }
    return t!;
  }

  /**
   * out[j] += (amp·decay)·eigenfunction at s[j] for the first n modes, mode by mode, without keeping
   * the values (a first call for these positions); false where the series has no such shortcut.
   */
  protected addModes(_s: readonly number[], _n: number, _d: number[], _out: Float64Array): boolean {
    return false;
  }

  /** Eigenfunction values of modes from ≤ i < to at the positions s, mode i into row i of t. */
  protected eigenRows(s: readonly number[], from: number, to: number, t: Float64Array): void {
    const m = s.length;
    for (let i = from; i < to; i++) {
      const row = i * m;
      for (let j = 0; j < m; j++) t[row + j] = this.eigen(i, s[j]);
    }
  }

  centre(fo: number): number {
    if (fo === 0) return this.initial(0.5);
    // At the centre the early-time form costs one or two face responses (nothing where neither face
    // has been felt yet): wherever it is exact to tol/10, it beats all but a short series, whose
    // modes would first have to be found.
    if (fo <= this.earlyUpToFo && fo <= this.earlyLimit() && !this.tailOk(CENTRE_SERIES_TERMS * this.stride, fo)) {
      return this.early(this.centreS(), fo);
    }
    const n = this.terms(fo);
    if (n === 0 || (n > SERIES_PREFERRED_TERMS && this.earlyAt(this.centreS(), fo))) {
      return this.early(this.centreS(), fo);
    }
    const d = this.decays(fo, n);
    const a = this.ampCentre;
    let sum = 0;
    for (let i = 0; i < n; i++) sum += a[i] * d[i];
    return sum;
  }

  mean(fo: number): number {
    if (fo === 0) return this.initialMean();
    const n = this.terms(fo);
    if (n === 0) return this.earlyMean(fo);
    const d = this.decays(fo, n);
    const a = this.ampMean;
    let sum = 0;
    for (let i = 0; i < n; i++) sum += a[i] * d[i];
    return sum;
  }

  protected centreS(): number {
    return 0.5;
  }
}

// cos φ and sin φ of a face phase φ = atan(ζ/B) into out[k], out[k + 1]: B/√(ζ² + B²) and
// ζ/√(ζ² + B²), exact at B = 0 (insulated: φ = π/2) and B = ∞ (fixed: φ = 0).
const phaseTrig = new Float64Array(4);
function facePhaseTrig(zeta: number, bi: number, out: Float64Array, k: number): void {
  if (bi === 0) {
    out[k] = 0;
    out[k + 1] = 1;
  } else if (bi === Infinity) {
    out[k] = 1;
    out[k + 1] = 0;
  } else {
    const r = 1 / Math.sqrt(zeta * zeta + bi * bi);
    out[k] = bi * r;
    out[k + 1] = zeta * r;
  }
}

/**
 * Largest Fo at which the two faces' semi-infinite solutions still describe a uniformly started slab
 * to within tol/10. What they leave out is each face's response arriving at the other face, at least
 * one depth away: below 2|U|·exp(−1/(4Fo))·(1 + 1/√(πFo)), the size of erfc(1/(2√Fo)) and of its
 * gradient there (Carslaw & Jaeger ch. III, images between two planes). Fixed-point iteration.
 */
function earlyLimitFo(u: number, tol: number): number {
  if (u === 0) return 0;
  let fo = 0.01;
  for (let i = 0; i < 6; i++) fo = 1 / (4 * Math.log((20 * Math.abs(u) * (1 + 1 / Math.sqrt(PI * fo))) / tol));
  return 0.9 * fo;
}

// A bound from above on earlyLimitFo, for one logarithm instead of six: every iterate there has a
// logarithm above ln(20|U|/tol). Infinity where that logarithm is not positive (no bound).
function earlyLimitCeilingFo(u: number, tol: number): number {
  const r = (20 * Math.abs(u)) / tol;
  return r > 1 ? 0.9 / (4 * Math.log(r)) : Infinity;
}

/**
 * A slab's state as a truncated series: constant + Σ amp·sin(zeta·ξ + phi). What a continued solution
 * starts from, so that its projection has a closed form.
 */
interface ModalState {
  constant: number;
  zeta: number[];
  phi: number[];
  amp: number[];
  /** Every mode symmetric about the mid-plane (from a slab alike on both faces). */
  symmetric?: boolean;
}

/**
 * Start of a slab: uniform excess, or a profile u(ξ) with its slopes du/dξ at the faces, a bound on
 * |u''| (for the early-time form's error) and, when it is itself a series, its modes.
 */
type SlabStart =
  | { kind: "uniform"; u: number }
  | {
      kind: "profile";
      u: (s: number) => number;
      slope0: number;
      slope1: number;
      curvature: number;
      /** Linear pieces of a sampled start: quadrature panels are aligned with them. */
      segments: number;
      modes?: ModalState;
    };

interface QuadratureLevel {
  panels: number;
  nodes: Float64Array;
  weightedU: Float64Array; // quadrature weight × u at the node
}

// ∫₀¹ cos(cξ + d) dξ = cos(d + c/2)·sin(c/2)/(c/2), stable as c → 0.
function cosIntegral(c: number, d: number): number {
  const h = 0.5 * c;
  return Math.cos(d + h) * (h === 0 ? 1 : Math.sin(h) / h);
}

/**
 * Slab 0 ≤ ξ ≤ 1 with face Biot numbers b0 (ξ = 0, bottom) and b1 (ξ = 1, top), on the full depth.
 * Eigenfunctions Xₙ = sin(ζₙξ + φ0), tan φi = ζₙ/bi; ζₙ + φ0 + φ1 = nπ (Özışık, Heat Conduction,
 * ch. 2, two convective faces, in phase form); norm ∫Xₙ² = ½ + (sin 2φ0 + sin 2φ1)/(4ζₙ).
 * Uniform start U: aₙ = U [cos φ0 − (−1)ⁿ cos φ1] / (ζₙ · norm) (∫Xₙ in closed form).
 * Profile start u(ξ): aₙ = ∫ u Xₙ dξ / norm (Özışık, Heat Conduction, ch. 2), by composite
 * Gauss–Legendre, or in closed form when u is itself a sine series (a continued solution):
 * ∫ sin(aξ + p) sin(bξ + q) dξ = ½[∫cos((a−b)ξ + p − q) − ∫cos((a+b)ξ + p + q)].
 */
class SlabSeries extends ModalSeries {
  private readonly phi: number[] = [];
  private phiCount = 0; // phases computed so far (see phases())
  private levels: QuadratureLevel[] | null = null; // a profile start's quadratures, made on first use
  private l1 = 0;
  private startMean = 0;
  private pointwise = false;
  private ends: { x0: Float64Array; dx0: Float64Array; x1: Float64Array; dx1: Float64Array } | null = null;
  private bends: Float64Array[] | null = null; // |u''| on a grid, and its maxima by blocks
  private bendGrid = 512;

  constructor(
    private readonly b0: number,
    private readonly b1: number,
    private readonly start: SlabStart,
    tol: number,
    cap: number,
    preferSeries: boolean,
  ) {
    // A profile keeps summing until the early-time form is accurate for it; a projection by quadrature
    // costs one pass over the nodes per term, so it stops sooner.
    super(tol, start.kind === "uniform" ? cap : start.modes ? MAX_TERMS_MODAL : MAX_TERMS_PROFILE);
    if (b0 === b1 && (start.kind === "uniform" || start.modes?.symmetric === true)) this.stride = 2;
    this.ampFalls = start.kind === "uniform";
    if (start.kind === "uniform") {
      if (!preferSeries) {
        const ceiling = earlyLimitCeilingFo(start.u, tol);
        if (ceiling < Infinity) {
          this.earlyUpToFo = ceiling;
          this.earlyPendingU = start.u;
        } else this.earlyUpToFo = earlyLimitFo(start.u, tol);
      }
      return;
    }
    let peak = 0;
    if (start.modes) {
      const m = start.modes;
      let l1Bound = Math.abs(m.constant);
      let mean = m.constant;
      for (let j = 0; j < m.zeta.length; j++) {
        l1Bound += Math.abs(m.amp[j]);
        mean += m.amp[j] * (m.zeta[j] === 0 ? Math.sin(m.phi[j]) : cosIntegral(m.zeta[j], m.phi[j] - 0.5 * PI));
      }
      this.l1 = l1Bound;
      this.startMean = mean;
      peak = l1Bound;
    } else {
      const level = this.level(64);
      let l1 = 0;
      let mean = 0;
      for (let j = 0; j < level.nodes.length; j++) {
        l1 += Math.abs(level.weightedU[j]);
        mean += level.weightedU[j];
      }
      this.l1 = l1;
      this.startMean = mean;
      for (let j = 0; j <= 256; j++) peak = Math.max(peak, Math.abs(start.u(j / 256)));
    }
    if (!preferSeries) {
      this.pointwise = true;
      // Error of the early-time form: curvature × Fo (the start is frozen apart from its faces'
      // layers, and taken as linear inside them), plus each face's response reaching the other face.
      const byCurvature = start.curvature > 0 ? tol / (20 * start.curvature) : Infinity;
      this.earlyUpToFo = Math.min(byCurvature, earlyLimitFo(peak, tol));
    }
  }

  // Away from both faces the early-time form is the start itself, off by about Fo × the largest |u''|
  // within a few diffusion lengths: a point in the flat middle of a continued profile needs no series.
  protected earlyAt(s: number, fo: number): boolean {
    if (!this.pointwise) return false;
    const reach = 12 * Math.sqrt(fo);
    if (s - reach <= 0 || s + reach >= 1) return false;
    return fo * this.bendWithin(s - reach, s + reach) <= this.tol / 20;
  }

  private bendWithin(a: number, b: number): number {
    if (!this.bends) {
      const st = this.start;
      const top = st.kind === "profile" && st.modes ? Math.max(0, ...st.modes.zeta) : Infinity;
      // One grid step per radian of the fastest mode (512 steps for a start without modes).
      const grid = top === Infinity ? 512 : Math.min(512, Math.max(32, 2 ** Math.ceil(Math.log2(Math.max(1, top)))));
      this.bendGrid = grid;
      const base = new Float64Array(grid + 1);
      if (st.kind === "profile" && st.modes) {
        // u'' = −Σ ζ²·a·sin(ζξ + φ) on the grid, each mode by the recurrence
        // sin((j+1)θ + φ) = 2cos θ·sin(jθ + φ) − sin((j−1)θ + φ).
        const m = st.modes;
        const sum = new Float64Array(grid + 1);
        for (let i = 0; i < m.zeta.length; i++) {
          const th = m.zeta[i] / grid;
          const c2 = 2 * Math.cos(th);
          const w = -m.zeta[i] * m.zeta[i] * m.amp[i];
          let prev = Math.sin(m.phi[i] - th);
          let here = Math.sin(m.phi[i]);
          for (let j = 0; j <= grid; j++) {
            sum[j] += w * here;
            const next = c2 * here - prev;
            prev = here;
            here = next;
          }
        }
        for (let j = 0; j <= grid; j++) base[j] = Math.abs(sum[j]);
      } else {
        const u = st.kind === "profile" ? st.u : () => 0;
        const values = new Float64Array(grid + 1);
        for (let j = 0; j <= grid; j++) values[j] = u(j / grid);
        for (let j = 1; j < grid; j++) base[j] = Math.abs(values[j + 1] - 2 * values[j] + values[j - 1]) * grid * grid;
        base[0] = base[1];
        base[grid] = base[grid - 1];
      }
      // Maxima of blocks of BEND_BLOCK grid points: a range's maximum is a scan of a few blocks
      // and the points at either end (one small array instead of a table per power of two).
      const blocks = new Float64Array(Math.ceil((grid + 1) / BEND_BLOCK));
      for (let j = 0; j <= grid; j++) {
        const q = Math.floor(j / BEND_BLOCK);
        if (base[j] > blocks[q]) blocks[q] = base[j];
      }
      this.bends = [base, blocks];
    }
    // One grid cell of margin on each side: a bend between grid points is seen by its neighbours.
    const grid = this.bendGrid;
    const lo = Math.max(0, Math.floor(a * grid) - 1);
    const hi = Math.min(grid, Math.ceil(b * grid) + 1);
    const base = this.bends[0];
    const blocks = this.bends[1];
    let most = 0;
    let j = lo;
    for (; j <= hi && j % BEND_BLOCK !== 0; j++) most = Math.max(most, base[j]);
    for (; j + BEND_BLOCK - 1 <= hi; j += BEND_BLOCK) most = Math.max(most, blocks[j / BEND_BLOCK]);
    for (; j <= hi; j++) most = Math.max(most, base[j]);
    return most;
  }

  // amp·X and amp·X' of each mode of the start at ξ = 0 and ξ = 1.
  private modeEnds(m: ModalState) {
    if (!this.ends) {
      const n = m.zeta.length;
      const e = {
        x0: new Float64Array(n),
        dx0: new Float64Array(n),
        x1: new Float64Array(n),
        dx1: new Float64Array(n),
      };
      for (let j = 0; j < n; j++) {
        const z = m.zeta[j];
        const p = m.phi[j];
        const a = m.amp[j];
        e.x0[j] = a * Math.sin(p);
        e.dx0[j] = a * z * Math.cos(p);
        e.x1[j] = a * Math.sin(z + p);
        e.dx1[j] = a * z * Math.cos(z + p);
      }
      this.ends = e;
    }
    return this.ends;
  }

  protected ampTail(n: number): number {
    // |aₙ| ≤ ∫|u|·|Xₙ| / norm ≤ 2‖u‖₁ (norm ≥ ½); uniform: |aₙ| ≤ 4|U|/ζₙ ≤ 4|U|/(nπ) for the
    // (n+1)-th mode on.
    if (this.start.kind === "uniform") return (4 * Math.abs(this.start.u)) / (n * PI);
    return 2 * this.l1;
  }

  private level(panelsWanted: number): QuadratureLevel {
    const start = this.start;
    if (start.kind !== "profile") throw new Error("uniform start has no quadrature");
    const levels = (this.levels ??= []);
    for (const l of levels) if (l.panels >= panelsWanted) return l;
    const seg = start.segments;
    let panels = Math.max(panelsWanted, levels.length ? 2 * levels[levels.length - 1].panels : 0);
    if (seg > 0) panels = seg * Math.ceil(panels / seg);
    const nodes = new Float64Array(panels * 8);
    const weightedU = new Float64Array(panels * 8);
    const h = 1 / panels;
    for (let p = 0; p < panels; p++) {
      const mid = (p + 0.5) * h;
      for (let i = 0; i < 8; i++) {
        const x = mid + 0.5 * h * GL8.x[i];
        nodes[p * 8 + i] = x;
        weightedU[p * 8 + i] = 0.5 * h * GL8.w[i] * start.u(x);
      }
    }
    const l = { panels, nodes, weightedU };
    levels.push(l);
    return l;
  }

  protected computeMode(i: number): void {
    let n: number;
    let z: number;
    if (this.stride === 2) {
      // Mode n = 2i + 1 of the slab alike on both faces is mode i + 1 of its half, insulated at the
      // mid-plane with Biot number b/2 on the half depth: ζ = 2λ, and ζ + 2φ = nπ gives the phase.
      n = 2 * i + 1;
      const bh = 0.5 * this.b0;
      const lambda = i === 0 ? slabRoot(0, bh, 1) : nextSlabRoot(0, bh, i + 1, 0.5 * this.zeta[i - 1]);
      z = 2 * lambda;
    } else {
      n = i + 1;
      z = i === 0 ? slabRoot(this.b0, this.b1, 1) : nextSlabRoot(this.b0, this.b1, n, this.zeta[i - 1]);
    }
    // cos φ and sin φ of each face from one square root, no trigonometric call: the norm, the mean
    // and the centre below need nothing else (the phase itself is found when a position needs it).
    facePhaseTrig(z, this.b0, phaseTrig, 0);
    facePhaseTrig(z, this.b1, phaseTrig, 2);
    const c0 = phaseTrig[0];
    const s0 = phaseTrig[1];
    const c1 = phaseTrig[2];
    const s1 = phaseTrig[3];
    // sin 2φ = 2 sin φ cos φ.
    const norm = z === 0 ? 1 : 0.5 + (s0 * c0 + s1 * c1) / (2 * z);
    // ∫₀¹ Xₙ dξ = [cos φ0 − (−1)ⁿ cos φ1] / ζₙ, since ζₙ + φ0 = nπ − φ1.
    const sign = n % 2 === 0 ? -1 : 1;
    const meanX = z === 0 ? 1 : (c0 + sign * c1) / z;
    const st = this.start;
    let a: number;
    if (st.kind === "uniform") a = (st.u * meanX) / norm;
    else if (st.modes) {
      const phi0 = this.phase(n, z);
      // For X'' = −ζj²X and Y'' = −ζ²Y: (ζj² − ζ²)∫₀¹XY = [XY' − X'Y]₀¹ (Green's identity), from the
      // modes' end values alone; the direct integral where ζj and ζ nearly coincide.
      const m = st.modes;
      const e = this.modeEnds(m);
      const y0 = Math.sin(phi0);
      const dy0 = z * Math.cos(phi0);
      const y1 = Math.sin(z + phi0);
      const dy1 = z * Math.cos(z + phi0);
      let sum = m.constant * meanX;
      for (let j = 0; j < m.zeta.length; j++) {
        const zj = m.zeta[j];
        if (Math.abs(zj - z) < 0.05) {
          const pj = m.phi[j];
          sum += 0.5 * m.amp[j] * (cosIntegral(zj - z, pj - phi0) - cosIntegral(zj + z, pj + phi0));
        } else {
          sum += (e.x1[j] * dy1 - e.dx1[j] * y1 - e.x0[j] * dy0 + e.dx0[j] * y0) / (zj * zj - z * z);
        }
      }
      a = sum / norm;
    } else {
      // 8-point Gauss–Legendre with at most 3 radians of phase per panel resolves Xₙ to rounding level.
      const phi0 = this.phase(n, z);
      const lvl = this.level(Math.ceil(z / 3));
      let sum = 0;
      const x = lvl.nodes;
      const wu = lvl.weightedU;
      for (let j = 0; j < x.length; j++) sum += wu[j] * Math.sin(z * x[j] + phi0);
      a = sum / norm;
    }
    this.zeta[i] = z;
    this.amp[i] = a;
    // A symmetric mode at the mid-plane: sin(nπ/2) = ±1. Otherwise ζ/2 + φ0 = nπ/2 + δ/2 with
    // δ = φ0 − φ1 in (−π/2, π/2): cos δ = c0c1 + s0s1, sin δ = s0c1 − c0s1, and the half angle
    // cos(δ/2) = √((1 + cos δ)/2), sin(δ/2) = sin δ/(2cos(δ/2)), free of cancellation.
    if (this.stride === 2) this.ampCentre[i] = i % 2 === 0 ? a : -a;
    else {
      const ch = Math.sqrt(0.5 * (1 + c0 * c1 + s0 * s1));
      const half = n % 2 === 1 ? ch : (s0 * c1 - c0 * s1) / (2 * ch);
      // sin(nπ/2 + x) is cos x (n odd) or sin x (n even), negated when ⌊n/2⌋ is odd.
      this.ampCentre[i] = (n >> 1) % 2 === 0 ? a * half : -a * half;
    }
    this.ampMean[i] = a * meanX;
  }

  // Phase φ0 of mode n with root z.
  private phase(n: number, z: number): number {
    if (this.stride === 2) return 0.5 * (n * PI - z);
    return z === 0 ? 0.5 * PI : facePhase(z, this.b0);
  }

  /** Phases φ0 of the modes found so far, each computed when first needed. */
  private phases(): number[] {
    const phi = this.phi;
    for (let i = this.phiCount; i < this.count; i++) phi[i] = this.phase(this.stride === 2 ? 2 * i + 1 : i + 1, this.zeta[i]);
    if (this.count > this.phiCount) this.phiCount = this.count;
    return phi;
  }

  protected eigen(i: number, s: number): number {
    const phi = i < this.phiCount ? this.phi : this.phases();
    return Math.sin(this.zeta[i] * s + phi[i]);
  }

  // Evenly spaced positions (a profile): sin((j + 1)θ + α) = 2cos θ·sin(jθ + α) − sin((j − 1)θ + α)
  // with θ = ζ·Δξ, a product and a difference per point, from fresh sines every WALK_STEPS points
  // (the recurrence's rounding grows at most with the square of the steps: below 1e-12 of the
  // amplitude there). At the bottom face the angle is φ0 itself: sine and cosine ζ/√(ζ² + B²) and
  // B/√(ζ² + B²), no trigonometric call.
  protected eigenRows(s: readonly number[], from: number, to: number, t: Float64Array): void {
    const m = s.length;
    const step = gridOf(s, this.centreS()).step;
    for (let i = from; i < to; i++) {
      if (step > 0) this.walkMode(i, s, m, step, t, i * m, 0, null);
      else {
        const row = i * m;
        const zi = this.zeta[i];
        const pi = this.phases()[i];
        for (let j = 0; j < m; j++) t[row + j] = Math.sin(zi * s[j] + pi);
      }
    }
  }

  protected addModes(s: readonly number[], n: number, d: number[], out: Float64Array): boolean {
    const grid = gridOf(s, this.centreS());
    const step = grid.step;
    if (!(step > 0)) return false;
    // A slab alike on both faces from a symmetric start is symmetric about its mid-plane: on an even
    // grid from one face to the other (a profile), the first half of the points is walked and
    // mirrored. The mirrored position differs from 1 − ξ by rounding only (≤ 1e-15).
    const m = s.length;
    const mirror = this.stride === 2 && grid.mirrored;
    const walked = mirror ? (m + 1) >> 1 : m;
    let i = 0;
    for (; i + 1 < n; i += 2) this.walkPair(i, s, walked, step, this.amp[i] * d[i], this.amp[i + 1] * d[i + 1], out);
    if (i < n) this.walkMode(i, s, walked, step, out, 0, this.amp[i] * d[i], out);
    if (mirror) for (let j = walked; j < m; j++) out[j] = out[m - 1 - j];
    return true;
  }

  // Mode i along the first m of evenly spaced positions: its values into t from `row` on, or (with
  // `add`) w times its values added to `add`.
  private walkMode(i: number, s: readonly number[], m: number, step: number, t: Float64Array, row: number, w: number, add: Float64Array | null): void {
    const th = this.zeta[i] * step;
    const sth = Math.sin(th);
    const c = turnCos(th, sth);
    const c2 = 2 * c;
    for (let j0 = 0; j0 < m; j0 += WALK_STEPS) {
      this.walkStart(i, s, j0, c, sth, 0);
      let here = walkState[0];
      let prev = walkState[1];
      const end = Math.min(m, j0 + WALK_STEPS);
      if (add) {
        for (let j = j0; j < end; j++) {
          add[j] += w * here;
          const next = c2 * here - prev;
          prev = here;
          here = next;
        }
      } else {
        for (let j = j0; j < end; j++) {
          t[row + j] = here;
          const next = c2 * here - prev;
          prev = here;
          here = next;
        }
      }
    }
  }

  // Modes i and i + 1 side by side (two independent recurrences keep the processor busy), w0 and w1
  // times their values added to `add`, mode i first at every point as one mode at a time would.
  private walkPair(i: number, s: readonly number[], m: number, step: number, w0: number, w1: number, add: Float64Array): void {
    const th0 = this.zeta[i] * step;
    const th1 = this.zeta[i + 1] * step;
    const sin0 = Math.sin(th0);
    const sin1 = Math.sin(th1);
    const cos0 = turnCos(th0, sin0);
    const cos1 = turnCos(th1, sin1);
    const c0 = 2 * cos0;
    const c1 = 2 * cos1;
    for (let j0 = 0; j0 < m; j0 += WALK_STEPS) {
      this.walkStart(i, s, j0, cos0, sin0, 0);
      this.walkStart(i + 1, s, j0, cos1, sin1, 2);
      let h0 = walkState[0];
      let p0 = walkState[1];
      let h1 = walkState[2];
      let p1 = walkState[3];
      const end = Math.min(m, j0 + WALK_STEPS);
      for (let j = j0; j < end; j++) {
        add[j] = add[j] + w0 * h0 + w1 * h1;
        const n0 = c0 * h0 - p0;
        const n1 = c1 * h1 - p1;
        p0 = h0;
        h0 = n0;
        p1 = h1;
        h1 = n1;
      }
    }
  }

  // sin α and sin(α − θ) of mode i at s[j0] into walkState[k], walkState[k + 1] (cos θ, sin θ given).
  private walkStart(i: number, s: readonly number[], j0: number, cosTh: number, sinTh: number, k: number): void {
    const zi = this.zeta[i];
    const b0 = this.b0;
    let here: number;
    let cosHere: number;
    if (j0 === 0 && s[0] === 0 && b0 > 0 && b0 < Infinity && zi > 0) {
      const r = 1 / Math.sqrt(zi * zi + b0 * b0);
      here = zi * r;
      cosHere = b0 * r;
    } else {
      const angle = zi * s[j0] + this.phases()[i];
      here = Math.sin(angle);
      cosHere = Math.cos(angle);
    }
    walkState[k] = here;
    walkState[k + 1] = here * cosTh - cosHere * sinTh;
  }

  // Points asked in even steps (a profile, a sampled search) share their sines: past the first two
  // points of a run, each mode's angle ζξ + φ is turned by ζ·Δξ with a cached rotation, so
  // a point costs a few products per term instead of a sine. The run restarts from fresh sines every
  // WALK_STEPS points, and whenever the step changes by more than 1e-15, so an angle drifts from its
  // direct value by at most WALK_STEPS·ζ·1e-15 rad plus rounding.
  private walkLast = NaN; // position of the previous point
  private walkGap = NaN; // step before it
  private walkLeft = 0; // rotations left before fresh sines (0: not walking)
  private walkN = 0; // modes the walk carries
  private walkSin: Float64Array | null = null; // sin and cos of each mode's angle at walkLast
  private walkCos: Float64Array | null = null;
  private turnCos: Float64Array | null = null; // cos and sin of ζ·walkGap
  private turnSin: Float64Array | null = null;

  protected sumModes(s: number, n: number, d: number[]): number {
    const amp = this.amp;
    const gap = s - this.walkLast;
    const even = Math.abs(gap - this.walkGap) <= 1e-15 && gap !== 0;
    this.walkGap = gap;
    this.walkLast = s;
    let sum = 0;
    if (even && this.walkLeft > 0 && n === this.walkN) {
      const sn = this.walkSin!;
      const cs = this.walkCos!;
      const tc = this.turnCos!;
      const ts = this.turnSin!;
      for (let i = 0; i < n; i++) {
        const si = sn[i] * tc[i] + cs[i] * ts[i];
        cs[i] = cs[i] * tc[i] - sn[i] * ts[i];
        sn[i] = si;
        sum += amp[i] * d[i] * si;
      }
      this.walkLeft--;
      return sum;
    }
    const z = this.zeta;
    const phi = this.phases();
    if (!even) {
      this.walkLeft = 0;
      for (let i = 0; i < n; i++) sum += amp[i] * d[i] * Math.sin(z[i] * s + phi[i]);
      return sum;
    }
    // Third point of an even run (or a run that ran out): fresh sines, cosines and rotations.
    if (!this.walkSin || this.walkSin.length < n) {
      const size = Math.max(n, 8);
      this.walkSin = new Float64Array(size);
      this.walkCos = new Float64Array(size);
      this.turnCos = new Float64Array(size);
      this.turnSin = new Float64Array(size);
    }
    const sn = this.walkSin;
    const cs = this.walkCos!;
    const tc = this.turnCos!;
    const ts = this.turnSin!;
    for (let i = 0; i < n; i++) {
      const angle = z[i] * s + phi[i];
      sn[i] = Math.sin(angle);
      cs[i] = Math.cos(angle);
      tc[i] = Math.cos(z[i] * gap);
      ts[i] = Math.sin(z[i] * gap);
      sum += amp[i] * d[i] * sn[i];
    }
    this.walkN = n;
    this.walkLeft = WALK_STEPS;
    return sum;
  }

  /** The series at fo, truncated where its tail is below tol/10; null past the term cap. */
  state(fo: number): ModalState | null {
    if (fo === 0) return this.start.kind === "uniform" ? { constant: this.start.u, zeta: [], phi: [], amp: [], symmetric: true } : null;
    const n = this.stored(this.countTerms(fo));
    if (n === 0) return null;
    const d = this.decays(fo, n);
    return {
      constant: 0,
      zeta: this.zeta.slice(0, n),
      phi: this.phases().slice(0, n),
      amp: this.amp.slice(0, n).map((a, i) => a * d[i]),
      symmetric: this.stride === 2,
    };
  }

  protected initial(s: number): number {
    return this.start.kind === "uniform" ? this.start.u : this.start.u(s);
  }

  protected initialMean(): number {
    return this.start.kind === "uniform" ? this.start.u : this.startMean;
  }

  protected early(s: number, fo: number): number {
    const st = this.start;
    const u0 = st.kind === "uniform" ? st.u : st.u(0);
    const u1 = st.kind === "uniform" ? st.u : st.u(1);
    const g0 = st.kind === "uniform" ? 0 : st.slope0;
    const g1 = st.kind === "uniform" ? 0 : -st.slope1;
    return this.initial(s) + faceResponse(s, fo, this.b0, u0, g0) + faceResponse(1 - s, fo, this.b1, u1, g1);
  }

  protected earlyMean(fo: number): number {
    const st = this.start;
    const u0 = st.kind === "uniform" ? st.u : st.u(0);
    const u1 = st.kind === "uniform" ? st.u : st.u(1);
    const g0 = st.kind === "uniform" ? 0 : st.slope0;
    const g1 = st.kind === "uniform" ? 0 : -st.slope1;
    const reach = Math.min(1, 2 * FAR * Math.sqrt(fo));
    const layer0 = integrate((s) => faceResponse(s, fo, this.b0, u0, g0), 0, reach, 16);
    const layer1 = integrate((s) => faceResponse(s, fo, this.b1, u1, g1), 0, reach, 16);
    return this.initialMean() + layer0 + layer1;
  }
}

/**
 * Infinite cylinder or sphere, radius 1, uniform start U, surface Biot number bi = hR/k.
 * Cylinder: θ = Σ Cₙ J0(ζₙ r) exp(−ζₙ²Fo), ζ J1(ζ)/J0(ζ) = Bi (Incropera & DeWitt §5.6.1, Table 5.1);
 * mean weight 2 J1(ζₙ)/ζₙ (Incropera & DeWitt §5.6.1, energy ratio term by term).
 * Sphere: θ = Σ Cₙ sin(ζₙ r)/(ζₙ r) exp(−ζₙ²Fo), 1 − ζ cot ζ = Bi (Incropera & DeWitt §5.6.2, Table 5.1);
 * mean weight 3 (sin ζₙ − ζₙ cos ζₙ)/ζₙ³ (Incropera & DeWitt §5.6.2, energy ratio term by term).
 */
class RadialSeries extends ModalSeries {
  constructor(
    private readonly sphere: boolean,
    private readonly bi: number,
    private readonly u: number,
    tol: number,
    cap: number,
  ) {
    super(tol, cap);
  }

  protected ampTail(): number {
    // |Cₙ| ≤ 2 with |eigenfunction| ≤ 1 (checked over Bi from 1e-4 to ∞ in the tests); the
    // Dirichlet sphere has |Cₙ| = 2 for every n.
    return 2 * Math.abs(this.u);
  }

  protected computeMode(i: number): void {
    const n = i + 1;
    const z = this.sphere ? sphereRoot(this.bi, n) : cylinderRoot(this.bi, n);
    const c = this.u * (this.sphere ? sphereCoefficient(z) : cylinderCoefficient(z));
    const meanW = this.sphere ? (3 * sinMinusXCos(z)) / (z * z * z) : (2 * besselJ1(z)) / z;
    this.zeta[i] = z;
    this.amp[i] = c;
    this.ampCentre[i] = c;
    this.ampMean[i] = c * meanW;
  }

  protected eigen(i: number, r: number): number {
    const x = this.zeta[i] * r;
    if (this.sphere) return x === 0 ? 1 : Math.sin(x) / x;
    return besselJ0(x);
  }

  protected initial(): number {
    return this.u;
  }

  protected initialMean(): number {
    return this.u;
  }

  protected centreS(): number {
    return 0;
  }

  // v = r·u (sphere) or v = √r·u (cylinder, dropping v/(4r²), of relative size Fo in the thin layer)
  // obeys the slab equation near r = 1 with the effective face Biot number Bi − 1 or Bi − ½
  // (Carslaw & Jaeger, ch. IX for the sphere's v = r·u; ch. VII for the cylinder). The start is linear to first order in
  // the distance from the surface: v ≈ U(1 − s) or U(1 − s/2).
  private layer(r: number, fo: number): number {
    const p = this.sphere ? 1 : 0.5;
    const biEff = this.bi === Infinity ? Infinity : this.bi - p;
    const w = faceResponse(1 - r, fo, biEff, this.u, -p * this.u);
    if (w === 0 || r === 0) return 0;
    return w / (this.sphere ? r : Math.sqrt(r));
  }

  protected early(r: number, fo: number): number {
    return this.u + this.layer(r, fo);
  }

  protected earlyMean(fo: number): number {
    const reach = Math.min(1, 2 * FAR * Math.sqrt(fo));
    const weight = this.sphere ? (r: number) => 3 * r * r : (r: number) => 2 * r;
    return this.u + integrate((r) => this.layer(r, fo) * weight(r), 1 - reach, 1, 16);
  }
}

// ---------------------------------------------------------------------------------------------
// Solutions.

function toBiot(h: SurfaceH, lengthM: number, k: number): number {
  if (h === "inf" || h === Infinity) return Infinity;
  if (!(h >= 0) || !Number.isFinite(h)) throw new RangeError(`surface coefficient must be ≥ 0 or "inf", got ${h}`);
  return (h * lengthM) / k;
}

function checkLength(name: string, v: number): void {
  if (!(v > 0) || !Number.isFinite(v)) throw new RangeError(`${name} must be a positive length, got ${v}`);
}

function checkTime(tS: number): void {
  if (!(tS >= 0) || !Number.isFinite(tS)) throw new RangeError(`time must be ≥ 0 s, got ${tS}`);
}

// The positions of the last batch evaluation that made new ones, on every solution's unit length.
let sharedPositions: { len: number; at: readonly number[]; unit: readonly number[] } | null = null;

abstract class BaseSolution implements Solution {
  constructor(
    readonly geometry: Geometry,
    readonly material: Conductor,
    readonly ambientC: number,
    readonly tolK: number,
  ) {}

  abstract temperatureAt(tS: number, at: number | BlockPoint): number;
  abstract centerC(tS: number): number;
  abstract warmestC(tS: number): number;
  abstract meanC(tS: number): number;
  abstract terms(tS: number): number;
  protected abstract extentM(): number;
  protected abstract lineC(tS: number, xM: number): number;
  /** L²/α of the body's shortest conduction length, s. */
  protected abstract timeScaleS(): number;

  profile(tS: number, points = 41): { xM: number[]; c: number[] } {
    checkTime(tS);
    const n = Math.max(2, Math.floor(points));
    const len = this.extentM();
    const xM: number[] = [];
    for (let i = 0; i < n; i++) xM.push((len * i) / (n - 1));
    const c = this.temperaturesAt(tS, xM, scratchProfile(n));
    const out: number[] = [];
    for (let i = 0; i < n; i++) out.push(c[i]);
    return { xM, c: out };
  }


  // Positions on the unit length for a batch evaluation, kept between calls for the same positions
  // (the series keep their eigenfunction values for them).
  private lastAt: readonly number[] | null = null;
  private lastUnit: readonly number[] | null = null;
  protected unitPositions(atM: ArrayLike<number>): readonly number[] {
    const m = atM.length;
    const len = this.extentM();
    const last = this.lastAt;
    let same = last !== null && last.length === m;
    for (let j = 0; same && j < m; j++) same = last![j] === atM[j];
    if (!same || !this.lastUnit) {
      // A new solution asked for the positions the last one was (a fit's trials, the same picture for
      // many pans of one depth): their unit positions are shared, never changed once made.
      const shared = sharedPositions;
      let hit = shared !== null && shared.len === len && shared.at.length === m;
      for (let j = 0; hit && j < m; j++) hit = shared!.at[j] === atM[j];
      if (hit) {
        this.lastAt = shared!.at;
        this.lastUnit = shared!.unit;
      } else {
        const at: number[] = Array.prototype.slice.call(atM);
        const u = at.slice();
        for (let j = 0; j < m; j++) u[j] = Math.min(1, Math.max(0, u[j] / len));
        this.lastAt = at;
        this.lastUnit = u;
        sharedPositions = { len, at, unit: u };
      }
    }
    return this.lastUnit;
  }

  abstract temperaturesAt(tS: number, atM: ArrayLike<number>, out?: Float64Array): Float64Array;

  /** temperaturesAt for a body with one series along its depth or radius. */
  protected alongSeries(series: Series1D, foPerS: number, tS: number, atM: ArrayLike<number>, out?: Float64Array): Float64Array {
    checkTime(tS);
    const m = atM.length;
    const res = out ?? new Float64Array(m);
    series.valuesAt(this.unitPositions(atM), tS * foPerS, res);
    const a = this.ambientC;
    for (let j = 0; j < m; j++) res[j] = a + res[j];
    return res;
  }

  reachTime(targetC: number, which: Probe, maxS = 48 * 3600, near?: number): number | null {
    const g = (t: number) => this.probeC(which, t) - targetC;
    const g0 = g(0);
    if (g0 <= 0) return 0;
    if (this.ambientC >= targetC) return null;
    if (near !== undefined && near > 0 && 1.02 * near < maxS) {
      const lo = 0.98 * near;
      const hi = 1.02 * near;
      const fa = g(lo);
      if (fa > 0) {
        const fb = g(hi);
        if (fb <= 0) return findRootBrent(g, lo, hi, 0.5, { fa, fb });
      }
    }
    let tPrev = 0;
    let fPrev = g0;
    // Grid from Fo = 0.001 (where a few tens of terms suffice), doubling: a cooling core falls
    // monotonically, so the grid only brackets the crossing for Brent; it need not be fine. The
    // grid's values are kept per probe: the next target on this solution walks the same grid.
    let k = 0;
    for (let t = 1e-3 * this.timeScaleS(); tPrev < maxS; t *= 2, k++) {
      const tNow = Math.min(t, maxS);
      const v = (tNow === t ? this.gridC(which, k, t) : this.probeC(which, tNow)) - targetC;
      if (v <= 0) return findRootBrent(g, tPrev, tNow, 0.5, { fa: fPrev, fb: v });
      tPrev = tNow;
      fPrev = v;
    }
    return null;
  }

  private probeC(which: Probe, tS: number): number {
    return which === "center" ? this.centerC(tS) : which === "mean" ? this.meanC(tS) : this.warmestC(tS);
  }

  // Probe values on reachTime's grid, by probe: k-th point at 0.001 × 2^k time scales.
  private gridValues: Partial<Record<Probe, number[]>> | null = null;
  private gridC(which: Probe, k: number, tS: number): number {
    const memo = (this.gridValues ??= {});
    const values = (memo[which] ??= []);
    if (k < values.length) return values[k];
    const v = this.probeC(which, tS);
    if (k === values.length) values.push(v);
    return v;
  }
}

/** Slab, uniform or non-uniform start. */
class SlabSolution extends BaseSolution {
  readonly depthM: number;
  private readonly foPerS: number;

  constructor(
    geometry: Extract<Geometry, { shape: "slab" }>,
    material: Conductor,
    ambientC: number,
    tolK: number,
    readonly series: Series1D,
    readonly initialC: (xM: number) => number,
  ) {
    super(geometry, material, ambientC, tolK);
    this.depthM = geometry.depthM;
    this.foPerS = material.alpha / (this.depthM * this.depthM);
  }

  protected extentM(): number {
    return this.depthM;
  }

  protected timeScaleS(): number {
    return 1 / this.foPerS;
  }

  protected lineC(tS: number, xM: number): number {
    return this.ambientC + this.series.value(xM / this.depthM, tS * this.foPerS);
  }

  temperaturesAt(tS: number, atM: ArrayLike<number>, out?: Float64Array): Float64Array {
    return this.alongSeries(this.series, this.foPerS, tS, atM, out);
  }

  temperatureAt(tS: number, at: number | BlockPoint): number {
    checkTime(tS);
    if (typeof at !== "number") throw new TypeError("a slab takes a depth in metres");
    const s = Math.min(1, Math.max(0, at / this.depthM));
    return this.ambientC + this.series.value(s, tS * this.foPerS);
  }

  centerC(tS: number): number {
    checkTime(tS);
    return this.ambientC + this.series.centre(tS * this.foPerS);
  }

  meanC(tS: number): number {
    checkTime(tS);
    return this.ambientC + this.series.mean(tS * this.foPerS);
  }

  warmestC(tS: number): number {
    checkTime(tS);
    const fo = tS * this.foPerS;
    return this.ambientC + maximiseOnUnit((s) => this.series.value(s, fo)).v;
  }

  terms(tS: number): number {
    checkTime(tS);
    return tS === 0 ? 0 : this.series.terms(tS * this.foPerS);
  }
}

/** Cylinder or sphere, uniform start. */
class RadialSolution extends BaseSolution {
  private readonly foPerS: number;

  constructor(
    geometry: Extract<Geometry, { shape: "cylinder" | "sphere" }>,
    material: Conductor,
    ambientC: number,
    tolK: number,
    private readonly series: Series1D,
  ) {
    super(geometry, material, ambientC, tolK);
    this.foPerS = material.alpha / (geometry.radiusM * geometry.radiusM);
  }

  private get radiusM(): number {
    return (this.geometry as Extract<Geometry, { shape: "cylinder" | "sphere" }>).radiusM;
  }

  protected extentM(): number {
    return this.radiusM;
  }

  protected timeScaleS(): number {
    return 1 / this.foPerS;
  }

  protected lineC(tS: number, rM: number): number {
    return this.ambientC + this.series.value(Math.min(1, Math.max(0, rM / this.radiusM)), tS * this.foPerS);
  }

  temperaturesAt(tS: number, atM: ArrayLike<number>, out?: Float64Array): Float64Array {
    return this.alongSeries(this.series, this.foPerS, tS, atM, out);
  }

  temperatureAt(tS: number, at: number | BlockPoint): number {
    checkTime(tS);
    if (typeof at !== "number") throw new TypeError("a cylinder or sphere takes a radius in metres");
    return this.lineC(tS, at);
  }

  centerC(tS: number): number {
    checkTime(tS);
    return this.ambientC + this.series.centre(tS * this.foPerS);
  }

  meanC(tS: number): number {
    checkTime(tS);
    return this.ambientC + this.series.mean(tS * this.foPerS);
  }

  warmestC(tS: number): number {
    checkTime(tS);
    const fo = tS * this.foPerS;
    return this.ambientC + maximiseOnUnit((r) => this.series.value(r, fo)).v;
  }

  terms(tS: number): number {
    checkTime(tS);
    return tS === 0 ? 0 : this.series.terms(tS * this.foPerS);
  }
}

/** T − T∞ = Σ amplitude · θx(x)·θy(y)·θz(z): one product for a uniform start, one more per move. */
interface ProductTerm {
  amplitude: number;
  factors: [Series1D, Series1D, Series1D];
}

/** Rectangular block: products of slab solutions (Incropera & DeWitt §5.8). */
class BlockSolution extends BaseSolution {
  readonly dims: [number, number, number];
  readonly foPerS: [number, number, number];

  constructor(
    geometry: Extract<Geometry, { shape: "block" }>,
    material: Conductor,
    ambientC: number,
    tolK: number,
    readonly products: ProductTerm[],
  ) {
    super(geometry, material, ambientC, tolK);
    this.dims = [geometry.lengthM, geometry.widthM, geometry.depthM];
    this.foPerS = [
      material.alpha / (geometry.lengthM * geometry.lengthM),
      material.alpha / (geometry.widthM * geometry.widthM),
      material.alpha / (geometry.depthM * geometry.depthM),
    ];
  }

  private at3(tS: number, sx: number, sy: number, sz: number): number {
    const [fx, fy, fz] = this.foPerS;
    let sum = 0;
    for (const p of this.products) {
      const [x, y, z] = p.factors;
      sum += p.amplitude * x.value(sx, tS * fx) * y.value(sy, tS * fy) * z.value(sz, tS * fz);
    }
    return this.ambientC + sum;
  }

  protected extentM(): number {
    return this.dims[2];
  }

  protected timeScaleS(): number {
    return 1 / Math.max(...this.foPerS);
  }

  // On the vertical centre line the two wall factors are at their centres.
  protected lineC(tS: number, zM: number): number {
    const [fx, fy, fz] = this.foPerS;
    const sz = Math.min(1, Math.max(0, zM / this.dims[2]));
    let sum = 0;
    for (const p of this.products) {
      const [x, y, z] = p.factors;
      sum += p.amplitude * x.centre(tS * fx) * y.centre(tS * fy) * z.value(sz, tS * fz);
    }
    return this.ambientC + sum;
  }

  temperaturesAt(tS: number, atM: ArrayLike<number>, out?: Float64Array): Float64Array {
    checkTime(tS);
    const m = atM.length;
    const res = out ?? new Float64Array(m);
    const s = this.unitPositions(atM);
    const f = this.foPerS;
    const tmp = scratchFactor(m);
    res.fill(0, 0, m);
    for (const p of this.products) {
      // The two wall factors at the centre line, then the vertical factor at every depth; the same
      // order of products as one point.
      const k = p.amplitude * p.factors[0].centre(tS * f[0]) * p.factors[1].centre(tS * f[1]);
      p.factors[2].valuesAt(s, tS * f[2], tmp);
      for (let j = 0; j < m; j++) res[j] += k * tmp[j];
    }
    const a = this.ambientC;
    for (let j = 0; j < m; j++) res[j] = a + res[j];
    return res;
  }

  temperatureAt(tS: number, at: number | BlockPoint): number {
    checkTime(tS);
    if (typeof at === "number") return this.lineC(tS, at);
    const [lx, ly, lz] = this.dims;
    const clamp = (v: number) => Math.min(1, Math.max(0, v));
    return this.at3(tS, clamp(at.xM / lx), clamp(at.yM / ly), clamp(at.zM / lz));
  }

  centerC(tS: number): number {
    checkTime(tS);
    const [fx, fy, fz] = this.foPerS;
    let sum = 0;
    for (const p of this.products) {
      const [x, y, z] = p.factors;
      sum += p.amplitude * x.centre(tS * fx) * y.centre(tS * fy) * z.centre(tS * fz);
    }
    return this.ambientC + sum;
  }

  meanC(tS: number): number {
    checkTime(tS);
    const [fx, fy, fz] = this.foPerS;
    let sum = 0;
    for (const p of this.products) {
      const [x, y, z] = p.factors;
      sum += p.amplitude * x.mean(tS * fx) * y.mean(tS * fy) * z.mean(tS * fz);
    }
    return this.ambientC + sum;
  }

  warmestC(tS: number): number {
    checkTime(tS);
    const fo = this.foPerS.map((f) => f * tS);
    if (this.products.length === 1) {
      // A product is linear in each factor, so its extremes over the box sit at each factor's own
      // extremes: eight candidates.
      const p = this.products[0];
      const ranges = p.factors.map((f, i) => {
        const hi = maximiseOnUnit((s) => f.value(s, fo[i])).v;
        const lo = -maximiseOnUnit((s) => -f.value(s, fo[i])).v;
        return [lo, hi];
      });
      let best = -Infinity;
      for (const a of ranges[0])
        for (const b of ranges[1]) for (const c of ranges[2]) best = Math.max(best, p.amplitude * a * b * c);
      return this.ambientC + best;
    }
    // Several products: coarse grid, then coordinate-wise golden-section sweeps. Along one axis
    // the other two factors of each product are constants, so each sweep evaluates one factor.
    const products = this.products;
    const grid = 8;
    const values = products.map((p) =>
      p.factors.map((f, axis) => Array.from({ length: grid + 1 }, (_, i) => f.value(i / grid, fo[axis]))),
    );
    const pt = [0.5, 0.5, 0.5];
    let best = -Infinity;
    for (let i = 0; i <= grid; i++)
      for (let j = 0; j <= grid; j++)
        for (let k = 0; k <= grid; k++) {
          let v = 0;
          for (let p = 0; p < products.length; p++) {
            v += products[p].amplitude * values[p][0][i] * values[p][1][j] * values[p][2][k];
          }
          if (v > best) {
            best = v;
            pt[0] = i / grid;
            pt[1] = j / grid;
            pt[2] = k / grid;
          }
        }
    for (let sweep = 0; sweep < 3; sweep++) {
      for (let axis = 0; axis < 3; axis++) {
        const weight = products.map((p) => {
          let w = p.amplitude;
          for (let other = 0; other < 3; other++) {
            if (other !== axis) w *= p.factors[other].value(pt[other], fo[other]);
          }
          return w;
        });
        const r = maximiseOnUnit((u) => {
          let v = 0;
          for (let p = 0; p < products.length; p++) v += weight[p] * products[p].factors[axis].value(u, fo[axis]);
          return v;
        });
        if (r.v >= best) {
          best = r.v;
          pt[axis] = r.s;
        }
      }
    }
    return this.ambientC + best;
  }

  terms(tS: number): number {
    checkTime(tS);
    if (tS === 0) return 0;
    let n = 0;
    for (const p of this.products) p.factors.forEach((f, i) => (n += f.terms(tS * this.foPerS[i])));
    return n;
  }
}

// ---------------------------------------------------------------------------------------------
// Construction.

function checkMaterial(m: Conductor): void {
  if (!(m.k > 0) || !(m.alpha > 0) || !Number.isFinite(m.k) || !Number.isFinite(m.alpha)) {
    throw new RangeError("conductivity and diffusivity must be positive");
  }
}

function slabSeries(
  b0: number,
  b1: number,
  start: SlabStart,
  tol: number,
  cap: number,
  preferSeries = false,
): Series1D {
  if (start.kind === "uniform" && (start.u === 0 || (b0 === 0 && b1 === 0))) {
    return new ConstantSeries(start.u);
  }
  return new SlabSeries(b0, b1, start, tol, cap, preferSeries);
}

// Slope du/dξ at a face of a profile given as a function, by a one-sided three-point difference.
function faceSlope(u: (s: number) => number, atTop: boolean): number {
  const h = 1e-5;
  if (atTop) return (3 * u(1) - 4 * u(1 - h) + u(1 - 2 * h)) / (2 * h);
  return (-3 * u(0) + 4 * u(h) - u(2 * h)) / (2 * h);
}

// Largest |u''| seen by second differences on 1024 intervals (a kink counts as a steep bend).
function curvatureOf(u: (s: number) => number): number {
  const n = 1024;
  let prev = u(0);
  let here = u(1 / n);
  let m = 0;
  for (let i = 2; i <= n; i++) {
    const next = u(i / n);
    m = Math.max(m, Math.abs(next - 2 * here + prev));
    prev = here;
    here = next;
  }
  return m * n * n;
}

function profileStart(u: (s: number) => number, segments: number, slopes?: [number, number]): SlabStart {
  return {
    kind: "profile",
    u,
    slope0: slopes ? slopes[0] : faceSlope(u, false),
    slope1: slopes ? slopes[1] : faceSlope(u, true),
    curvature: curvatureOf(u),
    segments,
  };
}

// Start of a continued slab: the old solution's state (plus a constant), its slopes and curvature
// bound in closed form.
function modalStart(u: (s: number) => number, modes: ModalState): SlabStart {
  let slope0 = 0;
  let slope1 = 0;
  let curvature = 0;
  for (let j = 0; j < modes.zeta.length; j++) {
    const z = modes.zeta[j];
    slope0 += modes.amp[j] * z * Math.cos(modes.phi[j]);
    slope1 += modes.amp[j] * z * Math.cos(z + modes.phi[j]);
    curvature += Math.abs(modes.amp[j]) * z * z;
  }
  return { kind: "profile", u, slope0, slope1, curvature, segments: 0, modes };
}

// The start of a continued slab (or block factor): in closed form from the old series where it has
// one at the moment of the move, by quadrature of its values otherwise.
function continuedStart(old: Series1D, fo: number, shift: number): SlabStart {
  const u = (s: number) => old.value(s, fo) + shift;
  const state = old.state?.(fo);
  if (!state) return profileStart(u, 0);
  if (state.zeta.length === 0) return { kind: "uniform", u: state.constant + shift };
  return modalStart(u, { ...state, constant: state.constant + shift });
}

// A uniform start as a function of depth. Built here rather than inline: a closure assigned to a
// named variable may be given its name at run time by some build tools, which costs more than the
// rest of a new solution's set-up.
function uniformC(c: number): (xM: number) => number {
  return () => c;
}

/**
 * Solution of the heat equation for `geometry` and `material` from `initial` (°C) with every face
 * exchanging heat with one ambient at ambientC. Roots and coefficients are computed on first use and
 * kept; each evaluation sums only the terms its time needs.
 */
export function solveConduction(
  geometry: Geometry,
  material: Conductor,
  initial: Initial,
  ambientC: number,
  opts: ConductionOptions = {},
): Solution {
  checkMaterial(material);
  const tolK = opts.tolK ?? DEFAULT_TOL_K;
  const cap = opts.maxTerms ?? DEFAULT_MAX_TERMS;
  const prefer = opts.preferSeries ?? false;
  if (!(tolK > 0)) throw new RangeError("tolK must be positive");
  const { k } = material;

  if (geometry.shape === "slab") {
    checkLength("depthM", geometry.depthM);
    const L = geometry.depthM;
    const b0 = toBiot(geometry.bottomH, L, k);
    const b1 = toBiot(geometry.topH, L, k);
    let start: SlabStart;
    let initialC: (xM: number) => number;
    if (typeof initial === "number") {
      start = { kind: "uniform", u: initial - ambientC };
      initialC = uniformC(initial);
    } else if (typeof initial === "function") {
      const u = (s: number) => initial(s * L) - ambientC;
      start = profileStart(u, 0);
      initialC = initial;
    } else {
      const samples = Float64Array.from(initial.samplesC);
      const seg = samples.length - 1;
      if (seg < 1) throw new RangeError("samplesC needs at least two samples");
      const u = (s: number) => {
        const x = Math.min(seg, Math.max(0, s * seg));
        const j = Math.min(seg - 1, Math.floor(x));
        return samples[j] + (x - j) * (samples[j + 1] - samples[j]) - ambientC;
      };
      start = profileStart(u, seg, [(samples[1] - samples[0]) * seg, (samples[seg] - samples[seg - 1]) * seg]);
      initialC = (xM: number) => u(xM / L) + ambientC;
    }
    return new SlabSolution(geometry, material, ambientC, tolK, slabSeries(b0, b1, start, tolK, cap, prefer), initialC);
  }

  if (typeof initial !== "number") {
    throw new RangeError("a non-uniform initial temperature is supported for slabs only");
  }
  const u = initial - ambientC;

  if (geometry.shape === "cylinder" || geometry.shape === "sphere") {
    checkLength("radiusM", geometry.radiusM);
    const bi = toBiot(geometry.h, geometry.radiusM, k);
    const series =
      bi === 0 || u === 0 ? new ConstantSeries(u) : new RadialSeries(geometry.shape === "sphere", bi, u, tolK, cap);
    return new RadialSolution(geometry, material, ambientC, tolK, series);
  }

  checkLength("lengthM", geometry.lengthM);
  checkLength("widthM", geometry.widthM);
  checkLength("depthM", geometry.depthM);
  // Each factor is θ in [0, 1]; three factors share the error budget.
  const tol = u === 0 ? 1 : tolK / (3 * Math.abs(u));
  const bx = toBiot(geometry.wallH, geometry.lengthM, k);
  const by = toBiot(geometry.wallH, geometry.widthM, k);
  const bz0 = toBiot(geometry.bottomH, geometry.depthM, k);
  const bz1 = toBiot(geometry.topH, geometry.depthM, k);
  const one: SlabStart = { kind: "uniform", u: 1 };
  const factors: [Series1D, Series1D, Series1D] = [
    slabSeries(bx, bx, one, tol, cap, prefer),
    slabSeries(by, by, one, tol, cap, prefer),
    slabSeries(bz0, bz1, one, tol, cap, prefer),
  ];
  return new BlockSolution(geometry, material, ambientC, tolK, [{ amplitude: u, factors }]);
}

/**
 * The body's state at tSwitchS (s) in `solution` becomes the start of a new solution with new surface
 * coefficients (same shape and size) and, optionally, a new ambient: a batch moved from a walk-in to
 * an ice bath. Time in the new solution counts from the move. Slabs and blocks only.
 * A block stays exact: its state is a sum of products of slab profiles, and each slab profile evolves
 * on its own; a new ambient adds one uniform product.
 */
export function continueFrom(
  solution: Solution,
  tSwitchS: number,
  geometry: Geometry,
  ambientC: number = solution.ambientC,
  opts: ConductionOptions = {},
): Solution {
  checkTime(tSwitchS);
  const tolK = opts.tolK ?? solution.tolK;
  const cap = opts.maxTerms ?? DEFAULT_MAX_TERMS;
  const material = solution.material;
  const k = material.k;

  if (solution instanceof SlabSolution && geometry.shape === "slab") {
    if (Math.abs(geometry.depthM - solution.depthM) > 1e-12 * solution.depthM) {
      throw new RangeError("continueFrom keeps the body's size");
    }
    const L = geometry.depthM;
    const shift = solution.ambientC - ambientC;
    const fo = (tSwitchS * material.alpha) / (L * L);
    const old = solution.series;
    const u = (s: number) => old.value(s, fo) + shift;
    const start = continuedStart(old, fo, shift);
    const series = slabSeries(
      toBiot(geometry.bottomH, L, k),
      toBiot(geometry.topH, L, k),
      start,
      tolK,
      cap,
      opts.preferSeries,
    );
    return new SlabSolution(geometry, material, ambientC, tolK, series, (xM) => u(xM / L) + ambientC);
  }

  if (solution instanceof BlockSolution && geometry.shape === "block") {
    const dims = [geometry.lengthM, geometry.widthM, geometry.depthM];
    if (dims.some((d, i) => Math.abs(d - solution.dims[i]) > 1e-12 * d)) {
      throw new RangeError("continueFrom keeps the body's size");
    }
    const shift = solution.ambientC - ambientC;
    const total = solution.products.reduce((s, p) => s + Math.abs(p.amplitude), 0) + Math.abs(shift);
    const tol = total === 0 ? 1 : tolK / (3 * total);
    const biots: [number, number][] = [
      [toBiot(geometry.wallH, dims[0], k), toBiot(geometry.wallH, dims[0], k)],
      [toBiot(geometry.wallH, dims[1], k), toBiot(geometry.wallH, dims[1], k)],
      [toBiot(geometry.bottomH, dims[2], k), toBiot(geometry.topH, dims[2], k)],
    ];
    const products: ProductTerm[] = solution.products.map((p) => ({
      amplitude: p.amplitude,
      factors: p.factors.map((f, i) => {
        const fo = tSwitchS * solution.foPerS[i];
        const start = continuedStart(f, fo, 0);
        return slabSeries(biots[i][0], biots[i][1], start, tol, cap, opts.preferSeries);
      }) as [Series1D, Series1D, Series1D],
    }));
    if (shift !== 0) {
      const one: SlabStart = { kind: "uniform", u: 1 };
      products.push({
        amplitude: shift,
        factors: biots.map(([a, b]) => slabSeries(a, b, one, tol, cap, opts.preferSeries)) as [
          Series1D,
          Series1D,
          Series1D,
        ],
      });
    }
    return new BlockSolution(geometry, material, ambientC, tolK, products);
  }

  throw new RangeError("continueFrom needs a slab or block solution and the same shape");
}
