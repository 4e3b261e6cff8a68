// The controls of a table sorted and paged on the server: header links that sort, the pager and the
// page sizes. Each is a plain link, so they work before the page is interactive and without scripts.
import { useTranslation } from "react-i18next";
import { Link } from "react-router";

/** The strings each table names for its controls, under its own locale section. */
type Ns = "reviewQueue" | "recordsView";

export function SortHeaderCell({ ns, sorted, to, label, className = "" }: { ns: Ns; sorted: false | "asc" | "desc" | null; to: string | null; label: React.ReactNode; className?: string }) {
  const { t } = useTranslation();
  if (to === null) {
    return (
      <th scope="col" className={`px-3 py-3 text-sm font-bold tracking-wide text-ink-soft uppercase ${className}`}>
        {label}
      </th>
    );
  }
  return (
    <th scope="col" aria-sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : "none"} className={`px-1 py-1 ${className}`}>
      <Link to={to} className={`flex min-h-12 items-center gap-1 rounded-lg px-2 text-sm font-bold tracking-wide uppercase hover:bg-frost ${sorted ? "text-ink" : "text-ink-soft"}`}>
        {label}
        <span aria-hidden="true" className="text-base">
          {sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "↕"}
        </span>
        {sorted ? <span className="sr-only">, {t(sorted === "asc" ? `${ns}.sortedAsc` : `${ns}.sortedDesc`)}</span> : null}
      </Link>
    </th>
  );
}

export function Pager({
  ns,
  summary,
  page,
  pageCount,
  sizes,
  size,
  hrefFor,
}: {
  ns: Ns;
  summary: string;
  page: number;
  pageCount: number;
  sizes: readonly number[];
  size: number;
  hrefFor: (change: { page: number; size?: number }) => string;
}) {
  const { t } = useTranslation();
  return (
    <nav aria-label={t(`${ns}.pager`)} className="flex flex-wrap items-center gap-3">
      <p className="text-base font-semibold" data-testid={ns === "reviewQueue" ? "queue-summary" : "records-summary"}>
        {summary}
      </p>
      <div className="flex gap-2">
        {page > 1 ? (
          <Link to={hrefFor({ page: page - 1 })} className="btn-quiet" rel="prev">
            {t(`${ns}.previous`)}
          </Link>
        ) : null}
        {page < pageCount ? (
          <Link to={hrefFor({ page: page + 1 })} className="btn-quiet" rel="next">
            {t(`${ns}.next`)}
          </Link>
        ) : null}
      </div>
      <div className="ml-auto flex items-center gap-2">
        <span className="text-sm font-bold text-ink-soft">{t(`${ns}.perPage`)}</span>
        {sizes.map((s) => (
          <Link
            key={s}
            to={hrefFor({ size: s, page: 1 })}
            aria-current={s === size ? "true" : undefined}
            className={`inline-flex min-h-12 min-w-12 items-center justify-center rounded-lg border-2 font-bold ${s === size ? "border-glacier-dark bg-glacier-dark text-white" : "border-line bg-white"}`}
          >
            {s}
          </Link>
        ))}
      </div>
    </nav>
  );
}
