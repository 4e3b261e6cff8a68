// The records view's body: filters, totals, the table and its pager. Used by a site's records, the
// organisation's records for QA, and a share link's read-only view; each says where a batch opens.
import { createColumnHelper, rowPaginationFeature, rowSortingFeature, tableFeatures, useTable, type Header } from "@tanstack/react-table";
import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import { Form, Link } from "react-router";
import { Notice } from "~/components/frame";
import { Pager, SortHeaderCell } from "~/components/table-controls";
import { recordFirstDir, recordOutcomes, recordPageSizes, recordsHref, type RecordRow, type RecordSortKey, type RecordsQuery, type RecordTotals, type StageCell } from "~/lib/records-query";

export type RecordsOptions = {
  sites: { id: string; name: string }[];
  products: { id: string; name: string; siteId: string }[];
  equipment: { id: string; name: string; siteId: string }[];
  methods: readonly string[];
  cooks: { id: string; name: string }[];
};

export type RecordsData = {
  query: RecordsQuery;
  defaults: { from: string; to: string };
  ignored: string[];
  rows: RecordRow[];
  totals: RecordTotals;
  page: number;
  pageCount: number;
  clamped: boolean;
  options: RecordsOptions;
};

// Columns a portrait tablet shows inside the batch and outcome cells instead.
const foldable = new Set(["method", "verified"]);

function Signature({ row }: { row: RecordRow }) {
  const { t, i18n } = useTranslation();
  if (row.signedAt !== null) return <span className="text-base">{t("recordsView.signedBy", { name: row.signedBy ?? "", time: recordTime(row.signedAt, row.timeZone, i18n.language) })}</span>;
  return row.state !== "cooling" ? <span className="font-bold text-ink-soft">{t("recordsView.notSigned")}</span> : null;
}

const features = tableFeatures({ rowSortingFeature, rowPaginationFeature });
const column = createColumnHelper<typeof features, RecordRow>();

/** "Tue 1 Dec, 06:42" in the batch's own site zone. */
export function recordTime(ms: number, timeZone: string, lang: string) {
  return new Intl.DateTimeFormat(lang, { timeZone, weekday: "short", day: "numeric", month: "short", hour: "2-digit", minute: "2-digit" }).format(ms);
}

const outcomeStyle: Record<RecordRow["state"], string> = {
  cooling: "border-glacier bg-glacier-light",
  cooled: "border-pine bg-pine-light",
  cooled_after_reheat: "border-amber bg-amber-light",
  discarded: "border-ember bg-ember-light",
};

export function StageLine({ st, row }: { st: StageCell; row: Pick<RecordRow, "timeZone" | "unit"> }) {
  const { t, i18n } = useTranslation();
  const time = (ms: number | null) => (ms === null ? "—" : recordTime(ms, row.timeZone, i18n.language));
  const text =
    st.status === "met"
      ? t("recordsView.stageMet", { time: time(st.metAt), value: st.metValue, unit: row.unit })
      : st.status === "missed"
        ? t("recordsView.stageMissed", { time: time(st.deadline) })
        : st.status === "in-progress"
          ? t("recordsView.stageInProgress", { time: time(st.deadline) })
          : st.status === "stopped"
            ? t("recordsView.stageStopped")
            : t("recordsView.stageNotStarted");
  const mark = st.status === "met" ? "✓" : st.status === "missed" ? "✗" : st.status === "in-progress" ? "…" : "–";
  return (
    <span className={`block ${st.status === "missed" ? "font-bold text-ember" : ""}`} data-testid="record-stage" data-status={st.status}>
      <span aria-hidden="true" className="inline-block w-4 font-extrabold">
        {mark}
      </span>
      <span className="font-semibold">{t("recordsView.stage", { n: st.stage, limit: st.limit, unit: row.unit })}</span>: {text}
    </span>
  );
}

