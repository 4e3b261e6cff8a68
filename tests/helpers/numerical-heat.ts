// Independent reference for the conduction engine: finite volumes in space (method of lines) and
// Crank–Nicolson in time, started with implicit Euler steps (Rannacher) so the jump between the start
// and a fixed-temperature face does not ring. Nothing here shares code with app/lib/engine.

import { createRequire } from "node:module";

// odex ships TypeScript sources that do not pass this project's strict checks: load the compiled
// module and describe the little of it used here.
interface OdexSolver {
  absoluteTolerance: number;
  relativeTolerance: number;
  maxSteps: number;
  solve(f: (t: number, y: number[]) => number[], t0: number, y0: number[], t1: number): { y: number[] };
}
const { Solver } = createRequire(import.meta.url)("odex") as { Solver: new (n: number) => OdexSolver };

export type FaceH = number | "inf";

/** The semi-discrete system dT/dt = lower·T[i−1] + diag·T[i] + upper·T[i+1] + source. */
export interface LineSystem {
  centresM: number[];
  lower: Float64Array;
  diag: Float64Array;
  upper: Float64Array;
  source: Float64Array;
  /** Cell volumes (per unit area or per radian), for averages. */
  volume: Float64Array;
}

// Conductance per unit area from the face's neighbouring cell centre (half a cell away) to the ambient.
function faceConductance(h: FaceH, halfCellM: number, k: number): number {
  if (h === "inf") return k / halfCellM;
  if (h === 0) return 0;
  return 1 / (1 / h + halfCellM / k);
}

/**
 * Cells on 0 ≤ r ≤ extent with face areas r^p (p = 0 slab, 1 cylinder, 2 sphere). The face at 0 is a
 * surface for a slab (h0) and the axis or centre for the curved bodies.
 */
export function buildLineSystem(opts: {
  power: 0 | 1 | 2;
  extentM: number;
  cells: number;
  k: number;
  alpha: number;
  h0: FaceH;
  h1: FaceH;
  ambientC: number;
}): LineSystem {
  const { power, extentM, cells: m, k, alpha, h0, h1, ambientC } = opts;
  const dr = extentM / m;
  const area = (r: number) => (power === 0 ? 1 : r ** power);
  const lower = new Float64Array(m);
  const diag = new Float64Array(m);
  const upper = new Float64Array(m);
  const source = new Float64Array(m);
  const volume = new Float64Array(m);
  const centresM: number[] = [];
  for (let i = 0; i < m; i++) {
    const rl = i * dr;
    const rr = (i + 1) * dr;
    centresM.push((i + 0.5) * dr);
    volume[i] = power === 0 ? dr : (rr ** (power + 1) - rl ** (power + 1)) / (power + 1);
    // α/V × (area × k/Δr) / k: conductances written per unit k so α carries the capacity.
    const v = volume[i];
    if (i > 0) {
      lower[i] = (alpha * area(rl)) / (dr * v);
      diag[i] -= lower[i];
    } else if (power === 0) {
      const g = faceConductance(h0, dr / 2, k) / k;
      diag[i] -= (alpha * g) / v;
      source[i] += ((alpha * g) / v) * ambientC;
    }
    if (i < m - 1) {
      upper[i] = (alpha * area(rr)) / (dr * v);
      diag[i] -= upper[i];
    } else {
      const g = (faceConductance(h1, dr / 2, k) / k) * area(rr);
      diag[i] -= (alpha * g) / v;
      source[i] += ((alpha * g) / v) * ambientC;
    }
  }
  return { centresM, lower, diag, upper, source, volume };
}

function solveTridiagonal(
  a: Float64Array,
  b: Float64Array,
  c: Float64Array,
  d: Float64Array,
  out: Float64Array,
  scratch: Float64Array,
): void {
  const n = b.length;
  scratch[0] = c[0] / b[0];
  out[0] = d[0] / b[0];
  for (let i = 1; i < n; i++) {
    const m = b[i] - a[i] * scratch[i - 1];
    scratch[i] = c[i] / m;
    out[i] = (d[i] - a[i] * out[i - 1]) / m;
  }
  for (let i = n - 2; i >= 0; i--) out[i] -= scratch[i] * out[i + 1];
}

/**
 * Temperatures of every cell at each requested time (ascending), by Crank–Nicolson with steps that
 * grow geometrically (factor 1 + growth) from a tiny first step to maxStepS: the fast modes a sharp
 * start excites have died out long before a step is large enough for them to ring.
 */
