import { useTranslation } from "react-i18next";

/**
 * The records' download links for a range and a form for another range, as plain links and a plain
 * GET form: the browser downloads the file itself, with or without JavaScript. `base` is where the
 * export routes live (a site's, or a share link's); `limits` keeps the dates inside a shared period.
 */
export function RecordsDownloads({ base, range, rangeTitle, otherTitle, limits }: { base: string; range: { from: string; to: string }; rangeTitle: string; otherTitle: string; limits?: { min: string; max: string } }) {
  const { t } = useTranslation();
  const query = `from=${range.from}&to=${range.to}`;
  const files = [
    { href: `${base}/export.xlsx?${query}`, label: t("recordsExport.workbook") },
    { href: `${base}/export.csv?sheet=batches&${query}`, label: t("recordsExport.csvBatches") },
    { href: `${base}/export.csv?sheet=readings&${query}`, label: t("recordsExport.csvReadings") },
    { href: `${base}/export.csv?sheet=actions&${query}`, label: t("recordsExport.csvActions") },
  ];
  return (
    <>
      <div>
        <h3 className="text-sm font-bold tracking-wide text-ink-soft uppercase">{rangeTitle}</h3>
        <ul className="mt-2 flex flex-wrap gap-2">
          {files.map((f) => (
            <li key={f.href}>
              <a href={f.href} download className="btn-quiet">
                {f.label}
              </a>
            </li>
          ))}
        </ul>
      </div>
      <form method="get" action={`${base}/export.xlsx`} className="grid gap-3">
        <h3 className="text-sm font-bold tracking-wide text-ink-soft uppercase">{otherTitle}</h3>
        <div className="flex flex-wrap items-end gap-3">
          <div>
            <label htmlFor="export-from" className="label">
              {t("recordsExport.from")}
            </label>
            <input id="export-from" name="from" type="date" required className="field" defaultValue={range.from} {...limits} />
          </div>
          <div>
            <label htmlFor="export-to" className="label">
              {t("recordsExport.to")}
            </label>
            <input id="export-to" name="to" type="date" required className="field" defaultValue={range.to} {...limits} />
          </div>
        </div>
        <div className="flex flex-wrap gap-2">
          <button type="submit" className="btn-primary">
            {t("recordsExport.workbook")}
          </button>
          {(["batches", "readings", "actions"] as const).map((sheet) => (
            <button key={sheet} type="submit" formAction={`${base}/export.csv`} name="sheet" value={sheet} className="btn-quiet">
              {t(`recordsExport.csv${sheet[0].toUpperCase()}${sheet.slice(1)}`)}
            </button>
          ))}
        </div>
      </form>
    </>
  );
}
