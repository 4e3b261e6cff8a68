import { readFileSync } from "node:fs";
import { renderToStaticMarkup } from "react-dom/server";
import { afterEach, beforeEach, describe, expect, it, vi, type MockInstance } from "vitest";
import { CoolingChart, type ChartReading, type ChartStage, type CoolingChartLabels } from "~/components/cooling-chart";
import { DepthTimePicture, type DepthTimeLabels } from "~/components/depth-time-picture";
import {
  bandSeries,
  CHART_COLOURS,
  contourSegments,
  crossingTime,
  formatClock,
  interpolateCooling,
  MAX_GRID_COLUMNS,
  MAX_GRID_ROWS,
  predictedSeries,
  sampleDepthTime,
  spreadByTemperature,
  timeTicks,
  Z90,
} from "~/lib/chart-data";
import { solveConduction } from "~/lib/engine/conduction";
import { fromCelsius, toCelsius } from "~/lib/temperature";

// A 50 mm fill in a 1/2 hotel pan in a walk-in: 74 °C food, 3 °C air.
const solution = solveConduction(
  { shape: "block", lengthM: 0.325, widthM: 0.265, depthM: 0.05, wallH: 12, bottomH: 15, topH: 9 },
  { k: 0.5, alpha: 1.4e-7 },
  74,
  3,
);
const MIN = 60_000;
const zone = "America/Chicago";
// 15 July 2025, 13:00 in Chicago (CDT, UTC−5).
const start = Date.UTC(2025, 6, 15, 18, 0);
const at = (minutes: number) => start + minutes * MIN;
// Readings as a cook logs them: whole °F off the probe.
const probe = (minutes: number) => toCelsius(Math.round(fromCelsius(solution.centerC(minutes * 60), "F")), "F");
const readings: ChartReading[] = [
  { t: at(0), c: probe(0) },
  { t: at(60), c: probe(60) },
  { t: at(140), c: probe(140), late: true },
];
const now = at(150);
const reach41 = solution.reachTime(5, "center")!; // seconds
const stages: ChartStage[] = [
  { label: "Stage 1", c: 21.1, deadline: at(120), status: "missed" },
  { label: "Stage 2", c: 5, deadline: at(360), status: "in-progress", predictedAt: start + reach41 * 1000 },
];
const curve = predictedSeries(solution, start, start, at(540), 120);
const spread = spreadByTemperature([
  { targetC: 21.1, sdLnT: 0.12 },
  { targetC: 5, sdLnT: 0.15 },
]);
const band = bandSeries(solution, start, curve, spread);

const chartLabels: CoolingChartLabels = {
  title: "Chili, batch 12",
  timeAxis: "Time",
  temperatureAxis: "Core temperature",
  reading: "Reading",
  late: "Late",
  corrected: "Corrected",
  predicted: "Predicted",
  band: "Likely range (90 %)",
  now: "Now",
  deadline: "Deadline",
  dangerZone: "Danger zone",
  summaryReadings: "{count} readings, last {value} at {time}",
  summaryNoReadings: "No readings yet",
  summaryPrediction: "predicted to reach {value} at {time}",
};
const pictureLabels: DepthTimeLabels = {
  title: "Temperature through the food",
  timeAxis: "Time",
  depthAxis: "Height above the base",
  temperature: "Temperature",
  summary: "From {start} to {end}; at {end} the warmest layer is {warmest} at {depth}, the coldest {coldest}",
};

const chart = (overrides: Partial<Parameters<typeof CoolingChart>[0]> = {}) =>
  renderToStaticMarkup(
    <CoolingChart
      readings={readings}
      predicted={curve}
      band={band}
      stages={stages}
      startedAt={start}
      now={now}
      unit="F"
      timeZone={zone}
      labels={chartLabels}
      dangerZone={{ lowC: 5, highC: 57.2 }}
      {...overrides}
    />,
  );

const count = (html: string, pattern: RegExp) => html.match(new RegExp(pattern, "g"))?.length ?? 0;
const tagsWith = (html: string, attr: string) => html.match(new RegExp(`<[a-z]+[^>]*${attr}[^>]*>`, "g")) ?? [];
// Minutes after 13:00 as a Chicago clock time, by arithmetic rather than Intl.
const clockAfterStart = (minutes: number) => {
  const m = Math.floor(13 * 60 + minutes) % (24 * 60);
  return `${String(Math.floor(m / 60)).padStart(2, "0")}:${String(m % 60).padStart(2, "0")}`;
};