export function integrateCrankNicolson(
  sys: LineSystem,
  initial: number[],
  timesS: number[],
  opts: { growth?: number; maxStepS?: number; stats?: { steps: number } } = {},
): number[][] {
  const n = sys.diag.length;
  const growth = opts.growth ?? 0.05;
  const maxStep = opts.maxStepS ?? Math.max(...timesS) / 4000;
  let T = Float64Array.from(initial);
  let next = new Float64Array(n);
  const rhs = new Float64Array(n);
  const a = new Float64Array(n);
  const b = new Float64Array(n);
  const c = new Float64Array(n);
  const scratch = new Float64Array(n);
  const stiff = Math.max(...Array.from(sys.diag, Math.abs));
  let t = 0;
  let step = 1e-3 / stiff;
  let eulerSteps = 4;
  const out: number[][] = [];
  for (const target of timesS) {
    while (t < target - 1e-12) {
      const dt = Math.min(step, target - t);
      const theta = eulerSteps > 0 ? 1 : 0.5;
      for (let i = 0; i < n; i++) {
        const lo = i > 0 ? sys.lower[i] * T[i - 1] : 0;
        const up = i < n - 1 ? sys.upper[i] * T[i + 1] : 0;
        const explicit = lo + sys.diag[i] * T[i] + up;
        rhs[i] = T[i] + dt * ((1 - theta) * explicit + sys.source[i]);
        a[i] = -theta * dt * sys.lower[i];
        b[i] = 1 - theta * dt * sys.diag[i];
        c[i] = -theta * dt * sys.upper[i];
      }
      solveTridiagonal(a, b, c, rhs, next, scratch);
      const done = next;
      next = T;
      T = done;
      t += dt;
      if (opts.stats) opts.stats.steps++;
      if (eulerSteps > 0) eulerSteps--;
      else step = Math.min(maxStep, step * (1 + growth));
    }
    out.push(Array.from(T));
  }
  return out;
}

/** The same semi-discrete system integrated by odex (Gragg–Bulirsch–Stoer), to check the stepping. */
export function integrateWithOdex(sys: LineSystem, initial: number[], tS: number): number[] {
  const n = sys.diag.length;
  const solver = new Solver(n);
  solver.absoluteTolerance = 1e-9;
  solver.relativeTolerance = 1e-9;
  solver.maxSteps = 1e6;
  const f = (_t: number, y: number[]) => {
    const d = new Array<number>(n);
    for (let i = 0; i < n; i++) {
      const lo = i > 0 ? sys.lower[i] * y[i - 1] : 0;
      const up = i < n - 1 ? sys.upper[i] * y[i + 1] : 0;
      d[i] = lo + sys.diag[i] * y[i] + up + sys.source[i];
    }
    return d;
  };
  return solver.solve(f, 0, initial, tS).y;
}

/** Value at r from cell-centre values, linear between centres (constant beyond the end cells). */
export function interpolateCells(centresM: number[], values: number[], rM: number): number {
  const n = centresM.length;
  if (rM <= centresM[0]) return values[0];
  if (rM >= centresM[n - 1]) return values[n - 1];
  const dr = centresM[1] - centresM[0];
  const j = Math.min(n - 2, Math.floor((rM - centresM[0]) / dr));
  const w = (rM - centresM[j]) / dr;
  return values[j] + w * (values[j + 1] - values[j]);
}

/** Volume average of cell values. */
export function cellMean(sys: LineSystem, values: number[]): number {
  let s = 0;
  let v = 0;
  for (let i = 0; i < values.length; i++) {
    s += sys.volume[i] * values[i];
    v += sys.volume[i];
  }
  return s / v;
}

/** Slab of depth L, bottom face at x = 0: temperatures at the cell centres for each time. */
export function solveSlabNumerically(spec: {
  depthM: number;
  bottomH: FaceH;
  topH: FaceH;
  k: number;
  alpha: number;
  ambientC: number;
  initialC: (xM: number) => number;
  timesS: number[];
  cells?: number;
  /** Largest time step (s); by default the run is split into about 4000 steps. */
  maxStepS?: number;
  /** Growth of the steps from the tiny first one (0.05 by default: 5 % a step). */
  growth?: number;
  /** Filled with the number of steps taken (the start-up steps included). */
  stats?: { steps: number };
}): { sys: LineSystem; temperatures: number[][] } {
  const sys = buildLineSystem({
    power: 0,
    extentM: spec.depthM,
    cells: spec.cells ?? 200,
    k: spec.k,
    alpha: spec.alpha,
    h0: spec.bottomH,
    h1: spec.topH,
    ambientC: spec.ambientC,
  });
  const start = sys.centresM.map(spec.initialC);
  return { sys, temperatures: integrateCrankNicolson(sys, start, spec.timesS, { maxStepS: spec.maxStepS, growth: spec.growth, stats: spec.stats }) };
}

/** Cylinder or sphere of radius R, uniform start: temperatures at the cell centres for each time. */
export function solveRadialNumerically(spec: {
  shape: "cylinder" | "sphere";
  radiusM: number;
  h: FaceH;
  k: number;
  alpha: number;
  ambientC: number;
  initialC: number;
  timesS: number[];
  cells?: number;
}): { sys: LineSystem; temperatures: number[][] } {
  const sys = buildLineSystem({
    power: spec.shape === "cylinder" ? 1 : 2,
    extentM: spec.radiusM,
    cells: spec.cells ?? 200,
    k: spec.k,
    alpha: spec.alpha,
    h0: 0,
    h1: spec.h,
    ambientC: spec.ambientC,
  });
  const start = sys.centresM.map(() => spec.initialC);
  return { sys, temperatures: integrateCrankNicolson(sys, start, spec.timesS) };
}
