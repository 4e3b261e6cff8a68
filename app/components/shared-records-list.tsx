import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { siteTime } from "~/lib/site-time";

// The shared view's list of the period's batches. A stand-in, kept in one place: the full records
// view (app/components/records-table.tsx) replaces it when it lands.

export type SharedBatchRow = { id: string; product: string; lotCode: string; startedAt: number; outcome: string; verifiedBy: string | null };

const outcomeTone: Record<string, string> = { passed: "text-pine", passedAfterReheat: "text-pine", missed: "text-ember", discarded: "text-ember", inProgress: "text-amber" };

export function SharedRecordsList({ rows, timeZone, batchHref, truncatedAt }: { rows: SharedBatchRow[]; timeZone: string; batchHref: (id: string) => string; truncatedAt: number | null }) {
  const { t, i18n } = useTranslation();
  return (
    <section className="card overflow-x-auto" aria-labelledby="shared-records">
      <h2 id="shared-records" className="text-xl font-extrabold">
        {t("share.view.recordsTitle")}
      </h2>
      <p className="mt-1 mb-4 text-base text-ink-soft">{t("share.view.recordsIntro", { zone: timeZone })}</p>
      {rows.length === 0 ? (
        <p className="text-base">{t("share.view.noBatches")}</p>
      ) : (
        <table className="w-full min-w-[600px] text-left">
          <thead>
            <tr className="border-b border-line text-sm text-ink-soft">
              <th className="py-2 pr-3">{t("share.view.product")}</th>
              <th className="py-2 pr-3">{t("share.view.lot")}</th>
              <th className="py-2 pr-3">{t("share.view.started")}</th>
              <th className="py-2 pr-3">{t("share.view.outcome")}</th>
              <th className="py-2">{t("share.view.verifiedBy")}</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((b) => (
              <tr key={b.id} className="border-b border-line last:border-0 print:break-inside-avoid" data-testid="shared-batch-row">
                <td className="py-3 pr-3">
                  <Link to={batchHref(b.id)} className="font-extrabold text-glacier-dark underline underline-offset-4">
                    {b.product}
                  </Link>
                </td>
                <td className="py-3 pr-3">{b.lotCode}</td>
                <td className="py-3 pr-3 whitespace-nowrap">{siteTime(b.startedAt, timeZone, i18n.language)}</td>
                <td className={`py-3 pr-3 font-bold ${outcomeTone[b.outcome] ?? ""}`}>{t(`share.view.outcomes.${b.outcome}`)}</td>
                <td className="py-3">{b.verifiedBy ?? <span className="text-ink-soft">{t("share.view.notVerified")}</span>}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {truncatedAt ? <p className="mt-3 text-sm font-bold text-amber">{t("share.view.truncated", { count: truncatedAt })}</p> : null}
    </section>
  );
}
