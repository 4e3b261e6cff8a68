// QA's charts, drawn on the server as SVG: pass-rate bars and the histogram of time to stage 1. Each
// has a title and a summary for screen readers and a table beside it with the exact numbers.
import { useId, type ReactNode } from "react";
import { useTranslation } from "react-i18next";
import { formatMinutes, MIN_GROUP, percent, type Histogram } from "~/lib/analytics";
import { CHART_COLOURS as K } from "~/lib/chart-data";

const FONT = 15;
// The bars' names and counts a size up: the chart is scaled down to fit a tablet held upright.
const BAR_FONT = 16;
// A rough advance per character at 15 px (bold, 16 px: 9.2), for laying out labels without measuring text.
const CHAR_W = 8.4;
const BAR_CHAR_W = 9.2;
const FAMILY = "'Nunito Sans', ui-sans-serif, system-ui, sans-serif";

export type RateRow = { key: string; label: string; ended: number; passed: number };

const clip = (text: string, chars: number) => (text.length <= chars ? text : `${text.slice(0, Math.max(1, chars - 1)).trimEnd()}…`);

/** Diagonal hatching: the shape that tells "too few to judge" and "after the limit" apart without colour. */
function Hatch({ id, colour }: { id: string; colour: string }) {
  return (
    <pattern id={id} width={8} height={8} patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
      <rect width={8} height={8} fill="#ffffff" />
      <line x1={0} y1={0} x2={0} y2={8} stroke={colour} strokeWidth={4} />
    </pattern>
  );
}

/**
 * Horizontal bars of the pass rate of each group, with "12 of 14 · 86 %" beside each. A group with fewer
 * than MIN_GROUP ended batches is hatched and says it is too few to judge.
 */
export function RateBars({ title, rows, testId }: { title: string; rows: readonly RateRow[]; testId: string }) {
  const { t } = useTranslation();
  const id = useId().replace(/[^a-zA-Z0-9_-]/g, "");
  const width = 720;
  const rowH = 60;
  const track = 430;
  const axisH = 30;
  const height = rows.length * rowH + axisH + 6;
  const rate = (r: RateRow) => (r.ended ? r.passed / r.ended : 0);
  const few = (r: RateRow) => r.ended > 0 && r.ended < MIN_GROUP;
  const value = (r: RateRow) => (r.ended ? t("analytics.countOf", { passed: r.passed, ended: r.ended, percent: percent(r.passed, r.ended) }) : t("analytics.noneEnded"));
  const summary = rows.map((r) => `${r.label}: ${value(r)}${few(r) ? ` (${t("analytics.tooFew")})` : ""}`).join("; ");
  const tooFewTag = ` · ${t("analytics.tooFew")}`;
  return (
    <figure className="grid gap-3" data-testid={testId}>
      <svg role="img" aria-labelledby={`${id}-t ${id}-d`} viewBox={`0 0 ${width} ${height}`} width="100%" className="block h-auto w-full max-w-3xl" fontFamily={FAMILY} fontSize={BAR_FONT}>
        <title id={`${id}-t`}>{title}</title>
        <desc id={`${id}-d`}>{summary}</desc>
        <defs>
          <Hatch id={`${id}-few`} colour={K.glacierLight} />
        </defs>
        <g data-layer="grid" stroke={K.frostDeep} strokeWidth={1}>
          {[0, 0.25, 0.5, 0.75, 1].map((f) => (
            <line key={f} x1={f * track + 0.5} x2={f * track + 0.5} y1={4} y2={height - axisH} />
          ))}
        </g>
        {rows.map((r, i) => {
          const top = i * rowH + 6;
          const tag = few(r) ? tooFewTag : "";
          const label = clip(r.label, Math.floor(width / BAR_CHAR_W) - tag.length - 1);
          return (
            <g key={r.key} data-row={r.key}>
              {/* A white halo keeps the name readable over the grid lines. */}
              <text x={0} y={top + 16} fill={K.ink} fontWeight={700} stroke="#ffffff" strokeWidth={5} paintOrder="stroke" strokeLinejoin="round">
                <title>{r.label}</title>
                {label}
                {tag ? (
                  <tspan fill={K.amber} fontWeight={700}>
                    {tag}
                  </tspan>
                ) : null}
              </text>
              <rect x={0} y={top + 26} width={track} height={24} rx={4} fill={K.frost} />
              {r.ended ? <rect x={0} y={top + 26} width={Math.max(2, rate(r) * track)} height={24} rx={4} fill={few(r) ? `url(#${id}-few)` : K.glacier} stroke={few(r) ? K.glacier : "none"} strokeWidth={few(r) ? 1.5 : 0} /> : null}
              <text x={track + 12} y={top + 44} fill={r.ended ? K.ink : K.inkSoft} fontWeight={r.ended ? 700 : 400}>
                {value(r)}
              </text>
            </g>
          );
        })}
        <g data-layer="axis" fill={K.inkSoft} fontSize={14}>
          {[0, 0.5, 1].map((f) => (
            <text key={f} x={f * track} y={height - 8} textAnchor={f === 0 ? "start" : f === 1 ? "end" : "middle"}>
              {`${f * 100} %`}
            </text>
          ))}
        </g>
      </svg>
      <details className="text-base">
        <summary className="min-h-12 cursor-pointer py-2 font-bold text-glacier-dark">{t("analytics.showTable")}</summary>
        <NumbersTable
          caption={title}
          testId={`${testId}-table`}
          columns={[t("analytics.table.group"), t("analytics.table.ended"), t("analytics.table.passed"), t("analytics.table.failed"), t("analytics.table.rate")]}
          rows={rows.map((r) => ({
            key: r.key,
            head: (
              <>
                {r.label}
                {few(r) ? <span className="block text-sm font-bold text-amber">{t("analytics.tooFew")}</span> : null}
              </>
            ),
            cells: [r.ended, r.passed, r.ended - r.passed, r.ended ? `${percent(r.passed, r.ended)} %` : "—"],
          }))}
        />
      </details>
    </figure>
  );
}

