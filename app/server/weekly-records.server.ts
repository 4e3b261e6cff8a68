// The weekly records e-mail: last week's workbook, made when the e-mail is sent (so it holds the
// record as it stands then), attached when it is small enough, with the period's counts in the body.
import type { sites } from "~db/schema";
import { getI18n, isLanguage } from "~/lib/i18n";
import { boundedSink } from "./bounded-sink.server";
import { env } from "./env.server";
import { periodSummary, recordsWorkbook } from "./export.server";

type Site = typeof sites.$inferSelect;

/** Larger files are not attached (many mail servers refuse them); the e-mail links to the export instead. */
export const ATTACHMENT_LIMIT_BYTES = 10 * 1024 * 1024;
const XLSX = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet";

export type WeeklyDetail = { week: string; from: string; to: string };

/** The words and the file of one weekly e-mail, in the recipient's language. */
export async function composeWeeklyRecords(input: { site: Site; detail: WeeklyDetail; language: string; deliveryId: string }) {
  const lang = isLanguage(input.language) ? input.language : "en";
  const t = getI18n(lang).t;
  const w = (key: string, o?: Record<string, unknown>) => t(`weeklyMail.${key}`, o ?? {}) as string;
  const { site, detail } = input;
  const range = { from: detail.from, to: detail.to };
  const summary = await periodSummary(site, range);
  const workbook = await recordsWorkbook(site, { actor: { kind: "system", label: "weekly e-mail" }, label: w("exporter"), language: lang }, range, { delivery: input.deliveryId, week: detail.week });
  const out = boundedSink(ATTACHMENT_LIMIT_BYTES);
  await workbook.write(out.sink);
  const file = out.result();
  const link = new URL(`/sites/${site.id}/export.xlsx?from=${range.from}&to=${range.to}`, env.APP_URL).toString();
  const mb = (n: number) => (n / 1048576).toFixed(1);
  const lines = [
    w("intro", { site: site.name, from: range.from, to: range.to, week: detail.week, zone: site.timeZone }),
    w("counts", { batches: summary.batches, flagged: summary.flagged, unverified: summary.unverified }),
    file ? w("attached", { file: workbook.fileName }) : w("tooLarge", { size: mb(out.size()), limit: mb(ATTACHMENT_LIMIT_BYTES) }),
    w("retention", { days: site.retentionDays }),
    t("app.caution") as string,
  ];
  return {
    subject: w("subject", { site: site.name, from: range.from, to: range.to }),
    lines,
    action: { label: w(file ? "openExport" : "download"), url: link },
    attachments: file ? [{ filename: workbook.fileName, content: file, contentType: XLSX }] : [],
  };
}
