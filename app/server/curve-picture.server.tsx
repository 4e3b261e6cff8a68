// A batch's cooling chart as a PNG, for places without a browser (the records workbook): the same
// React component the batch page shows, rendered to SVG markup on the server, a legend drawn in SVG
// below it (the page's legend is HTML), and the whole rasterised by sharp (librsvg).
import type { ReactNode } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import sharp from "sharp";
import { CHART_COLOURS as K } from "~/lib/chart-data";
import { CoolingChart, type CoolingChartProps } from "~/components/cooling-chart";
import { prepareChartFonts } from "./chart-fonts.server";

prepareChartFonts();

/** The chart's own drawing size (its viewBox); the legend adds a strip below. */
export const CURVE_WIDTH = 800;
export const CURVE_HEIGHT = 440;
// Room for two rows of legend (a long language wraps to the second).
const LEGEND_HEIGHT = 64;
/** Pixels per chart unit in the PNG: 1.5 prints sharply at the size the workbook shows it. */
export const CURVE_SCALE = 1.5;
export const CURVE_PNG = { width: Math.round(CURVE_WIDTH * CURVE_SCALE), height: Math.round((CURVE_HEIGHT + LEGEND_HEIGHT) * CURVE_SCALE) };

const FONT_FAMILY = "'Nunito Sans', ui-sans-serif, system-ui, sans-serif";
// A rough advance per character at 14 px, for laying out the legend without measuring text.
const CHAR_W = 7.4;

type Labels = CoolingChartProps["labels"];

function Legend({ labels, zone, y }: { labels: Labels; zone: boolean; y: number }) {
  const items: { label: string; mark: ReactNode }[] = [
    { label: labels.reading, mark: <><path d="M2,8 H26" stroke={K.ink} strokeWidth={2.5} /><circle cx={14} cy={8} r={5.5} fill={K.ink} stroke="#ffffff" strokeWidth={1.5} /></> },
    { label: labels.late, mark: <><circle cx={14} cy={8} r={6.5} fill="none" stroke={K.ember} strokeWidth={2} /><circle cx={14} cy={8} r={3.5} fill={K.ink} /></> },
    { label: labels.predicted, mark: <path d="M2,8 H26" stroke={K.glacier} strokeWidth={3} strokeDasharray="7 4" /> },
    { label: labels.band, mark: <rect x={2} y={2} width={24} height={12} rx={2} fill={K.glacier} fillOpacity={0.16} /> },
    { label: labels.now, mark: <path d="M14,0 V16" stroke={K.ink} strokeWidth={2} /> },
    { label: labels.deadline, mark: <path d="M14,0 V16" stroke={K.amber} strokeWidth={2} strokeDasharray="4 3" /> },
    ...(zone ? [{ label: labels.dangerZone, mark: <rect x={2} y={2} width={24} height={12} rx={2} fill={K.amberLight} stroke={K.line} /> }] : []),
  ];
  let x = 24;
  let row = 0;
  const placed = items.map((item) => {
    const w = 30 + item.label.length * CHAR_W;
    if (x + w > CURVE_WIDTH - 12 && x > 24) {
      row += 1;
      x = 24;
    }
    const at = { ...item, x, y: y + 10 + row * 26 };
    x += w + 22;
    return at;
  });
  return (
    <g data-layer="legend" fontSize={14} fill={K.inkSoft}>
      <line x1={0} x2={CURVE_WIDTH} y1={y + 0.5} y2={y + 0.5} stroke={K.frostDeep} />
      {placed.map((item) => (
        <g key={item.label} transform={`translate(${Math.round(item.x)} ${item.y})`}>
          {item.mark}
          <text x={32} y={13}>
            {item.label}
          </text>
        </g>
      ))}
    </g>
  );
}

/**
 * The chart as one standalone SVG document: the component's <svg> (the first one in its markup; the
 * legend's little icons come after it) re-opened with explicit size and namespace, which librsvg needs.
 */
export function curveSvg(props: Omit<CoolingChartProps, "width" | "height">) {
  const markup = renderToStaticMarkup(<CoolingChart {...props} width={CURVE_WIDTH} height={CURVE_HEIGHT} />);
  const chart = /<svg\b[^>]*>([\s\S]*?)<\/svg>/.exec(markup);
  if (!chart) throw new Error("the cooling chart rendered no SVG");
  const legend = renderToStaticMarkup(<Legend labels={props.labels} zone={props.dangerZone !== undefined || props.stages.length > 1} y={CURVE_HEIGHT} />);
  const h = CURVE_HEIGHT + LEGEND_HEIGHT;
  return (
    `<svg xmlns="http://www.w3.org/2000/svg" width="${CURVE_PNG.width}" height="${CURVE_PNG.height}" viewBox="0 0 ${CURVE_WIDTH} ${h}" font-family="${FONT_FAMILY}" font-size="15">` +
    `<rect x="0" y="0" width="${CURVE_WIDTH}" height="${h}" fill="#ffffff"/>${chart[1]}${legend}</svg>`
  );
}

/**
 * The chart as a PNG of CURVE_PNG's size. A 256-colour palette at the quickest effort, undithered: the
 * chart has few colours, and the file is 55 % smaller than full colour (27 against 66 KB) for about
 * 30 ms more; dithering the palette would add 18 ms a picture (57 → 75 ms) for no visible difference
 * at the size the workbook shows it. The SVG markup is made here, on the caller's thread (≈ 9 ms);
 * sharp rasterises and encodes on libuv's threads, so the caller's event loop goes on meanwhile.
 */
export async function curvePng(props: Omit<CoolingChartProps, "width" | "height">) {
  const svg = curveSvg(props);
  return sharp(Buffer.from(svg)).png({ palette: true, effort: 1, dither: 0, compressionLevel: 6 }).toBuffer();
}