let consoleError: MockInstance;
beforeEach(() => {
  consoleError = vi.spyOn(console, "error").mockImplementation(() => {});
});
afterEach(() => {
  expect(consoleError).not.toHaveBeenCalled();
  consoleError.mockRestore();
});

describe("plot series from the engine", () => {
  it("the predicted series follows the solution's core from its origin", () => {
    expect(curve).toHaveLength(120);
    expect(curve[0]).toEqual({ t: start, c: 74 });
    expect(curve[119].t).toBe(at(540));
    for (let i = 1; i < curve.length; i++) expect(curve[i].c).toBeLessThan(curve[i - 1].c);
    expect(curve[60].c).toBeCloseTo(solution.centerC((curve[60].t - start) / 1000), 10);
  });

  it("a later origin shifts the model's clock: before it the food is still at its start", () => {
    const later = predictedSeries(solution, at(30), start, at(60), 4);
    expect(later[0].c).toBe(74);
    expect(later[3].c).toBeCloseTo(solution.centerC(1800), 10);
  });

  it("the band lies around the predicted curve, zero wide at the origin and widening after", () => {
    expect(band).toHaveLength(curve.length);
    band.forEach((b, i) => {
      expect(b.t).toBe(curve[i].t);
      expect(b.low).toBeLessThanOrEqual(curve[i].c);
      expect(b.high).toBeGreaterThanOrEqual(curve[i].c);
    });
    expect(band[0].high - band[0].low).toBe(0);
    const mid = band[30];
    expect(mid.low).toBeLessThan(curve[30].c - 0.5);
    expect(mid.high).toBeGreaterThan(curve[30].c + 0.5);
  });

  it("the band's edges are the curve on a faster and a slower clock: T(t·e^(±z·sd))", () => {
    const p = curve[40];
    const tS = (p.t - start) / 1000;
    const sd = spread(p.c);
    const b = bandSeries(solution, start, [p], sd)[0];
    expect(b.low).toBeCloseTo(solution.centerC(tS * Math.exp(Z90 * sd)), 10);
    expect(b.high).toBeCloseTo(solution.centerC(tS * Math.exp(-Z90 * sd)), 10);
  });

  it("the band's edges cross a limit at the ends of the engine's 90 % band for that limit's time", () => {
    // The engine's band: lowS = t·e^(−z·sd), highS = t·e^(+z·sd) (predict.ts, stagePredictions).
    const sd = 0.12;
    const reachS = solution.reachTime(21.1, "center")!;
    const fine = predictedSeries(solution, start, start, at(540), 2000);
    const edges = bandSeries(solution, start, fine, sd);
    const warmEdge = crossingTime(edges.map((e) => ({ t: e.t, c: e.high })), 21.1)!;
    const coolEdge = crossingTime(edges.map((e) => ({ t: e.t, c: e.low })), 21.1)!;
    expect(Math.abs(warmEdge - (start + reachS * Math.exp(Z90 * sd) * 1000))).toBeLessThan(MIN);
    expect(Math.abs(coolEdge - (start + reachS * Math.exp(-Z90 * sd) * 1000))).toBeLessThan(MIN);
  });

  it("readings narrow the band: no cooler before a reading than it showed, no warmer after", () => {
    const record = [
      { t: at(60), c: 56 },
      { t: at(140), c: 36 },
    ];
    const free = bandSeries(solution, start, curve, 0.3);
    const held = bandSeries(solution, start, curve, 0.3, { readings: record });
    held.forEach((b, i) => {
      const c = curve[i].c;
      expect(b.low).toBeLessThanOrEqual(c);
      expect(b.high).toBeGreaterThanOrEqual(c);
      if (b.t <= at(140)) expect(b.low).toBeGreaterThanOrEqual(Math.min(36, c));
      if (b.t >= at(60)) expect(b.high).toBeLessThanOrEqual(Math.max(56, c));
    });
    expect(held.some((b, i) => b.low > free[i].low)).toBe(true);
    expect(held.some((b, i) => b.high < free[i].high)).toBe(true);
  });

  it("the spread is each stage's own at its target, linear between and flat beyond", () => {
    expect(spread(21.1)).toBeCloseTo(0.12, 12);
    expect(spread(5)).toBeCloseTo(0.15, 12);
    expect(spread(13.05)).toBeCloseTo(0.135, 12);
    expect(spread(60)).toBeCloseTo(0.12, 12);
    expect(spread(-2)).toBeCloseTo(0.15, 12);
    expect(spreadByTemperature([])(30)).toBe(0);
  });

  it("the curve's crossing time is interpolated between points, null when it never gets there", () => {
    const line = [
      { t: 0, c: 30 },
      { t: 100, c: 10 },
    ];
    expect(crossingTime(line, 20)).toBe(50);
    expect(crossingTime(line, 5)).toBeNull();
    expect(crossingTime(line, 40)).toBe(0);
  });

  it("a depth × time grid samples the solution's profile, bottom to top, capped in size", () => {
    const grid = sampleDepthTime(solution, start, at(360), 24, 12);
    expect(grid.times).toHaveLength(24);
    expect(grid.depthsMm).toHaveLength(12);
    expect(grid.c).toHaveLength(24);
    expect(grid.c[0]).toHaveLength(12);
    expect(grid.depthsMm[0]).toBe(0);
    expect(grid.depthsMm[11]).toBeCloseTo(50, 10);
    expect(grid.times[23]).toBe(at(360));
    const profile = solution.profile((grid.times[10] - start) / 1000, 12);
    expect(grid.c[10]).toEqual(profile.c);
    // The faces cool first: the middle of the food is warmer than its base.
    expect(grid.c[10][6]).toBeGreaterThan(grid.c[10][0]);

    const big = sampleDepthTime(solution, start, at(360), 500, 500);
    expect(big.times).toHaveLength(MAX_GRID_COLUMNS);
    expect(big.depthsMm).toHaveLength(MAX_GRID_ROWS);
  });

  it("contours cut each cell where the level falls, and a saddle gives two separate pieces", () => {
    const ramp = { times: [0, 10, 20, 30], depthsMm: [0, 5, 10], c: [0, 10, 20, 30].map((v) => [v, v, v]) };
    const segments = contourSegments(ramp, 15);
    expect(segments).toHaveLength(2);
    for (const s of segments) for (const p of s) expect(p.t).toBeCloseTo(15, 12);

    const saddle = { times: [0, 1], depthsMm: [0, 1], c: [[0, 1], [1, 0]] };
    expect(contourSegments(saddle, 0.5)).toHaveLength(2);
    expect(contourSegments(ramp, 99)).toHaveLength(0);
  });

  it("clock ticks fall on round times in the site's zone, across a clock change too", () => {
    const ticks = timeTicks(at(7), at(360), zone);
    expect(ticks.length).toBeGreaterThanOrEqual(4);
    expect(ticks.map((t) => formatClock(t, zone))).toEqual(["14:00", "15:00", "16:00", "17:00", "18:00", "19:00"]);
    // India is UTC+5:30: whole local hours are not whole UTC hours.
    const kolkata = timeTicks(Date.UTC(2025, 6, 15, 3, 10), Date.UTC(2025, 6, 15, 9, 0), "Asia/Kolkata");
    expect(kolkata.map((t) => formatClock(t, "Asia/Kolkata"))).toEqual(["09:00", "10:00", "11:00", "12:00", "13:00", "14:00"]);
    // 2 November 2025 in Chicago: 02:00 CDT falls back to 01:00 CST.
    const fallBack = timeTicks(Date.UTC(2025, 10, 2, 4, 30), Date.UTC(2025, 10, 2, 11, 0), zone);
    for (let i = 1; i < fallBack.length; i++) expect(fallBack[i]).toBeGreaterThan(fallBack[i - 1]);
    expect(fallBack.map((t) => formatClock(t, zone)).every((s) => s.endsWith(":00"))).toBe(true);
  });

  it("the chart's colours are the palette's", () => {
    const css = readFileSync("app/app.css", "utf8");
    for (const [name, hex] of Object.entries(CHART_COLOURS)) {
      const kebab = name.replace(/[A-Z]/g, (m) => `-${m.toLowerCase()}`);
      expect(css, name).toMatch(new RegExp(`--color-${kebab}:\\s*${hex}`, "i"));
    }
  });

  it("the picture's scale runs from a glacier blue to ember", () => {
    const rgb = (hex: string) => [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16));
    const [cr, , cb] = rgb(interpolateCooling(0));
    const [wr, , wb] = rgb(interpolateCooling(1));
    expect(cb).toBeGreaterThan(cr);
    expect(wr).toBeGreaterThan(wb);
    rgb(interpolateCooling(1)).forEach((v, i) => expect(Math.abs(v - rgb(CHART_COLOURS.ember)[i])).toBeLessThanOrEqual(1));
    expect(interpolateCooling(Number.NaN)).toBe(interpolateCooling(0));
  });
});

