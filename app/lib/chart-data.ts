// Turns engine output into plot series for the cooling chart and the depth × time picture, plus the
// clock ticks, number formats and colours both share. Pure: no DOM, no platform clock, so the server
// and a tablet draw the same picture from the same numbers.
import type { Solution } from "./engine/conduction";
import type { StagePrediction } from "./engine/predict";
import { fromCelsius, type TemperatureUnit } from "./temperature";

/** A temperature (°C) at an instant (epoch ms). */
export type TemperaturePoint = { t: number; c: number };
/** The model's 90 % range of temperatures (°C) at an instant. */
export type BandPoint = { t: number; low: number; high: number };
/** Temperatures c[timeIndex][depthIndex] in °C; depths from the bottom face up, in millimetres. */
export type DepthTimeGrid = { times: number[]; depthsMm: number[]; c: number[][] };

/** Φ⁻¹(0.95): the half-width of a two-sided 90 % interval in standard deviations, as the engine's bands use. */
export const Z90 = 1.6448536269514722;

export const MAX_GRID_COLUMNS = 60;
export const MAX_GRID_ROWS = 30;

/**
 * Palette figures from app/app.css, as hex so an exported SVG (a PDF, an e-mail) keeps its colours
 * without the stylesheet. A unit test keeps the two equal.
 */
export const CHART_COLOURS = {
  ink: "#0f2430",
  inkSoft: "#3b5361",
  frost: "#eef5f7",
  frostDeep: "#d9e8ed",
  line: "#b9cdd5",
  glacier: "#0a6781",
  glacierDark: "#084f63",
  glacierLight: "#d5eef5",
  pine: "#1d6b45",
  amber: "#7a4f00",
  amberLight: "#fdf0cf",
  ember: "#a63a12",
  emberLight: "#fbe3d8",
} as const;

const secondsSince = (originMs: number, t: number) => Math.max(0, (t - originMs) / 1000);

/**
 * The model's core temperature from `fromMs` to `toMs` at `points` evenly spaced instants (both ends
 * included). `originMs` is the instant the solution's own clock counts from (the batch start, or the
 * counted reheat).
 */
export function predictedSeries(solution: Solution, originMs: number, fromMs: number, toMs: number, points = 80): TemperaturePoint[] {
  if (!(toMs > fromMs) || !Number.isFinite(fromMs) || !Number.isFinite(toMs)) return [];
  const n = Math.max(2, Math.round(points));
  const out: TemperaturePoint[] = [];
  for (let i = 0; i < n; i++) {
    const t = fromMs + ((toMs - fromMs) * i) / (n - 1);
    const c = solution.centerC(secondsSince(originMs, t));
    if (Number.isFinite(c)) out.push({ t, c });
  }
  return out;
}

/**
 * The spread of ln(reach time) as a function of temperature: each stage's `sdLnT` belongs to its own
 * target, linear in between, held flat beyond the first and last target.
 */
export function spreadByTemperature(stages: readonly Pick<StagePrediction, "targetC" | "sdLnT">[]): (c: number) => number {
  const known = stages.filter((s) => Number.isFinite(s.sdLnT) && Number.isFinite(s.targetC)).sort((a, b) => a.targetC - b.targetC);
  if (known.length === 0) return () => 0;
  return (c) => {
    if (c <= known[0].targetC) return known[0].sdLnT;
    for (let i = 1; i < known.length; i++) {
      const a = known[i - 1];
      const b = known[i];
      if (c <= b.targetC) return b.targetC === a.targetC ? b.sdLnT : a.sdLnT + ((c - a.targetC) / (b.targetC - a.targetC)) * (b.sdLnT - a.sdLnT);
    }
    return known[known.length - 1].sdLnT;
  };
}