/**
 * The histogram of minutes from the clock start to the first reading at or below the stage-1 limit.
 * Bins hold (from, to]; those up to the limit are solid, those after it hatched, and the limit itself is
 * a dashed line with its time written above.
 */
export function StageOneHistogram({ histogram, title, testId }: { histogram: Histogram; title: string; testId: string }) {
  const { t } = useTranslation();
  const id = useId().replace(/[^a-zA-Z0-9_-]/g, "");
  const width = 720;
  const height = 320;
  const m = { top: 44, right: 12, bottom: 58, left: 44 };
  const x0 = m.left;
  const x1 = width - m.right;
  const y0 = m.top;
  const y1 = height - m.bottom;
  const { bins, binMinutes, limitMinutes } = histogram;
  const step = (x1 - x0) / bins.length;
  const max = Math.max(1, ...bins.map((b) => b.count));
  const yTicks = niceTicks(max);
  const top = yTicks[yTicks.length - 1];
  const y = (v: number) => y1 - (v / top) * (y1 - y0);
  const limitX = x0 + (limitMinutes / binMinutes) * step;
  const within = (b: Histogram["bins"][number]) => b.toMin !== null && b.toMin <= limitMinutes;
  const binText = (b: Histogram["bins"][number]) =>
    b.toMin === null
      ? t("analytics.binOver", { from: formatMinutes(b.fromMin) })
      : b.fromMin === 0
        ? t("analytics.binFirst", { to: formatMinutes(b.toMin) })
        : t("analytics.bin", { from: formatMinutes(b.fromMin), to: formatMinutes(b.toMin) });
  const summary = bins
    .filter((b) => b.count)
    .map((b) => `${binText(b)}: ${b.count}`)
    .join("; ");
  const limitLabel = t("analytics.limitMark", { time: formatMinutes(limitMinutes) });
  const labelW = limitLabel.length * CHAR_W;
  const labelX = Math.min(x1 - labelW / 2, Math.max(x0 + labelW / 2, limitX));
  return (
    <figure className="grid gap-3" data-testid={testId}>
      <svg role="img" aria-labelledby={`${id}-t ${id}-d`} viewBox={`0 0 ${width} ${height}`} width="100%" className="block h-auto w-full max-w-3xl" fontFamily={FAMILY} fontSize={FONT}>
        <title id={`${id}-t`}>{title}</title>
        <desc id={`${id}-d`}>{summary || t("analytics.noneReached")}</desc>
        <defs>
          <Hatch id={`${id}-late`} colour={K.emberLight} />
        </defs>
        <g data-layer="grid" stroke={K.frostDeep} strokeWidth={1}>
          {yTicks.map((v) => (
            <line key={v} x1={x0} x2={x1} y1={y(v)} y2={y(v)} />
          ))}
        </g>
        <g data-layer="count-axis" fill={K.inkSoft} fontSize={14} textAnchor="end">
          {yTicks.map((v) => (
            <text key={v} x={x0 - 8} y={y(v) + 5}>
              {v}
            </text>
          ))}
        </g>
        {bins.map((b, i) => {
          const x = x0 + i * step + 2;
          const h = y1 - y(b.count);
          return (
            <g key={i} data-bin={i}>
              {b.count ? (
                <rect x={x} y={y(b.count)} width={step - 4} height={h} fill={within(b) ? K.pine : `url(#${id}-late)`} stroke={within(b) ? "none" : K.ember} strokeWidth={1.5}>
                  <title>{`${binText(b)}: ${b.count}`}</title>
                </rect>
              ) : null}
              {b.count ? (
                <text x={x + (step - 4) / 2} y={y(b.count) - 6} textAnchor="middle" fontWeight={700} fill={K.ink} fontSize={14}>
                  {b.count}
                </text>
              ) : null}
            </g>
          );
        })}
        <line x1={x0} x2={x1} y1={y1} y2={y1} stroke={K.inkSoft} strokeWidth={1.5} />
        <g data-layer="time-axis" fill={K.inkSoft} fontSize={14} textAnchor="middle">
          {bins.map((b, i) =>
            // Every fourth boundary; the last bin's own label ("> 4 h") stands in for its left edge.
            i % 4 === 0 && i < bins.length - 1 ? (
              <text key={i} x={x0 + i * step} y={y1 + 20}>
                {formatMinutes(b.fromMin)}
              </text>
            ) : null,
          )}
          <text x={x1 - step / 2} y={y1 + 20}>
            {`> ${formatMinutes(bins[bins.length - 1].fromMin)}`}
          </text>
          <text x={(x0 + x1) / 2} y={height - 8} fill={K.ink} fontWeight={700} fontSize={FONT}>
            {t("analytics.timeAxis")}
          </text>
        </g>
        <g data-layer="limit">
          <line x1={limitX} x2={limitX} y1={y0 - 8} y2={y1} stroke={K.ember} strokeWidth={2.5} strokeDasharray="7 5" />
          <text x={labelX} y={y0 - 16} textAnchor="middle" fill={K.ember} fontWeight={800}>
            {limitLabel}
          </text>
        </g>
      </svg>
      <ul className="flex flex-wrap gap-x-6 gap-y-2 text-base" aria-label={t("analytics.legend")}>
        <li className="flex items-center gap-2">
          <svg aria-hidden="true" width={22} height={16} viewBox="0 0 22 16">
            <rect width={22} height={16} fill={K.pine} />
          </svg>
          {t("analytics.byTheLimit")}
        </li>
        <li className="flex items-center gap-2">
          <svg aria-hidden="true" width={22} height={16} viewBox="0 0 22 16">
            <defs>
              <Hatch id={`${id}-late-key`} colour={K.emberLight} />
            </defs>
            <rect x={0.75} y={0.75} width={20.5} height={14.5} fill={`url(#${id}-late-key)`} stroke={K.ember} strokeWidth={1.5} />
          </svg>
          {t("analytics.afterTheLimit")}
        </li>
      </ul>
      <details className="text-base">
        <summary className="min-h-12 cursor-pointer py-2 font-bold text-glacier-dark">{t("analytics.showTable")}</summary>
        <NumbersTable
          caption={title}
          testId={`${testId}-table`}
          columns={[t("analytics.table.time"), t("analytics.table.batches")]}
          rows={bins.map((b, i) => ({ key: String(i), head: binText(b), cells: [b.count] }))}
        />
      </details>
    </figure>
  );
}