export function RecordsTable({
  data,
  batchHref,
  multiSite = false,
  hiddenFilters = [],
}: {
  data: RecordsData;
  batchHref: (row: RecordRow) => string;
  multiSite?: boolean;
  hiddenFilters?: ("cook" | "site")[];
}) {
  const { t, i18n } = useTranslation();
  const lang = i18n.language;
  const { query, defaults, ignored, rows, totals, page, pageCount, clamped, options } = data;
  const href = (change: Partial<RecordsQuery>) => recordsHref(query, change, defaults);

  const columns = useMemo(
    () =>
      column.columns([
        column.accessor("startedAt", {
          id: "started",
          header: () => t("recordsView.columns.started"),
          cell: ({ row }) => (
            <span className="whitespace-nowrap">
              {recordTime(row.original.startedAt, row.original.timeZone, lang)}
              {row.original.startedBy ? <span className="block text-sm text-ink-soft">{t("recordsView.startedBy", { name: row.original.startedBy })}</span> : null}
            </span>
          ),
        }),
        ...(multiSite
          ? [
              column.accessor("siteName", {
                id: "site",
                header: () => t("recordsView.columns.site"),
                cell: ({ getValue }) => <span className="font-semibold">{getValue()}</span>,
              }),
            ]
          : []),
        column.accessor("product", {
          id: "product",
          header: () => t("recordsView.columns.product"),
          cell: ({ row }) => (
            <Link to={batchHref(row.original)} className="font-extrabold text-glacier-dark underline-offset-4 hover:underline" data-testid="record-link">
              {row.original.product}
              <span className="block text-sm font-semibold text-ink-soft">{t("recordsView.lot", { lot: row.original.lotCode })}</span>
              <span className="block text-sm font-normal text-ink lg:hidden">
                {t(`library.methods.${row.original.method}`, { defaultValue: row.original.method })}
                {row.original.equipment ? ` · ${row.original.equipment}` : ""}
              </span>
            </Link>
          ),
        }),
        column.accessor("method", {
          id: "method",
          enableSorting: false,
          header: () => t("recordsView.columns.method"),
          cell: ({ row }) => (
            <span className="text-base">
              {t(`library.methods.${row.original.method}`, { defaultValue: row.original.method })}
              {row.original.equipment ? <span className="block text-sm text-ink-soft">{row.original.equipment}</span> : null}
            </span>
          ),
        }),
        column.accessor("stages", {
          id: "stages",
          enableSorting: false,
          header: () => t("recordsView.columns.stages"),
          cell: ({ row }) => (
            <span className="grid gap-1 text-base">
              {row.original.stages.map((st) => (
                <StageLine key={st.stage} st={st} row={row.original} />
              ))}
            </span>
          ),
        }),
        column.accessor("state", {
          id: "outcome",
          header: () => t("recordsView.columns.outcome"),
          cell: ({ row }) => (
            <span className="grid justify-items-start gap-1">
              <span className={`inline-block rounded-xl border-2 px-2 py-0.5 text-sm font-extrabold ${outcomeStyle[row.original.state]}`} data-testid="record-outcome">
                {t(`recordsView.outcomes.${row.original.state}`)}
              </span>
              <span className="text-sm lg:hidden">
                <Signature row={row.original} />
              </span>
            </span>
          ),
        }),
        column.accessor("readingCount", {
          id: "entries",
          enableSorting: false,
          header: () => t("recordsView.columns.entries"),
          cell: ({ row }) => (
            <span className="text-base whitespace-nowrap">
              {t("recordsView.entries", { count: row.original.readingCount })}
              {row.original.lateCount ? <span className="block font-bold text-amber">{t("recordsView.lateEntries", { count: row.original.lateCount })}</span> : null}
              {row.original.actionCount ? <span className="block">{t("recordsView.actions", { count: row.original.actionCount })}</span> : null}
            </span>
          ),
        }),
        column.accessor("signedAt", {
          id: "verified",
          enableSorting: false,
          header: () => t("recordsView.columns.verified"),
          cell: ({ row }) => <Signature row={row.original} />,
        }),
      ]),
    [t, lang, multiSite, batchHref],
  );

  const table = useTable({
    features,
    columns,
    data: rows,
    getRowId: (r) => r.id,
    manualSorting: true,
    manualPagination: true,
    rowCount: totals.batches,
    state: { sorting: [{ id: query.sort, desc: query.dir === "desc" }], pagination: { pageIndex: page - 1, pageSize: query.size } },
  });

  const filtered = query.site || query.product || query.method || query.equipment || query.outcome || query.cook || query.late || query.unverified;
  const productChoices = query.site ? options.products.filter((p) => p.siteId === query.site) : options.products;
  const equipmentChoices = query.site ? options.equipment.filter((e) => e.siteId === query.site) : options.equipment;
  const siteSuffix = (siteId: string) => (multiSite ? ` · ${options.sites.find((s) => s.id === siteId)?.name ?? ""}` : "");

  return (
    <div className="grid gap-5">
      {ignored.length ? <Notice tone="warn">{t("recordsView.ignored", { params: ignored.map((p) => t(`recordsView.param.${p}`)).join(", ") })}</Notice> : null}
      {clamped ? <Notice tone="warn">{t("recordsView.clamped", { asked: query.page })}</Notice> : null}

      <Form method="get" className="card grid gap-4" aria-label={t("recordsView.filters")} data-testid="records-filters">
        <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
          <Field id="rec-from" label={t("recordsView.from")}>
            <input id="rec-from" name="from" type="date" className="field" defaultValue={query.from} required />
          </Field>
          <Field id="rec-to" label={t("recordsView.to")}>
            <input id="rec-to" name="to" type="date" className="field" defaultValue={query.to} required />
          </Field>
          {multiSite && !hiddenFilters.includes("site") ? (
            <Select id="rec-site" name="site" label={t("recordsView.site")} value={query.site} choices={options.sites.map((s) => ({ value: s.id, label: s.name }))} />
          ) : null}
          <Select id="rec-product" name="product" label={t("recordsView.product")} value={query.product} choices={productChoices.map((p) => ({ value: p.id, label: p.name + siteSuffix(p.siteId) }))} />
          <Select id="rec-method" name="method" label={t("recordsView.method")} value={query.method} choices={options.methods.map((m) => ({ value: m, label: t(`library.methods.${m}`, { defaultValue: m }) }))} />
          <Select id="rec-equipment" name="equipment" label={t("recordsView.equipment")} value={query.equipment} choices={equipmentChoices.map((e) => ({ value: e.id, label: e.name + siteSuffix(e.siteId) }))} />
          <Select id="rec-outcome" name="outcome" label={t("recordsView.outcome")} value={query.outcome} choices={recordOutcomes.map((o) => ({ value: o, label: t(`recordsView.outcomes.${o}`) }))} />
          {!hiddenFilters.includes("cook") ? <Select id="rec-cook" name="cook" label={t("recordsView.cook")} value={query.cook} choices={options.cooks.map((c) => ({ value: c.id, label: c.name }))} /> : null}
        </div>
        <div className="flex flex-wrap items-center gap-x-6 gap-y-3">
          <label className="flex min-h-12 items-center gap-3 text-base font-semibold">
            <input type="checkbox" name="late" value="1" defaultChecked={query.late} className="size-6" />
            {t("recordsView.late")}
          </label>
          <label className="flex min-h-12 items-center gap-3 text-base font-semibold">
            <input type="checkbox" name="unverified" value="1" defaultChecked={query.unverified} className="size-6" />
            {t("recordsView.unverified")}
          </label>
          {query.sort !== "started" ? <input type="hidden" name="sort" value={query.sort} /> : null}
          {query.dir !== recordFirstDir[query.sort] ? <input type="hidden" name="dir" value={query.dir} /> : null}
          {query.size !== 25 ? <input type="hidden" name="size" value={query.size} /> : null}
          <div className="ml-auto flex gap-2">
            {filtered ? (
              <Link to={recordsHref({ ...query, site: null, product: null, method: null, equipment: null, outcome: null, cook: null, late: false, unverified: false }, { page: 1 }, defaults)} className="btn-quiet">
                {t("recordsView.clear")}
              </Link>
            ) : null}
            <button type="submit" className="btn-primary">
              {t("recordsView.apply")}
            </button>
          </div>
        </div>
      </Form>

      <Totals totals={totals} />

      {rows.length === 0 ? (
        <p className="card text-lg font-semibold" data-testid="records-empty">
          {filtered ? t("recordsView.emptyFiltered") : t("recordsView.empty")}
        </p>
      ) : (
        <div className="overflow-x-auto rounded-2xl border-2 border-line bg-white">
          <table className="w-full border-collapse text-left text-base" data-testid="records-table">
            <thead className="bg-frost-deep">
              {table.getHeaderGroups().map((group) => (
                <tr key={group.id}>
                  {group.headers.map((header) => (
                    <SortableHeader key={header.id} header={header} query={query} href={href} label={<table.FlexRender header={header} />} className={foldable.has(header.column.id) ? "hidden lg:table-cell" : ""} />
                  ))}
                </tr>
              ))}
            </thead>
            <tbody>
              {table.getRowModel().rows.map((row) => (
                <tr key={row.id} className="border-t-2 border-line" data-testid="record-row">
                  {row.getAllCells().map((cell) => (
                    <td key={cell.id} className={`px-3 py-3 align-top ${cell.column.id === "stages" ? "min-w-56" : ""} ${foldable.has(cell.column.id) ? "hidden lg:table-cell" : ""}`}>
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
        ns="recordsView"
        summary={t("recordsView.summary", { count: totals.batches, page, pages: pageCount })}
        page={page}
        pageCount={pageCount}
        sizes={recordPageSizes}
        size={query.size}
        hrefFor={(c) => href(c as Partial<RecordsQuery>)}
      />
    </div>
  );
}

function Totals({ totals }: { totals: RecordTotals }) {
  const { t } = useTranslation();
  const items: [string, string | number, string][] = [
    [t("recordsView.totalBatches"), totals.batches, "batches"],
    [t("recordsView.totalEnded"), totals.ended, "ended"],
    [
      t("recordsView.totalPassRate"),
      totals.passRate === null ? t("recordsView.noPassRate") : t("recordsView.passRateValue", { rate: totals.passRate, passed: totals.cooled, ended: totals.ended }),
      "pass-rate",
    ],
    [t("recordsView.totalReheated"), totals.reheated, "reheated"],
    [t("recordsView.totalDiscarded"), totals.discarded, "discarded"],
    [t("recordsView.totalCooling"), totals.cooling, "cooling"],
    [t("recordsView.totalUnverified"), totals.unverified, "unverified"],
    [t("recordsView.totalLate"), totals.withLate, "late"],
  ];
  return (
    <section aria-label={t("recordsView.totals")} className="grid gap-2">
      <dl className="grid grid-cols-2 gap-2 sm:grid-cols-4">
        {items.map(([label, value, id]) => (
          <div key={id} className="rounded-xl border-2 border-line bg-white px-3 py-2">
            <dt className="text-sm font-bold text-ink-soft">{label}</dt>
            <dd className="text-xl font-extrabold" data-testid={`total-${id}`}>
              {value}
            </dd>
          </div>
        ))}
      </dl>
      <p className="text-sm text-ink-soft">{t("recordsView.passRateNote")}</p>
    </section>
  );
}

function Field({ id, label, children }: { id: string; label: string; children: React.ReactNode }) {
  return (
    <div>
      <label htmlFor={id} className="label">
        {label}
      </label>
      {children}
    </div>
  );
}

function Select({ id, name, label, value, choices }: { id: string; name: string; label: string; value: string | null; choices: { value: string; label: string }[] }) {
  const { t } = useTranslation();
  return (
    <Field id={id} label={label}>
      <select id={id} name={name} className="field" defaultValue={value ?? ""}>
        <option value="">{t("recordsView.any")}</option>
        {choices.map((c) => (
          <option key={c.value} value={c.value}>
            {c.label}
          </option>
        ))}
      </select>
    </Field>
  );
}

function SortableHeader({
  header,
  query,
  href,
  label,
  className,
}: {
  header: Header<typeof features, RecordRow, unknown>;
  query: RecordsQuery;
  href: (c: Partial<RecordsQuery>) => string;
  label: React.ReactNode;
  className?: string;
}) {
  const id = header.column.id as RecordSortKey;
  const sorted = header.column.getIsSorted();
  const nextDir = sorted ? (sorted === "asc" ? "desc" : "asc") : recordFirstDir[id];
  return <SortHeaderCell ns="recordsView" sorted={sorted} to={header.column.getCanSort() ? href({ sort: id, dir: nextDir, page: 1 }) : null} label={label} className={className} />;
}
