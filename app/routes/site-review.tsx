import { createColumnHelper, rowPaginationFeature, rowSortingFeature, tableFeatures, useTable, type Header } from "@tanstack/react-table";
import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import { Form, Link } from "react-router";
import { countdown, verdictStyle } from "~/components/batch-card";
import { Notice } from "~/components/frame";
import { Pager, SortHeaderCell } from "~/components/table-controls";
import { ReasonBadge, ReasonShapeIcon } from "~/components/reason-badge";
import { defaultQueueQuery as defaults, firstDir, pageSizes, reviewReasons, type QueueQuery, type ReasonCode, type SortKey } from "~/lib/review-reasons";
import { can, requireRole } from "~/server/guards.server";
import { getReviewQueue, parseQueueQuery, type QueueRow } from "~/server/review-queue.server";
import type { Route } from "./+types/site-review";

export const meta: Route.MetaFunction = () => [{ title: "Review · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireRole(request, can.review, params.siteId);
  const { query, ignored } = parseQueueQuery(new URL(request.url).searchParams);
  const now = new Date();
  const queue = await getReviewQueue(site.id, query, now);
  return { site: { id: site.id, name: site.name, timeZone: site.timeZone }, query, ignored, now: now.getTime(), ...queue };
}


/** The queue's address with some of its query changed; defaults are left out so links stay short. */
function hrefWith(query: QueueQuery, change: Partial<QueueQuery>) {
  const next = { ...query, ...change };
  const params = new URLSearchParams();
  if (next.sort !== defaults.sort) params.set("sort", next.sort);
  if (next.dir !== firstDir[next.sort]) params.set("dir", next.dir);
  if (next.reason) params.set("reason", next.reason);
  if (next.q) params.set("q", next.q);
  if (next.page !== 1) params.set("page", String(next.page));
  if (next.size !== defaults.size) params.set("size", String(next.size));
  const s = params.toString();
  return s ? `?${s}` : "?";
}

const features = tableFeatures({ rowSortingFeature, rowPaginationFeature });
const column = createColumnHelper<typeof features, QueueRow>();

/** A clock time, with the weekday when it is not today (in the site's time zone). */
function when(ms: number, now: number, timeZone: string, lang: string) {
  const day = (v: number) => new Intl.DateTimeFormat("en-CA", { timeZone, dateStyle: "short" }).format(v);
  const sameDay = day(ms) === day(now);
  return new Intl.DateTimeFormat(lang, { timeZone, weekday: sameDay ? undefined : "short", hour: "2-digit", minute: "2-digit" }).format(ms);
}

export default function SiteReview({ loaderData }: Route.ComponentProps) {
  const { t, i18n } = useTranslation();
  const { site, query, ignored, rows, total, counts, page, clamped, now } = loaderData;
  const lang = i18n.language;

  const columns = useMemo(
    () =>
      column.columns([
        column.accessor("product", {
          id: "product",
          header: () => t("reviewQueue.columns.batch"),
          cell: ({ row }) => (
            <Link
              to={`/sites/${site.id}/batches/${row.original.id}`}
              className="font-extrabold text-glacier-dark underline-offset-4 after:absolute after:inset-0 hover:underline"
              data-testid="queue-row-link"
            >
              {row.original.product}
              <span className="block text-sm font-semibold text-ink-soft">{t("reviewQueue.lot", { lot: row.original.lotCode })}</span>
            </Link>
          ),
        }),
        column.accessor("reasons", {
          id: "severity",
          header: () => t("reviewQueue.columns.reasons"),
          cell: ({ getValue }) => (
            <ul className="flex flex-wrap gap-1.5">
              {getValue().map((code) => (
                <li key={code}>
                  <ReasonBadge code={code} />
                </li>
              ))}
            </ul>
          ),
        }),
        column.accessor("verdict", {
          id: "verdict",
          enableSorting: false,
          header: () => t("reviewQueue.columns.verdict"),
          cell: ({ row }) => {
            const { verdict, state } = row.original;
            if (state !== "cooling") return <span className="text-base">{t(`batch.state.${state}`)}</span>;
            if (!verdict) return <span className="text-ink-soft">{t("reviewQueue.noVerdict")}</span>;
            return <span className={`rounded-xl border-2 px-2 py-0.5 text-sm font-extrabold whitespace-nowrap ${verdictStyle[verdict]}`}>{t(`verdict.${verdict}`)}</span>;
          },
        }),
        column.accessor("startedAt", {
          id: "started",
          header: () => t("reviewQueue.columns.started"),
          cell: ({ getValue }) => <span className="whitespace-nowrap">{when(getValue(), now, site.timeZone, lang)}</span>,
        }),
        column.accessor("nextReadingDueAt", {
          id: "due",
          header: () => t("reviewQueue.columns.due"),
          cell: ({ getValue }) => {
            const due = getValue();
            if (due === null) return <span className="text-ink-soft">{t("reviewQueue.nothingDue")}</span>;
            return (
              <span className="whitespace-nowrap">
                {when(due, now, site.timeZone, lang)}
                {due < now ? <span className="block text-sm font-bold text-ember">{t("reviewQueue.overdueBy", { time: countdown(now - due).replace("−", "") })}</span> : null}
              </span>
            );
          },
        }),
      ]),
    [t, lang, site.id, site.timeZone, now],
  );

  // The server sorts, filters and pages; the table only renders what it was given, in that order.
  const table = useTable({
    features,
    columns,
    data: rows,
    getRowId: (r) => r.id,
    manualSorting: true,
    manualPagination: true,
    rowCount: total,
    state: { sorting: [{ id: query.sort, desc: query.dir === "desc" }], pagination: { pageIndex: page - 1, pageSize: query.size } },
  });

  const filtered = query.reason !== null || query.q !== "";
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("reviewQueue.title", { site: site.name })}</h1>
        <p className="mt-1 text-lg text-ink-soft">{t("reviewQueue.intro")}</p>
      </div>
      {ignored.length ? <Notice tone="warn">{t("reviewQueue.ignored", { params: ignored.map((p) => t(`reviewQueue.param.${p}`)).join(", ") })}</Notice> : null}
      {clamped ? <Notice tone="warn">{t("reviewQueue.clamped", { asked: query.page })}</Notice> : null}

      <section className="card grid gap-4" aria-label={t("reviewQueue.filterLabel")}>
        <nav aria-label={t("reviewQueue.filterLabel")}>
          <ul className="flex flex-wrap gap-2">
            <li>
              <Chip to={hrefWith(query, { reason: null, page: 1 })} active={query.reason === null}>
                {t("reviewQueue.all", { count: counts.all })}
              </Chip>
            </li>
            {reviewReasons.map((r) => (
              <li key={r.code}>
                <Chip to={hrefWith(query, { reason: query.reason === r.code ? null : r.code, page: 1 })} active={query.reason === r.code}>
                  <ReasonShapeIcon shape={r.shape} />
                  {t(`reviewReason.${r.code}`)} ({counts[r.code as ReasonCode]})
                </Chip>
              </li>
            ))}
          </ul>
        </nav>
        <Form method="get" className="flex flex-wrap items-end gap-3" role="search">
          {query.sort !== defaults.sort ? <input type="hidden" name="sort" value={query.sort} /> : null}
          {query.dir !== firstDir[query.sort] ? <input type="hidden" name="dir" value={query.dir} /> : null}
          {query.reason ? <input type="hidden" name="reason" value={query.reason} /> : null}
          {query.size !== defaults.size ? <input type="hidden" name="size" value={query.size} /> : null}
          <div className="min-w-64 flex-1">
            <label htmlFor="queue-q" className="label">
              {t("reviewQueue.search")}
            </label>
            <input id="queue-q" name="q" type="search" className="field" defaultValue={query.q} maxLength={80} key={query.q} />
          </div>
          <button type="submit" className="btn-primary">
            {t("reviewQueue.searchButton")}
          </button>
          {query.q ? (
            <Link to={hrefWith(query, { q: "", page: 1 })} className="btn-quiet">
              {t("reviewQueue.clearSearch")}
            </Link>
          ) : null}
        </Form>
      </section>

      <p className="text-base text-ink-soft" data-testid="caution">
        {t("app.caution")}
      </p>

      {rows.length === 0 ? (
        <p className="card text-lg font-semibold" data-testid="queue-empty">
          {filtered ? t("reviewQueue.emptyFiltered") : t("reviewQueue.empty")}
        </p>
      ) : (
        <div className="overflow-x-auto rounded-2xl border-2 border-line bg-white">
          <table className="w-full border-collapse text-left text-base">
            <thead className="bg-frost-deep">
              {table.getHeaderGroups().map((group) => (
                <tr key={group.id}>
                  {group.headers.map((header) => (
                    <SortableHeader key={header.id} header={header} query={query} label={<table.FlexRender header={header} />} />
                  ))}
                </tr>
              ))}
            </thead>
            <tbody>
              {table.getRowModel().rows.map((row) => (
                <tr key={row.id} className="relative border-t-2 border-line hover:bg-frost" data-testid="queue-row">
                  {row.getAllCells().map((cell) => (
                    <td key={cell.id} className="px-3 py-4 align-top">
                      <table.FlexRender cell={cell} />
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}

      <Pager
        ns="reviewQueue"
        summary={t("reviewQueue.summary", { count: total, page, pages: Math.max(1, table.getPageCount()) })}
        page={page}
        pageCount={table.getPageCount()}
        sizes={pageSizes}
        size={query.size}
        hrefFor={(c) => hrefWith(query, c as Partial<QueueQuery>)}
      />
    </div>
  );
}

function SortableHeader({ header, query, label }: { header: Header<typeof features, QueueRow, unknown>; query: QueueQuery; label: React.ReactNode }) {
  const id = header.column.id as SortKey;
  const sorted = header.column.getIsSorted();
  const nextDir = sorted ? (sorted === "asc" ? "desc" : "asc") : firstDir[id];
  return <SortHeaderCell ns="reviewQueue" sorted={sorted} to={header.column.getCanSort() ? hrefWith(query, { sort: id, dir: nextDir, page: 1 }) : null} label={label} />;
}

function Chip({ to, active, children }: { to: string; active: boolean; children: React.ReactNode }) {
  return (
    <Link
      to={to}
      aria-current={active ? "true" : undefined}
      className={`inline-flex min-h-12 items-center gap-2 rounded-full border-2 px-4 text-base font-bold ${active ? "border-glacier-dark bg-glacier-dark text-white" : "border-line bg-white text-ink hover:border-glacier"}`}
    >
      {children}
    </Link>
  );
}
