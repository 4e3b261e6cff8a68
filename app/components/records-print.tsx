// A period's cooling log laid out for paper (A4 or Letter, landscape): a header that says what the
// sheet is and where it comes from, then one compact row per batch. Used by a site's print view and
// by a share link's.
import { useTranslation } from "react-i18next";
import type { PrintBatch } from "~/server/records.server";
import type { RecordTotals } from "~/lib/records-query";
import { recordTime, StageLine } from "./records-table";

export type PrintLogData = {
  organisation: string;
  site: { name: string; timeZone: string; unit: "F" | "C"; retentionDays: number };
  ruleSet: { name: string; citation: string; version: number };
  period: { from: string; to: string };
  cut: boolean;
  truncated: boolean;
  totals: RecordTotals;
  batches: PrintBatch[];
  printedAt: number;
  printedBy: string;
};

const clock = (ms: number, timeZone: string, lang: string) => new Intl.DateTimeFormat(lang, { timeZone, hour: "2-digit", minute: "2-digit" }).format(ms);

export function RecordsPrintLog({ log, back }: { log: PrintLogData; back?: React.ReactNode }) {
  const { t, i18n } = useTranslation();
  const lang = i18n.language;
  const zone = log.site.timeZone;
  const { totals } = log;
  return (
    <div className="print-log mx-auto grid max-w-[1400px] gap-4 bg-white p-6 text-ink print:max-w-none print:gap-2 print:p-0">
      <div className="flex flex-wrap items-center gap-3 print:hidden">
        {back}
        <button type="button" className="btn-primary" onClick={() => window.print()}>
          {t("recordsPrint.printButton")}
        </button>
      </div>
      <header className="grid gap-1 border-b-4 border-ink pb-2">
        <h1 className="text-2xl font-extrabold print:text-lg">
          {t("recordsPrint.title", { site: log.site.name })} <span className="font-semibold text-ink-soft">· {log.organisation}</span>
        </h1>
        <p className="text-base font-semibold print:text-xs">{t("recordsPrint.period", { from: log.period.from, to: log.period.to, zone, unit: log.site.unit })}</p>
        <p className="text-sm print:text-[10px]">
          {log.ruleSet.name} — {log.ruleSet.citation} (v{log.ruleSet.version}) ·{" "}
          {t("recordsView.totalBatches")}: {totals.batches} · {t("recordsView.totalPassRate")}:{" "}
          {totals.passRate === null ? t("recordsView.noPassRate") : t("recordsView.passRateValue", { rate: totals.passRate, passed: totals.cooled, ended: totals.ended })} ·{" "}
          {t("recordsView.totalUnverified")}: {totals.unverified}
        </p>
        <p className="text-sm font-bold print:text-[10px]" data-testid="caution">
          {t("app.caution")} {t("recordsView.retention", { days: log.site.retentionDays, years: Math.round((log.site.retentionDays / 365) * 10) / 10 })}
        </p>
        <p className="text-sm text-ink-soft print:text-[10px]">{t("recordsPrint.printed", { time: recordTime(log.printedAt, zone, lang), name: log.printedBy })}</p>
        {log.cut ? <p className="text-sm font-bold">{t("recordsPrint.rangeTooLong", log.period)}</p> : null}
        {log.truncated ? <p className="text-sm font-bold">{t("recordsPrint.tooMany", { shown: log.batches.length, count: totals.batches })}</p> : null}
      </header>
      {log.batches.length === 0 ? (
        <p className="text-lg font-semibold">{t("recordsView.empty")}</p>
      ) : (
        <table className="w-full border-collapse text-left text-sm print:text-[9px] print:leading-tight" data-testid="print-log">
          <thead>
            <tr className="border-b-2 border-ink">
              <th className="py-1 pr-2">{t("recordsView.columns.started")}</th>
              <th className="py-1 pr-2">{t("recordsView.columns.product")}</th>
              <th className="py-1 pr-2">{t("recordsView.columns.method")}</th>
              <th className="py-1 pr-2">{t("recordsPrint.readings")}</th>
              <th className="py-1 pr-2">{t("recordsView.columns.stages")}</th>
              <th className="py-1 pr-2">{t("recordsPrint.actions")}</th>
              <th className="py-1 pr-2">{t("recordsView.columns.outcome")}</th>
              <th className="py-1">{t("recordsPrint.signature")}</th>
            </tr>
          </thead>
          <tbody>
            {log.batches.map((b) => (
              <tr key={b.id} className="break-inside-avoid border-b border-line align-top" data-testid="print-row">
                <td className="py-1 pr-2 whitespace-nowrap">
                  {recordTime(b.startedAt, zone, lang)}
                  {b.startedBy ? <span className="block text-ink-soft">{b.startedBy}</span> : null}
                </td>
                <td className="py-1 pr-2">
                  <span className="font-bold">{b.product}</span>
                  <span className="block">{t("recordsView.lot", { lot: b.lotCode })}</span>
                </td>
                <td className="py-1 pr-2">
                  {t(`library.methods.${b.method}`, { defaultValue: b.method })}
                  {b.equipment ? <span className="block text-ink-soft">{b.equipment}</span> : null}
                </td>
                <td className="py-1 pr-2">
                  {b.readings.length === 0
                    ? t("recordsPrint.noReadings")
                    : b.readings.map((r, i) => (
                        <span key={i} className="mr-2 inline-block whitespace-nowrap">
                          {clock(r.takenAt, zone, lang)} <span className="font-bold">{r.value}°{r.unit}</span>
                          {r.kind === "reheat" ? " ↑" : ""}
                          {r.corrected ? "*" : ""}
                          {r.late ? <em> {t("recordsPrint.late")}</em> : null}
                        </span>
                      ))}
                </td>
                <td className="py-1 pr-2">
                  {b.stages.map((st) => (
                    <StageLine key={st.stage} st={st} row={b} />
                  ))}
                </td>
                <td className="py-1 pr-2">
                  {b.actions.map((a, i) => (
                    <span key={i} className="block">
                      {clock(a.takenAt, zone, lang)} {t(`recordsSheet.actionKinds.${a.kind}`)}
                      {a.by ? ` (${a.by})` : ""}
                    </span>
                  ))}
                </td>
                <td className="py-1 pr-2 font-bold">{t(`recordsView.outcomes.${b.state}`)}</td>
                <td className="py-1">
                  {b.signedAt !== null ? t("recordsView.signedBy", { name: b.signedBy ?? "", time: recordTime(b.signedAt, zone, lang) }) : b.state !== "cooling" ? t("recordsView.notSigned") : ""}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      <p className="text-xs text-ink-soft print:text-[8px]">{t("recordsPrint.legend")}</p>
    </div>
  );
}