/**
 * The model's 90 % temperature range around a predicted curve.
 *
 * The engine states its uncertainty as a spread of ln(time to reach a temperature), sd = `sdLnT`: the
 * batch may run faster or slower than the fitted model by a factor λ with ln λ ~ N(0, sd²). Read as a
 * change of clock, the batch's core follows T(t/λ), where T is the fitted curve and t counts from the
 * solution's origin (exact for the diffusivity factor, to first order for the surface factor, which is
 * the order the spread itself is computed to). Since the core cools monotonically, "T_true(t) ≤ x" is
 * the same event as "x is reached by t", so the quantiles of the reach time map straight onto the
 * quantiles of the temperature at t:
 *   low(t)  = T(t·e^{+z·sd})   the batch runs fast: as far along as the model will be at t·e^{+z·sd}
 *   high(t) = T(t·e^{−z·sd})   the batch runs slow
 * with z = Φ⁻¹(0.95) for the same 90 % as the stage times' lowS/highS. The spread may differ by
 * temperature (one per stage target): `sdLnT` then takes the curve's temperature at t.
 *
 * The band widens with time since the origin and is zero at it, like the stage times' bands.
 *
 * Readings (this attempt's, °C) narrow it the way they floor the stage times: a core that cools
 * monotonically was at least as warm as a reading before it was taken and no warmer after, so low(t)
 * is held at or above every later reading and high(t) at or below every earlier one. The band always
 * keeps the curve inside it (low ≤ curve ≤ high), also where a continued solution is not monotone.
 */
export function bandSeries(
  solution: Solution,
  originMs: number,
  curve: readonly TemperaturePoint[],
  sdLnT: number | ((c: number) => number),
  options: { readings?: readonly TemperaturePoint[]; z?: number } = {},
): BandPoint[] {
  const z = options.z ?? Z90;
  const sdAt = typeof sdLnT === "number" ? () => sdLnT : sdLnT;
  const record = (options.readings ?? []).filter((r) => Number.isFinite(r.t) && Number.isFinite(r.c));
  const out: BandPoint[] = [];
  for (const p of curve) {
    const tS = secondsSince(originMs, p.t);
    const sd = Math.max(0, sdAt(p.c));
    if (!Number.isFinite(sd)) continue;
    let low = solution.centerC(tS * Math.exp(z * sd));
    let high = solution.centerC(tS * Math.exp(-z * sd));
    if (!Number.isFinite(low) || !Number.isFinite(high)) continue;
    for (const r of record) {
      if (r.t >= p.t) low = Math.max(low, r.c);
      if (r.t <= p.t) high = Math.min(high, r.c);
    }
    out.push({ t: p.t, low: Math.min(low, high, p.c), high: Math.max(low, high, p.c) });
  }
  return out;
}

/** First instant the curve is at or below `c`, linear between its points; null if it never gets there. */
export function crossingTime(curve: readonly TemperaturePoint[], c: number): number | null {
  if (curve.length === 0) return null;
  if (curve[0].c <= c) return curve[0].t;
  for (let i = 1; i < curve.length; i++) {
    const a = curve[i - 1];
    const b = curve[i];
    if (b.c <= c) return a.c === b.c ? b.t : a.t + ((a.c - c) / (a.c - b.c)) * (b.t - a.t);
  }
  return null;
}

/**
 * Samples a solution into a depth × time grid for the picture: `columns` instants evenly spaced from
 * `startMs` to `endMs`, each with `rows` depths evenly spaced from the bottom face to the top (a
 * block: its vertical centre line; a cylinder or sphere: centre to surface). The grid is capped at
 * MAX_GRID_COLUMNS × MAX_GRID_ROWS so the picture stays a reasonable number of elements.
 */
export function sampleDepthTime(
  solution: Solution,
  startMs: number,
  endMs: number,
  columns: number,
  rows: number,
  originMs = startMs,
): DepthTimeGrid {
  const nt = Math.min(MAX_GRID_COLUMNS, Math.max(2, Math.round(columns)));
  const nd = Math.min(MAX_GRID_ROWS, Math.max(2, Math.round(rows)));
  const span = endMs > startMs ? endMs - startMs : 0;
  const times: number[] = [];
  const c: number[][] = [];
  let depthsMm: number[] = [];
  for (let i = 0; i < nt; i++) {
    const t = startMs + (span * i) / (nt - 1);
    const p = solution.profile(secondsSince(originMs, t), nd);
    if (i === 0) depthsMm = p.xM.map((x) => x * 1000);
    times.push(t);
    c.push(p.c);
  }
  return { times, depthsMm, c };
}

export type ContourPoint = { t: number; mm: number };

/**
 * Where the grid crosses `levelC`, as straight segments between the edges of each cell of four
 * neighbouring samples (marching squares). A cell cut on all four edges is resolved by the mean of its
 * corners, so the contour never crosses itself.
 */
