import { scaleLinear, scaleSequential, scaleTime } from "d3-scale";
import { useId } from "react";
import {
  CHART_COLOURS as K,
  contourSegments,
  fillTemplate,
  formatClock,
  formatDegrees,
  interpolateCooling,
  timeTicks,
  type DepthTimeGrid,
} from "~/lib/chart-data";
import { fromCelsius, type TemperatureUnit } from "~/lib/temperature";

/**
 * Every word the picture shows, already translated. `summary` takes {start}, {end} (clock times),
 * {warmest}, {coldest} (at the last time, in the display unit) and {depth} (where the warmest is, "32 mm").
 */
export type DepthTimeLabels = {
  title: string;
  timeAxis: string;
  depthAxis: string;
  temperature: string;
  summary: string;
};

export type DepthTimePictureProps = {
  grid: DepthTimeGrid;
  /** Stage limits in °C; each that the grid crosses gets a contour. */
  limits: readonly number[];
  unit: TemperatureUnit;
  timeZone: string;
  labels: DepthTimeLabels;
  locale?: string;
  width?: number;
  height?: number;
};

const FONT = 15;
const CONTOUR_DASH = [undefined, "7 4", "2 4"];
const round = (v: number) => Math.round(v * 100) / 100;

/** Cell edges halfway between samples, the outer ones on the first and last sample. */
function edgesOf(v: readonly number[]) {
  const e = [v[0]];
  for (let i = 1; i < v.length; i++) e.push((v[i - 1] + v[i]) / 2);
  e.push(v[v.length - 1]);
  return e;
}

/**
 * Temperature through the depth of the food over time: one cell per sample, coloured cold to warm,
 * with a line where the food passes each stage limit. Depth runs up from the pan's base.
 */
