import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import sharp from "sharp";
import { describe, expect, it } from "vitest";
import { prepareChartFonts, woffToSfnt } from "~/server/chart-fonts.server";
import { CURVE_PNG, curvePng, curveSvg } from "~/server/curve-picture.server";
import { boundedSink } from "~/server/bounded-sink.server";

const require = createRequire(import.meta.url);
const t0 = Date.parse("2026-03-02T15:00:00Z");
const MIN = 60_000;
const props = {
  readings: [[0, 65], [30, 50], [90, 30], [130, 19.5], [250, 4.6]].map(([m, c]) => ({ t: t0 + m * MIN, c })),
  predicted: [{ t: t0 + 250 * MIN, c: 4.6 }, { t: t0 + 400 * MIN, c: 3 }],
  band: [],
  stages: [{ label: "Stage 1", c: 21.1, deadline: t0 + 120 * MIN, status: "missed" as const }, { label: "Stage 2", c: 5, deadline: t0 + 360 * MIN, status: "met" as const }],
  startedAt: t0,
  now: t0 + 260 * MIN,
  unit: "C" as const,
  timeZone: "UTC",
  labels: { title: "Cooling curve", timeAxis: "Time", temperatureAxis: "Core temperature", reading: "Probe reading", late: "late", corrected: "corrected", predicted: "Model estimate", band: "Likely range", now: "ended", deadline: "Deadline", dangerZone: "Danger zone", summaryReadings: "{count} readings", summaryNoReadings: "none", summaryPrediction: "—" },
};
const text = (family: string) => Buffer.from(`<svg xmlns="http://www.w3.org/2000/svg" width="400" height="60"><rect width="400" height="60" fill="#fff"/><text x="8" y="40" font-family="${family}" font-size="28">Cooling 57 °C Rg</text></svg>`);

describe("the cooling curve as a picture", () => {
  it("a WOFF font comes back as a TrueType file with the same tables", () => {
    const woff = readFileSync(require.resolve("@fontsource/nunito-sans/files/nunito-sans-latin-400-normal.woff"));
    const ttf = woffToSfnt(woff);
    expect(ttf.readUInt32BE(0)).toBe(woff.readUInt32BE(4));
    expect(ttf.readUInt16BE(4)).toBe(woff.readUInt16BE(12));
    expect(ttf.length).toBe(woff.readUInt32BE(16)); // totalSfntSize in the WOFF header
    expect(() => woffToSfnt(Buffer.from("not a font at all, really"))).toThrow(/WOFF/);
  });

  it("text renders in Nunito Sans, not the fallback sans-serif", async () => {
    expect(prepareChartFonts()).toBeTruthy();
    const [nunito, dejavu] = await Promise.all(["Nunito Sans", "DejaVu Sans"].map((f) => sharp(text(f)).raw().toBuffer()));
    // A family fontconfig does not know falls back to DejaVu Sans, pixel for pixel.
    const unknown = await sharp(text("No Such Family")).raw().toBuffer();
    expect(unknown.equals(dejavu)).toBe(true);
    expect(nunito.equals(dejavu)).toBe(false);
  });

  it("the chart is one standalone SVG with the legend, rasterised to a PNG of the stated size", async () => {
    const svg = curveSvg(props);
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    expect(svg.match(/<svg\b/g)).toHaveLength(1);
    expect(svg).toContain('data-layer="legend"');
    expect(svg).toContain("Model estimate");
    const png = await curvePng(props);
    expect(await sharp(png).metadata()).toMatchObject({ format: "png", ...CURVE_PNG });
    expect(png.length).toBeLessThan(80_000);
  });

  it("a bounded sink keeps a file up to its limit and only counts one past it", async () => {
    const small = boundedSink(10);
    small.sink.end(Buffer.from("12345"));
    await new Promise((r) => small.sink.on("finish", r));
    expect(small.result()?.toString()).toBe("12345");
    const big = boundedSink(10);
    big.sink.write(Buffer.from("123456"));
    big.sink.end(Buffer.from("789012"));
    await new Promise((r) => big.sink.on("finish", r));
    expect(big.result()).toBeNull();
    expect(big.size()).toBe(12);
  });
});