export function contourSegments(grid: DepthTimeGrid, levelC: number): [ContourPoint, ContourPoint][] {
  const { times, depthsMm, c } = grid;
  const out: [ContourPoint, ContourPoint][] = [];
  const cut = (v1: number, v2: number) => (v1 >= levelC) !== (v2 >= levelC);
  const frac = (v1: number, v2: number) => (levelC - v1) / (v2 - v1);
  for (let i = 0; i + 1 < times.length; i++) {
    for (let j = 0; j + 1 < depthsMm.length; j++) {
      const a = c[i][j];
      const b = c[i + 1][j];
      const e = c[i + 1][j + 1];
      const d = c[i][j + 1];
      if (![a, b, e, d].every(Number.isFinite)) continue;
      const [t0, t1, z0, z1] = [times[i], times[i + 1], depthsMm[j], depthsMm[j + 1]];
      // Edges in order around the cell: bottom (a→b), right (b→e), top (d→e), left (a→d).
      const edges: (ContourPoint | null)[] = [
        cut(a, b) ? { t: t0 + frac(a, b) * (t1 - t0), mm: z0 } : null,
        cut(b, e) ? { t: t1, mm: z0 + frac(b, e) * (z1 - z0) } : null,
        cut(d, e) ? { t: t0 + frac(d, e) * (t1 - t0), mm: z1 } : null,
        cut(a, d) ? { t: t0, mm: z0 + frac(a, d) * (z1 - z0) } : null,
      ];
      const hits = edges.filter((p): p is ContourPoint => p !== null);
      if (hits.length === 2) out.push([hits[0], hits[1]]);
      else if (hits.length === 4) {
        const [bottom, right, top, left] = edges as ContourPoint[];
        const centreWarm = (a + b + e + d) / 4 >= levelC;
        // a and e share a side of the level; if the centre does too, they join and b, d are cut off.
        if (centreWarm === a >= levelC) out.push([bottom, right], [top, left]);
        else out.push([bottom, left], [top, right]);
      }
    }
  }
  return out;
}

// ---------------------------------------------------------------------------------------------
// Clock times in the site's time zone.

const formatters = new Map<string, Intl.DateTimeFormat>();
function formatterFor(key: string, make: () => Intl.DateTimeFormat) {
  let f = formatters.get(key);
  if (!f) {
    f = make();
    formatters.set(key, f);
  }
  return f;
}

/**
 * A clock time in the site's zone: "09:05", "15:20" by default; a locale that reads a 12-hour clock
 * gets its own form ("3:20 PM").
 */
export function formatClock(t: number, timeZone: string, locale = "en-GB"): string {
  return formatterFor(`clock|${locale}|${timeZone}`, () => {
    const cycle = new Intl.DateTimeFormat(locale, { hour: "numeric" }).resolvedOptions().hourCycle;
    const hour = cycle === "h23" || cycle === "h24" ? "2-digit" : "numeric";
    return new Intl.DateTimeFormat(locale, { timeZone, hour, minute: "2-digit" });
  }).format(new Date(t));
}

/** The zone's offset from UTC at an instant, ms (Chicago in July: −5 h). */
export function zoneOffsetMs(t: number, timeZone: string): number {
  const f = formatterFor(`parts|${timeZone}`, () =>
    new Intl.DateTimeFormat("en-US", {
      timeZone,
      hourCycle: "h23",
      year: "numeric",
      month: "2-digit",
      day: "2-digit",
      hour: "2-digit",
      minute: "2-digit",
      second: "2-digit",
    }),
  );
  const part: Record<string, number> = {};
  for (const p of f.formatToParts(new Date(t))) if (p.type !== "literal") part[p.type] = Number(p.value);
  const wall = Date.UTC(part.year, part.month - 1, part.day, part.hour % 24, part.minute, part.second);
  return wall - Math.floor(t / 1000) * 1000;
}

const TICK_STEPS_MIN = [5, 10, 15, 20, 30, 60, 120, 180, 240, 360, 720, 1440];

/**
 * Instants between `fromMs` and `toMs` that fall on round clock times in the site's zone (every
 * 15 min, every 2 h, ...), about `count` of them.
 */
