import { scaleLinear, scaleTime } from "d3-scale";
import { area, line } from "d3-shape";
import { useId, type ReactNode } from "react";
import {
  CHART_COLOURS as K,
  crossingTime,
  fillTemplate,
  formatClock,
  formatDegrees,
  timeTicks,
  type BandPoint,
  type TemperaturePoint,
} from "~/lib/chart-data";
import type { StageStatus } from "~/lib/engine/rules";
import { fromCelsius, type TemperatureUnit } from "~/lib/temperature";

/** A probe reading: epoch ms and °C. */
export type ChartReading = { t: number; c: number; late?: boolean; corrected?: boolean };

/** A stage's limit (°C) and deadline (epoch ms), as the rule evaluation has them. */
export type ChartStage = {
  label: string;
  c: number;
  deadline: number | null;
  status: StageStatus;
  /** The model's time for the core to reach the limit (epoch ms), for the summary; else read off the curve. */
  predictedAt?: number | null;
};

/**
 * Every word the chart shows, already translated. The summary templates take {name} placeholders that
 * the chart fills in (i18next leaves single braces alone): summaryReadings {count} {value} {time},
 * summaryPrediction {value} {time}. Pass the plural form that fits the count.
 */
export type CoolingChartLabels = {
  title: string;
  timeAxis: string;
  temperatureAxis: string;
  reading: string;
  late: string;
  corrected: string;
  predicted: string;
  band: string;
  now: string;
  deadline: string;
  dangerZone: string;
  summaryReadings: string;
  summaryNoReadings: string;
  summaryPrediction: string;
};

export type CoolingChartProps = {
  readings: readonly ChartReading[];
  predicted: readonly TemperaturePoint[];
  band: readonly BandPoint[];
  stages: readonly ChartStage[];
  startedAt: number;
  now: number;
  unit: TemperatureUnit;
  /** IANA zone of the site, for clock times. */
  timeZone: string;
  labels: CoolingChartLabels;
  /** The rule's danger zone in °C; by default from the lowest to the highest stage limit. */
  dangerZone?: { lowC: number; highC: number };
  /** For clock times; the default gives 24-hour "15:20". */
  locale?: string;
  width?: number;
  height?: number;
};

const STATUS_COLOUR: Record<StageStatus, string> = {
  met: K.pine,
  missed: K.ember,
  "in-progress": K.amber,
  "not-started": K.amber,
  stopped: K.inkSoft,
};
const isOpen = (s: StageStatus) => s === "in-progress" || s === "not-started";

const FONT = 15;
const SMALL = 14;
// A rough advance per character at 15 px, for laying out labels without measuring text.
const CHAR_W = 8.6;
const round = (v: number) => Math.round(v * 10) / 10;

/** A 12 px mark beside a deadline's time: a tick when met, a cross when missed, a ring while open, a bar when stopped. */
function StatusGlyph({ status, x, y, colour }: { status: StageStatus; x: number; y: number; colour: string }) {
  const common = { fill: "none", stroke: colour, strokeWidth: 2.5, strokeLinecap: "round" as const, strokeLinejoin: "round" as const };
  if (status === "met") return <path d={`M${x},${y + 6} l4,4 l8,-9`} {...common} />;
  if (status === "missed") return <path d={`M${x + 1},${y + 1} l10,10 M${x + 11},${y + 1} l-10,10`} {...common} />;
  if (status === "stopped") return <path d={`M${x},${y + 6} h12`} {...common} />;
  return <circle cx={x + 6} cy={y + 6} r={5} {...common} strokeWidth={2} />;
}

function ReadingMark({ x, y, corrected }: { x: number; y: number; corrected?: boolean }) {
  const paint = { fill: K.ink, stroke: "#ffffff", strokeWidth: 1.5 };
  if (corrected) return <path data-mark="reading" d={`M${x},${y - 8} l8,8 l-8,8 l-8,-8 Z`} {...paint} />;
  return <circle data-mark="reading" cx={x} cy={y} r={6.5} {...paint} />;
}

/**
 * A batch's cooling record against its stage limits and deadlines, with the model's forecast as
 * guidance. Readings are the record: solid, larger, drawn last. The forecast is a dashed line in a
 * pale band. Everything is computed during render, so the server sends the finished picture.
 */