export type NumbersRow = { key: string; head: ReactNode; cells: (string | number)[] };

/** The exact numbers behind a chart: a header cell naming each row, then figures aligned right. */
export function NumbersTable({ caption, columns, rows, testId }: { caption: string; columns: string[]; rows: NumbersRow[]; testId: string }) {
  return (
    <div className="overflow-x-auto">
      <table className="mt-2 w-full border-collapse text-left text-base" data-testid={testId}>
        <caption className="sr-only">{caption}</caption>
        <thead>
          <tr className="border-b-2 border-line text-sm text-ink-soft">
            {columns.map((c, i) => (
              <th key={c} scope="col" className={`py-2 ${i ? "pl-3 text-right" : "pr-3"}`}>
                {c}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => (
            <tr key={r.key} className="border-b border-line" data-row={r.key}>
              <th scope="row" className="py-2 pr-3 font-semibold">
                {r.head}
              </th>
              {r.cells.map((c, i) => (
                <td key={i} className="py-2 pl-3 text-right tabular-nums">
                  {c}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

/** Whole-number ticks from 0 to at least `max`, about five of them. */
function niceTicks(max: number) {
  const raw = max / 4;
  const mag = 10 ** Math.floor(Math.log10(Math.max(1, raw)));
  const step = Math.max(1, [1, 2, 5, 10].map((s) => s * mag).find((s) => s >= raw) ?? mag * 10);
  const ticks = [];
  for (let v = 0; v < max + step; v += step) ticks.push(v);
  return ticks;
}