export function timeTicks(fromMs: number, toMs: number, timeZone: string, count = 6): number[] {
  if (!(toMs > fromMs)) return [];
  const span = toMs - fromMs;
  const stepMin = TICK_STEPS_MIN.find((m) => span / (m * 60_000) <= count) ?? TICK_STEPS_MIN[TICK_STEPS_MIN.length - 1];
  const step = stepMin * 60_000;
  const ticks: number[] = [];
  const first = Math.ceil((fromMs + zoneOffsetMs(fromMs, timeZone)) / step) * step;
  for (let wall = first; ticks.length < 200; wall += step) {
    // Wall time back to an instant; the second pass settles the offset across a clock change.
    let t = wall - zoneOffsetMs(wall, timeZone);
    t = wall - zoneOffsetMs(t, timeZone);
    if (t > toMs) break;
    if (t >= fromMs && t !== ticks[ticks.length - 1]) ticks.push(t);
  }
  return ticks;
}

// ---------------------------------------------------------------------------------------------
// Numbers.

/** A °C value in the display unit, to 0.1° where it has a fraction ("70 °F", "21.1 °C"). */
export function formatDegrees(c: number, unit: TemperatureUnit): string {
  const v = Math.round(fromCelsius(c, unit) * 10) / 10;
  return `${Number.isInteger(v) ? v.toFixed(0) : v.toFixed(1)} °${unit}`;
}

/** Fills {name} placeholders in a translated template. */
export function fillTemplate(template: string, values: Record<string, string | number>): string {
  return template.replace(/\{(\w+)\}/g, (whole, name: string) => (name in values ? String(values[name]) : whole));
}

// ---------------------------------------------------------------------------------------------
// The picture's colour scale: cold in glacier blues, through a pale midpoint, to warm amber and
// ember. Stops are blended in OKLab, where equal steps look like equal changes of colour.

const TEMPERATURE_STOPS = ["#084f63", "#2f8fab", "#a9dbe8", "#f4efdc", "#f1c46a", "#d9822b", "#a63a12"];

type Lab = [number, number, number];

const toLinear = (v: number) => (v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4);
const fromLinear = (v: number) => (v <= 0.0031308 ? 12.92 * v : 1.055 * v ** (1 / 2.4) - 0.055);

function hexToLab(hex: string): Lab {
  const [r, g, b] = [1, 3, 5].map((i) => toLinear(parseInt(hex.slice(i, i + 2), 16) / 255));
  const l = Math.cbrt(0.4122214708 * r + 0.5363325363 * g + 0.0514459929 * b);
  const m = Math.cbrt(0.2119034982 * r + 0.6806995451 * g + 0.1073969566 * b);
  const s = Math.cbrt(0.0883024619 * r + 0.2817188376 * g + 0.6299787005 * b);
  return [
    0.2104542553 * l + 0.793617785 * m - 0.0040720468 * s,
    1.9779984951 * l - 2.428592205 * m + 0.4505937099 * s,
    0.0259040371 * l + 0.7827717662 * m - 0.808675766 * s,
  ];
}

function labToHex([L, A, B]: Lab): string {
  const l = (L + 0.3963377774 * A + 0.2158037573 * B) ** 3;
  const m = (L - 0.1055613458 * A - 0.0638541728 * B) ** 3;
  const s = (L - 0.0894841775 * A - 1.291485548 * B) ** 3;
  const rgb = [
    4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s,
    -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s,
    -0.0041960863 * l - 0.7034186147 * m + 1.707614701 * s,
  ];
  return `#${rgb
    .map((v) => Math.round(Math.min(1, Math.max(0, fromLinear(v))) * 255).toString(16).padStart(2, "0"))
    .join("")}`;
}

const STOP_LABS = TEMPERATURE_STOPS.map(hexToLab);

/** Colour at u ∈ [0, 1] (0 coldest, 1 warmest) on the picture's scale; outside the range it clamps. */
export function interpolateCooling(u: number): string {
  const x = Math.min(1, Math.max(0, Number.isFinite(u) ? u : 0)) * (STOP_LABS.length - 1);
  const i = Math.min(STOP_LABS.length - 2, Math.floor(x));
  const f = x - i;
  const a = STOP_LABS[i];
  const b = STOP_LABS[i + 1];
  return labToHex([a[0] + f * (b[0] - a[0]), a[1] + f * (b[1] - a[1]), a[2] + f * (b[2] - a[2])]);
}