export function CoolingChart(props: CoolingChartProps) {
  const { unit, timeZone, labels, locale } = props;
  const width = props.width ?? 800;
  const height = props.height ?? 440;
  const id = useId().replace(/[^a-zA-Z0-9_-]/g, "");
  const titleId = `${id}-title`;
  const descId = `${id}-desc`;
  const clock = (t: number) => formatClock(t, timeZone, locale);
  const show = (c: number) => fromCelsius(c, unit);

  const readings = props.readings.filter((r) => Number.isFinite(r.t) && Number.isFinite(r.c)).toSorted((a, b) => a.t - b.t);
  const predicted = props.predicted.filter((p) => Number.isFinite(p.t) && Number.isFinite(p.c));
  const band = props.band.filter((p) => Number.isFinite(p.t) && Number.isFinite(p.low) && Number.isFinite(p.high));
  const stages = props.stages.filter((s) => Number.isFinite(s.c));
  const limitsC = stages.map((s) => s.c);
  const zone = props.dangerZone ?? (limitsC.length > 1 ? { lowC: Math.min(...limitsC), highC: Math.max(...limitsC) } : null);

  const margin = { top: 58, right: 128, bottom: 62, left: 92 };
  const x0 = margin.left;
  const x1 = width - margin.right;
  const y0 = margin.top;
  const y1 = height - margin.bottom;

  // Domains: everything drawn must fit, in the display unit for temperatures.
  const temps = [
    ...readings.map((r) => r.c),
    ...predicted.map((p) => p.c),
    ...band.flatMap((b) => [b.low, b.high]),
    ...limitsC,
    ...(zone ? [zone.lowC, zone.highC] : []),
  ].map(show);
  let lo = temps.length ? Math.min(...temps) : show(0);
  let hi = temps.length ? Math.max(...temps) : show(60);
  const pad = Math.max(1, (hi - lo) * 0.04);
  lo -= pad;
  hi += pad;
  const y = scaleLinear().domain([lo, hi]).nice().range([y1, y0]);

  const instants = [
    props.startedAt,
    props.now,
    ...readings.map((r) => r.t),
    ...predicted.map((p) => p.t),
    ...band.map((b) => b.t),
    ...stages.flatMap((s) => (s.deadline !== null && Number.isFinite(s.deadline) ? [s.deadline] : [])),
  ].filter(Number.isFinite);
  const tMin = Math.min(...instants);
  let tMax = Math.max(...instants);
  if (!(tMax > tMin)) tMax = tMin + 3_600_000;
  tMax += (tMax - tMin) * 0.03;
  const x = scaleTime().domain([new Date(tMin), new Date(tMax)]).range([x0, x1]);
  const px = (t: number) => round(x(t));
  const py = (c: number) => round(y(show(c)));

  const readingLine = line<ChartReading>()
    .x((r) => x(r.t))
    .y((r) => y(show(r.c)))
    .digits(1);
  const curveLine = line<TemperaturePoint>()
    .x((p) => x(p.t))
    .y((p) => y(show(p.c)))
    .digits(1);
  const bandArea = area<BandPoint>()
    .x((p) => x(p.t))
    .y0((p) => y(show(p.low)))
    .y1((p) => y(show(p.high)))
    .digits(1);

  const yTicks = y.ticks(6);
  const yStep = yTicks.length > 1 ? yTicks[1] - yTicks[0] : 1;
  const yDigits = yStep >= 1 ? 0 : 1;
  const xTicks = timeTicks(tMin, tMax, timeZone, Math.max(3, Math.floor((x1 - x0) / 100)));

  // Deadline labels sit above the plot; one that would run into its neighbour goes up a row.
  const deadlines = stages
    .filter((s): s is ChartStage & { deadline: number } => s.deadline !== null && Number.isFinite(s.deadline))
    .map((s) => ({ stage: s, x: px(s.deadline), text: clock(s.deadline) }))
    .sort((a, b) => a.x - b.x);
  const rowEnds = [-Infinity, -Infinity];
  const deadlineLabels = deadlines.map((d) => {
    const w = 18 + d.text.length * CHAR_W;
    const cx = Math.min(width - 4 - w / 2, Math.max(x0 - 30 + w / 2, d.x));
    const row = cx - w / 2 >= rowEnds[0] + 8 ? 0 : 1;
    rowEnds[row] = cx + w / 2;
    return { ...d, w, left: cx - w / 2, baseline: row === 0 ? y0 - 12 : y0 - 34 };
  });

  // Stage labels in the right margin, pushed apart where limits are close.
  const GAP = 38;
  const stageLabels = stages
    .map((s) => ({ stage: s, lineY: py(s.c), at: py(s.c) }))
    .sort((a, b) => a.lineY - b.lineY);
  for (let i = 1; i < stageLabels.length; i++) stageLabels[i].at = Math.max(stageLabels[i].at, stageLabels[i - 1].at + GAP);
  const lastAllowed = y1 - 18;
  for (let i = stageLabels.length - 1; i >= 0; i--) {
    const limit = i === stageLabels.length - 1 ? lastAllowed : stageLabels[i + 1].at - GAP;
    stageLabels[i].at = Math.min(stageLabels[i].at, limit);
  }

  // The summary for screen readers: the record first, then the forecast for the next open stage.
  const last = readings[readings.length - 1];
  const parts = [
    last
      ? fillTemplate(labels.summaryReadings, { count: readings.length, value: formatDegrees(last.c, unit), time: clock(last.t) })
      : labels.summaryNoReadings,
  ];
  const next = stages.find((s) => isOpen(s.status));
  if (next) {
    const at = next.predictedAt ?? crossingTime(predicted, next.c);
    if (at !== null && Number.isFinite(at)) parts.push(fillTemplate(labels.summaryPrediction, { value: formatDegrees(next.c, unit), time: clock(at) }));
  }
  const summary = parts.join("; ");

  const nowX = px(props.now);
  const nowW = labels.now.length * CHAR_W + 16;
  const nowLeft = Math.min(x1 - nowW, Math.max(x0, nowX - nowW / 2));
  const hasCorrected = readings.some((r) => r.corrected);

  return (
    <figure className="w-full">
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
        <rect x={0} y={0} width={width} height={height} fill="#ffffff" />

        {zone && (
          <g data-layer="danger-zone">
            <rect
              x={x0}
              width={x1 - x0}
              y={py(Math.max(zone.lowC, zone.highC))}
              height={Math.abs(py(zone.lowC) - py(zone.highC))}
              fill={K.amberLight}
            />
            <text x={x0 + 8} y={py(Math.min(zone.lowC, zone.highC)) - 10} fill={K.amber} fontSize={SMALL} fontWeight={700}>
              {labels.dangerZone}
            </text>
          </g>
        )}

        <g data-layer="grid" stroke={K.frostDeep} strokeWidth={1}>
          {yTicks.map((v) => (
            <line key={v} x1={x0} x2={x1} y1={round(y(v))} y2={round(y(v))} />
          ))}
        </g>

        {band.length > 1 && <path data-series="band" d={bandArea(band) ?? ""} fill={K.glacier} fillOpacity={0.16} stroke="none" />}

        <g data-layer="stage-limits">
          {stageLabels.map(({ stage, lineY, at }) => (
            <g key={`${stage.label}-${stage.c}`}>
              <line x1={x0} x2={x1} y1={lineY} y2={lineY} stroke={STATUS_COLOUR[stage.status]} strokeWidth={1.5} />
              <line x1={x1} x2={x1 + 6} y1={lineY} y2={at} stroke={STATUS_COLOUR[stage.status]} strokeWidth={1.5} />
              <text x={x1 + 10} y={at - 3} fill={STATUS_COLOUR[stage.status]} fontWeight={700}>
                {formatDegrees(stage.c, unit)}
              </text>
              <text x={x1 + 10} y={at + 14} fill={K.inkSoft} fontSize={SMALL}>
                {stage.label}
              </text>
            </g>
          ))}
        </g>

        <g data-layer="deadlines">
          {deadlineLabels.map(({ stage, x: dx, text, left, baseline }) => {
            const colour = STATUS_COLOUR[stage.status];
            return (
              <g key={`${stage.label}-${stage.deadline}`} data-mark="deadline" data-status={stage.status}>
                <title>{`${labels.deadline} ${stage.label}: ${text}`}</title>
                <line
                  x1={dx}
                  x2={dx}
                  y1={y0 - 4}
                  y2={y1}
                  stroke={colour}
                  strokeWidth={2}
                  strokeDasharray={isOpen(stage.status) ? "6 4" : undefined}
                />
                <StatusGlyph status={stage.status} x={round(left)} y={baseline - 11} colour={colour} />
                <text x={round(left + 18)} y={baseline} fill={colour} fontWeight={700}>
                  {text}
                </text>
              </g>
            );
          })}
        </g>

        {predicted.length > 1 && (
          <path
            data-series="predicted"
            d={curveLine(predicted) ?? ""}
            fill="none"
            stroke={K.glacier}
            strokeWidth={3}
            strokeDasharray="9 6"
            strokeLinecap="round"
          />
        )}

        <g data-mark="now">
          <line x1={nowX} x2={nowX} y1={y0} y2={y1} stroke={K.ink} strokeWidth={2} />
          <rect x={round(nowLeft)} y={y0 + 4} width={round(nowW)} height={24} rx={5} fill={K.ink} />
          <text x={round(nowLeft + nowW / 2)} y={y0 + 21} fill="#ffffff" fontSize={SMALL} fontWeight={700} textAnchor="middle">
            {labels.now}
          </text>
        </g>

        <g data-layer="axes" fill={K.inkSoft}>
          <line x1={x0} x2={x1} y1={y1} y2={y1} stroke={K.inkSoft} strokeWidth={1.5} />
          <line x1={x0} x2={x0} y1={y0} y2={y1} stroke={K.inkSoft} strokeWidth={1.5} />
          {yTicks.map((v) => (
            <text key={v} x={x0 - 10} y={round(y(v)) + 5} textAnchor="end">
              {`${v.toFixed(yDigits)} °${unit}`}
            </text>
          ))}
          {xTicks.map((t) => (
            <g key={t}>
              <line x1={px(t)} x2={px(t)} y1={y1} y2={y1 + 6} stroke={K.inkSoft} strokeWidth={1.5} />
              <text x={px(t)} y={y1 + 24} textAnchor="middle">
                {clock(t)}
              </text>
            </g>
          ))}
          <text x={(x0 + x1) / 2} y={height - 12} textAnchor="middle" fill={K.ink} fontWeight={700}>
            {labels.timeAxis}
          </text>
          <text
            transform={`translate(18 ${(y0 + y1) / 2}) rotate(-90)`}
            textAnchor="middle"
            fill={K.ink}
            fontWeight={700}
          >{`${labels.temperatureAxis} (°${unit})`}</text>
        </g>

        {readings.length > 1 && (
          <path data-series="readings" d={readingLine(readings) ?? ""} fill="none" stroke={K.ink} strokeWidth={2.5} strokeLinejoin="round" />
        )}
        <g data-layer="readings">
          {readings.map((r, i) => {
            const rx = px(r.t);
            const ry = py(r.c);
            const note = [r.late ? labels.late : null, r.corrected ? labels.corrected : null].filter(Boolean).join(", ");
            return (
              <g key={`${r.t}-${i}`}>
                <title>{`${labels.reading} ${clock(r.t)}: ${formatDegrees(r.c, unit)}${note ? ` (${note})` : ""}`}</title>
                {r.late && <circle data-mark="late" cx={rx} cy={ry} r={11.5} fill="none" stroke={K.ember} strokeWidth={2.5} />}
                <ReadingMark x={rx} y={ry} corrected={r.corrected} />
              </g>
            );
          })}
        </g>
      </svg>

      <ul className="mt-3 flex flex-wrap gap-x-6 gap-y-2 text-sm text-ink-soft">
        <LegendItem label={labels.reading}>
          <path d="M2,8 H26" stroke={K.ink} strokeWidth={2.5} />
          <circle cx={14} cy={8} r={5.5} fill={K.ink} stroke="#ffffff" strokeWidth={1.5} />
        </LegendItem>
        <LegendItem label={labels.late}>
          <circle cx={14} cy={8} r={6.5} fill="none" stroke={K.ember} strokeWidth={2} />
          <circle cx={14} cy={8} r={3.5} fill={K.ink} />
        </LegendItem>
        {hasCorrected && (
          <LegendItem label={labels.corrected}>
            <path d="M14,1 l7,7 l-7,7 l-7,-7 Z" fill={K.ink} />
          </LegendItem>
        )}
        <LegendItem label={labels.predicted}>
          <path d="M2,8 H26" stroke={K.glacier} strokeWidth={3} strokeDasharray="7 4" />
        </LegendItem>
        <LegendItem label={labels.band}>
          <rect x={2} y={2} width={24} height={12} rx={2} fill={K.glacier} fillOpacity={0.16} />
        </LegendItem>
        <LegendItem label={labels.now}>
          <path d="M14,0 V16" stroke={K.ink} strokeWidth={2} />
        </LegendItem>
        <LegendItem label={labels.deadline}>
          <path d="M14,0 V16" stroke={K.amber} strokeWidth={2} strokeDasharray="4 3" />
        </LegendItem>
        {zone && (
          <LegendItem label={labels.dangerZone}>
            <rect x={2} y={2} width={24} height={12} rx={2} fill={K.amberLight} stroke={K.line} />
          </LegendItem>
        )}
      </ul>
    </figure>
  );
}

function LegendItem({ label, children }: { label: string; children: ReactNode }) {
  return (
    <li className="flex items-center gap-2">
      <svg aria-hidden="true" width={28} height={16} viewBox="0 0 28 16" className="shrink-0">
        {children}
      </svg>
      {label}
    </li>
  );
}