export function DepthTimePicture(props: DepthTimePictureProps) {
  const { grid, unit, timeZone, labels, locale } = props;
  const width = props.width ?? 800;
  const height = props.height ?? 380;
  const id = useId().replace(/[^a-zA-Z0-9_-]/g, "");
  const titleId = `${id}-title`;
  const descId = `${id}-desc`;
  const gradientId = `${id}-scale`;
  const clock = (t: number) => formatClock(t, timeZone, locale);

  const margin = { top: 44, right: 136, bottom: 62, left: 88 };
  const x0 = margin.left;
  const x1 = width - margin.right;
  const y0 = margin.top;
  const y1 = height - margin.bottom;

  const { times, depthsMm, c } = grid;
  const usable = times.length > 1 && depthsMm.length > 1 && c.length === times.length;
  const values = usable ? c.flat().filter(Number.isFinite) : [];
  const shown = values.map((v) => fromCelsius(v, unit));
  let lo = shown.length ? Math.min(...shown) : fromCelsius(0, unit);
  let hi = shown.length ? Math.max(...shown) : fromCelsius(60, unit);
  if (!(hi > lo)) {
    lo -= 1;
    hi += 1;
  }
  const legend = scaleLinear().domain([lo, hi]).nice().range([y1, y0]);
  const [legendLo, legendHi] = legend.domain();
  const colour = scaleSequential(interpolateCooling).domain([legendLo, legendHi]);
  const colourOf = (cC: number) => colour(fromCelsius(cC, unit));

  const tFirst = usable ? times[0] : 0;
  const tLast = usable ? times[times.length - 1] : 3_600_000;
  const x = scaleTime().domain([new Date(tFirst), new Date(tLast > tFirst ? tLast : tFirst + 3_600_000)]).range([x0, x1]);
  const dFirst = usable ? depthsMm[0] : 0;
  const dLast = usable ? depthsMm[depthsMm.length - 1] : 50;
  const y = scaleLinear().domain([dFirst, dLast > dFirst ? dLast : dFirst + 1]).range([y1, y0]);

  const tEdges = usable ? edgesOf(times).map((t) => x(t)) : [];
  const dEdges = usable ? edgesOf(depthsMm).map((d) => y(d)) : [];

  const contours = usable
    ? props.limits
        .filter((l) => Number.isFinite(l))
        .map((limitC, i) => {
          const segments = contourSegments(grid, limitC);
          const d = segments
            .map(([a, b]) => `M${round(x(a.t))},${round(y(a.mm))}L${round(x(b.t))},${round(y(b.mm))}`)
            .join("");
          // Labelled where the contour reaches furthest in time, kept inside the plot.
          let end = { t: -Infinity, mm: 0 };
          for (const s of segments) for (const p of s) if (p.t > end.t) end = p;
          const lx = Math.min(x1 - 6, Math.max(x0 + 60, x(end.t) - 6));
          const ly = Math.min(y1 - 6, Math.max(y0 + 18, y(end.mm) - 8));
          return { limitC, d, dash: CONTOUR_DASH[i % CONTOUR_DASH.length], lx, ly, empty: segments.length === 0 };
        })
        .filter((k) => !k.empty)
    : [];

  const lastColumn = usable ? c[c.length - 1] : [];
  let warmest = 0;
  let coldest = 0;
  lastColumn.forEach((v, j) => {
    if (v > lastColumn[warmest]) warmest = j;
    if (v < lastColumn[coldest]) coldest = j;
  });
  const summary = usable
    ? fillTemplate(labels.summary, {
        start: clock(tFirst),
        end: clock(tLast),
        warmest: formatDegrees(lastColumn[warmest], unit),
        coldest: formatDegrees(lastColumn[coldest], unit),
        depth: `${Math.round(depthsMm[warmest])} mm`,
      })
    : labels.title;

  const xTicks = usable ? timeTicks(tFirst, tLast, timeZone, Math.max(3, Math.floor((x1 - x0) / 100))) : [];
  const yTicks = y.ticks(5);
  const legendTicks = legend.ticks(5);
  const legendStep = legendTicks.length > 1 ? legendTicks[1] - legendTicks[0] : 1;
  const barX = x1 + 30;
  const stops = Array.from({ length: 11 }, (_, i) => i / 10);

  return (
    <svg
      role="img"
      aria-labelledby={`${titleId} ${descId}`}
      viewBox={`0 0 ${width} ${height}`}
      width="100%"
      className="block h-auto w-full"
      fontFamily="'Nunito Sans', ui-sans-serif, system-ui, sans-serif"
      fontSize={FONT}
    >
      <title id={titleId}>{labels.title}</title>
      <desc id={descId}>{summary}</desc>
      <defs>
        <linearGradient id={gradientId} x1="0" y1="1" x2="0" y2="0">
          {stops.map((u) => (
            <stop key={u} offset={u} stopColor={interpolateCooling(u)} />
          ))}
        </linearGradient>
      </defs>
      <rect x={0} y={0} width={width} height={height} fill="#ffffff" />

      <g data-layer="cells" shapeRendering="crispEdges">
        {usable &&
          c.map((column, i) =>
            column.map((v, j) =>
              Number.isFinite(v) ? (
                <rect
                  key={`${i}-${j}`}
                  data-cell=""
                  x={round(tEdges[i])}
                  y={round(dEdges[j + 1])}
                  width={round(tEdges[i + 1] - tEdges[i] + 0.5)}
                  height={round(dEdges[j] - dEdges[j + 1] + 0.5)}
                  fill={colourOf(v)}
                />
              ) : null,
            ),
          )}
      </g>

      <g data-layer="contours">
        {contours.map((k) => (
          <g key={k.limitC} data-limit={k.limitC}>
            <path d={k.d} fill="none" stroke="#ffffff" strokeWidth={5} strokeLinecap="round" />
            <path d={k.d} fill="none" stroke={K.ink} strokeWidth={2.25} strokeDasharray={k.dash} strokeLinecap="round" />
            <text
              x={round(k.lx)}
              y={round(k.ly)}
              textAnchor="end"
              fill={K.ink}
              fontWeight={700}
              stroke="#ffffff"
              strokeWidth={4}
              strokeLinejoin="round"
              paintOrder="stroke"
            >
              {formatDegrees(k.limitC, unit)}
            </text>
          </g>
        ))}
      </g>

      <g data-layer="axes" fill={K.inkSoft}>
        <line x1={x0} x2={x1} y1={y1} y2={y1} stroke={K.inkSoft} strokeWidth={1.5} />
        <line x1={x0} x2={x0} y1={y0} y2={y1} stroke={K.inkSoft} strokeWidth={1.5} />
        {yTicks.map((v) => (
          <text key={v} x={x0 - 10} y={round(y(v)) + 5} textAnchor="end">
            {`${v} mm`}
          </text>
        ))}
        {xTicks.map((t) => (
          <g key={t}>
            <line x1={round(x(t))} x2={round(x(t))} y1={y1} y2={y1 + 6} stroke={K.inkSoft} strokeWidth={1.5} />
            <text x={round(x(t))} y={y1 + 24} textAnchor="middle">
              {clock(t)}
            </text>
          </g>
        ))}
        <text x={(x0 + x1) / 2} y={height - 12} textAnchor="middle" fill={K.ink} fontWeight={700}>
          {labels.timeAxis}
        </text>
        <text transform={`translate(18 ${(y0 + y1) / 2}) rotate(-90)`} textAnchor="middle" fill={K.ink} fontWeight={700}>
          {labels.depthAxis}
        </text>
      </g>

      <g data-layer="legend">
        <text x={barX + 9} y={y0 - 16} textAnchor="middle" fill={K.ink} fontWeight={700}>
          {labels.temperature}
        </text>
        <rect x={barX} y={y0} width={18} height={y1 - y0} fill={`url(#${gradientId})`} stroke={K.line} />
        {legendTicks.map((v) => (
          <g key={v}>
            <line x1={barX + 18} x2={barX + 24} y1={round(legend(v))} y2={round(legend(v))} stroke={K.inkSoft} strokeWidth={1.5} />
            <text x={barX + 28} y={round(legend(v)) + 5} fill={K.inkSoft}>
              {`${v.toFixed(legendStep >= 1 ? 0 : 1)} °${unit}`}
            </text>
          </g>
        ))}
        {contours.map((k) => {
          const ly = round(legend(fromCelsius(k.limitC, unit)));
          return <line key={k.limitC} x1={barX - 5} x2={barX + 23} y1={ly} y2={ly} stroke={K.ink} strokeWidth={2.25} strokeDasharray={k.dash} />;
        })}
      </g>
    </svg>
  );
}