describe("CoolingChart", () => {
  const html = chart();

  it("is an image titled and summarised in the display unit, with the times in the site's zone", () => {
    expect(html).toMatch(/^<figure[^>]*><svg role="img" aria-labelledby="(\S+)-title \1-desc"/);
    expect(html).toContain(`<title id="`);
    expect(html).toContain(">Chili, batch 12</title>");
    const last = Math.round(fromCelsius(readings[2].c, "F"));
    const reach = clockAfterStart(reach41 / 60);
    expect(html).toContain(`3 readings, last ${last} °F at 15:20; predicted to reach 41 °F at ${reach}</desc>`);
  });

  it("draws one solid dot per reading, on top, and rings the late one", () => {
    expect(count(html, /data-mark="reading"/)).toBe(3);
    expect(count(html, /data-mark="late"/)).toBe(1);
    const readingLine = tagsWith(html, 'data-series="readings"')[0];
    expect(readingLine).toBeDefined();
    expect(readingLine).not.toContain("stroke-dasharray");
    // Readings come after the forecast in the markup, so they paint over it.
    expect(html.indexOf('data-mark="reading"')).toBeGreaterThan(html.indexOf('data-series="predicted"'));
    expect(html.indexOf('data-mark="reading"')).toBeGreaterThan(html.indexOf('data-series="band"'));
  });

  it("draws the forecast as a dashed line in a translucent band", () => {
    const predicted = tagsWith(html, 'data-series="predicted"');
    expect(predicted).toHaveLength(1);
    expect(predicted[0]).toMatch(/stroke-dasharray="9 6"/);
    expect(predicted[0]).toMatch(/d="M[\d.]+,[\d.]+L/);
    const bandTag = tagsWith(html, 'data-series="band"')[0];
    expect(bandTag).toMatch(/fill-opacity="0.16"/);
    expect(bandTag).toMatch(/d="M[\d.]+,[\d.]+L.*Z"/);
  });

  it("marks each deadline at its clock time in the site's zone, coloured by status", () => {
    const markers = tagsWith(html, 'data-mark="deadline"');
    expect(markers).toHaveLength(2);
    expect(html).toMatch(/data-status="missed"><title>Deadline Stage 1: 15:00<\/title><line[^>]*stroke="#a63a12"/);
    expect(html).toMatch(/data-status="in-progress"><title>Deadline Stage 2: 19:00<\/title><line[^>]*stroke="#7a4f00"[^>]*stroke-dasharray/);
    expect(html).toMatch(/>15:00<\/text>/);
    expect(html).toMatch(/>19:00<\/text>/);
    // The same instants in Berlin (CEST, UTC+2) read seven hours later.
    const berlin = chart({ timeZone: "Europe/Berlin" });
    expect(berlin).toMatch(/>22:00<\/text>/);
    expect(berlin).toContain("Deadline Stage 2: 02:00");
    // A locale on a 12-hour clock reads its own way.
    expect(chart({ locale: "en-US" })).toMatch(/Deadline Stage 1: 3:00\sPM/);
  });

  it("labels temperatures in °F when the site works in °F, and in °C otherwise", () => {
    expect(html).not.toContain("°C");
    expect(html).toMatch(/>\d+ °F<\/text>/);
    expect(html).toContain(">70 °F</text>");
    expect(html).toContain(">41 °F</text>");
    expect(html).toContain("Core temperature (°F)");
    const celsius = chart({ unit: "C" });
    expect(celsius).not.toContain("°F");
    expect(celsius).toContain(">21.1 °C</text>");
    expect(celsius).toContain(">5 °C</text>");
    expect(celsius).toContain(`last ${readings[2].c.toFixed(1)} °C at 15:20`);
  });

  it("shades the danger zone, shows now, and writes every word from the labels", () => {
    expect(html).toContain('data-layer="danger-zone"');
    expect(html).toContain(">Danger zone</text>");
    expect(html).toContain('data-mark="now"');
    expect(html).toContain(">Now</text>");
    for (const word of ["Predicted", "Likely range (90 %)", "Reading", "Late", "Deadline", "Time"]) expect(html).toContain(word);
  });

  it("has no NaN and no text under 14 px at 800 px wide", () => {
    expect(html).not.toMatch(/NaN|undefined|Infinity/);
    expect(html).toContain('viewBox="0 0 800 440"');
    expect(html).toContain('width="100%"');
    const sizes = [...html.matchAll(/font-size="([\d.]+)"/g)].map((m) => Number(m[1]));
    expect(sizes.length).toBeGreaterThan(0);
    for (const s of sizes) expect(s).toBeGreaterThanOrEqual(14);
  });

  it("renders a batch with no readings and no forecast yet", () => {
    const empty = chart({ readings: [], predicted: [], band: [], now: start });
    expect(empty).toContain("<desc");
    expect(empty).toContain("No readings yet");
    expect(empty).not.toMatch(/NaN|undefined|Infinity/);
    expect(count(empty, /data-mark="reading"/)).toBe(0);
    expect(empty).not.toContain('data-series="predicted"');
  });

  it("draws a corrected reading as a diamond and lists it in the legend", () => {
    const corrected = chart({ readings: [readings[0], { ...readings[1], corrected: true }] });
    expect(count(corrected, /data-mark="reading"/)).toBe(2);
    expect(corrected).toMatch(/<path data-mark="reading" d="M[\d.]+,[\d.]+ l8,8/);
    expect(corrected).toContain("Corrected");
    expect(html).not.toContain("Corrected");
  });
});

describe("DepthTimePicture", () => {
  const grid = sampleDepthTime(solution, start, at(360), 36, 16);
  const picture = (unit: "F" | "C" = "F") =>
    renderToStaticMarkup(<DepthTimePicture grid={grid} limits={[57.2, 21.1, -10]} unit={unit} timeZone={zone} labels={pictureLabels} />);
  const html = picture();

  it("draws one cell per sample", () => {
    expect(count(html, /data-cell=""/)).toBe(36 * 16);
  });

  it("is an image titled and summarised in the display unit", () => {
    expect(html).toMatch(/^<svg role="img" aria-labelledby="(\S+)-title \1-desc"/);
    const last = grid.c[35];
    const warm = Math.max(...last);
    const j = last.indexOf(warm);
    expect(html).toContain(
      `From 13:00 to 19:00; at 19:00 the warmest layer is ${Math.round(fromCelsius(warm, "F") * 10) / 10} °F at ${Math.round(grid.depthsMm[j])} mm`,
    );
  });

  it("draws a contour for each limit the food passes, none for one it never reaches", () => {
    expect(html).toContain('data-limit="21.1"');
    expect(html).toContain('data-limit="57.2"');
    expect(html).not.toContain('data-limit="-10"');
    expect(html).toMatch(/data-limit="21.1"><path d="M[\d.]+,[\d.]+L/);
    expect(html).toContain(">70 °F</text>");
  });

  it("labels the scale in the display unit, depth in mm and times in the site's zone", () => {
    expect(html).toMatch(/>\d+ °F<\/text>/);
    expect(html).not.toContain("°C");
    expect(html).toContain(">0 mm</text>");
    expect(html).toContain(">50 mm</text>");
    expect(html).toContain(">14:00</text>");
    expect(html).toContain(">18:00</text>");
    expect(html).toMatch(/<linearGradient id="[^"]+"/);
    const celsius = picture("C");
    expect(celsius).toMatch(/>\d+ °C<\/text>/);
    expect(celsius).not.toContain("°F");
  });

  it("has no NaN and no text under 14 px", () => {
    expect(html).not.toMatch(/NaN|undefined|Infinity/);
    for (const m of html.matchAll(/font-size="([\d.]+)"/g)) expect(Number(m[1])).toBeGreaterThanOrEqual(14);
  });
});
