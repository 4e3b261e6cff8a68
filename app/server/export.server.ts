// The records export: a period's batches, readings and corrective actions as a workbook or as CSV.
// Rows are read from PostgreSQL a page of batches at a time (keyset on started-at and id, each page's
// readings, actions, confirmations and signatures in one query each) and written as they come.
import { groupBy } from "~/lib/group-by";
import { PassThrough, Readable, type Writable } from "node:stream";
import { createReadableStreamFromReadable } from "@react-router/node";
import { and, asc, count, desc, eq, gte, inArray, lt, sql } from "drizzle-orm";
import ExcelJS from "exceljs";
import { actionConfirmations, batches, correctiveActions, equipment, organisations, readings, products, sites, users, verifications } from "~db/schema";
import { getI18n, type Language } from "~/lib/i18n";
import { csvLine, exportFileName, ExportRangeSchema, lastWeek, neutraliseFormula, rangeInstants, SheetSchema, wallClock, type ExportSheet } from "~/lib/records-export";
import { getRuleSet, ruleSets } from "~/lib/rule-sets";
import { fromCelsius, toCelsius } from "~/lib/temperature";
import { recordAudit, type Actor } from "./audit.server";
import { chartSeries } from "./batch-view.server";
import { assessRows, effectiveReadings, evaluateRows, type BatchRow } from "./batches.server";
import { CURVE_PNG, curvePng } from "./curve-picture.server";
import { db } from "./db.server";
import { env } from "./env.server";
import { awaitingVerification } from "./verification.server";
import { addSheetPictures, type SheetPicture } from "./xlsx-pictures.server";

type Site = typeof sites.$inferSelect;
/** Who asks for the file: a signed-in person, or the system on someone's behalf (the weekly e-mail), named by `label`. */
export type Exporter = { id: string; name: string; email: string; language: Language } | { actor: Actor; label: string; language: Language };
export type ExportRange = { from: string; to: string };
type Ctx = { site: Site; range: ExportRange; fromMs: number; toMs: number; now: number; lang: Language };

const PAGE_SIZE = 250;
/**
 * Pictures per workbook at most. exceljs keeps every picture's bytes until the file is finished (see
 * xlsx-pictures.server.ts), so the count bounds the memory: 100 × ≈ 35 KB ≈ 3.5 MB, and ≈ 5 s of
 * rendering. Flagged batches come first; every batch's curve is on its batch page.
 */
export const MAX_PICTURES = 100;
/**
 * Pictures drawn at once by one export: two, one per core (a week's workbook, one process: one at a
 * time 8.6 s, two 6.0 s, three 5.7 s); more would take the other app process's core too.
 */
const PICTURES_AHEAD = 2;
const STAGE_COLUMNS = Math.max(...ruleSets.map((r) => r.stages.length));
const round1 = (x: number) => Math.round(x * 10) / 10;

const badRequest = (message: string): never => {
  throw new Response(message, { status: 400, headers: { "content-type": "text/plain; charset=utf-8" } });
};

/** The range from the query string: both dates, or neither for last week (Monday to Sunday, site time). */
export function parseRange(url: URL, timeZone: string, now = Date.now()): ExportRange {
  const from = url.searchParams.get("from");
  const to = url.searchParams.get("to");
  if (from === null && to === null) return lastWeek(timeZone, now);
  const parsed = ExportRangeSchema.safeParse({ from: from ?? undefined, to: to ?? undefined });
  if (!parsed.success) badRequest(`Bad date range: ${parsed.error.issues.map((i) => `${i.path.join(".") || "range"}: ${i.message}`).join("; ")}. Use ?from=YYYY-MM-DD&to=YYYY-MM-DD.`);
  return parsed.data!;
}

export function parseSheet(url: URL): ExportSheet {
  const parsed = SheetSchema.safeParse(url.searchParams.get("sheet") ?? undefined);
  if (!parsed.success) badRequest("sheet is one of batches, readings, actions (e.g. ?sheet=readings).");
  return parsed.data!;
}

// ---------------------------------------------------------------------------------------------
// Reading the record, a page at a time.

async function* batchPages(ctx: Ctx): AsyncGenerator<(BatchRow & { cursorAt: string })[]> {
  let cursor: { at: string; id: string } | null = null;
  for (;;) {
    const rows: (BatchRow & { cursorAt: string })[] = await db
      .select({
        batch: batches,
        product: products,
        learnedLnS: equipment.learnedLnS,
        learnedSd: equipment.learnedSd,
        learnedBatches: equipment.learnedBatches,
        // The exact timestamp as text: a JS Date would drop microseconds and break the keyset.
        cursorAt: sql<string>`${batches.startedAt}::text`,
      })
      .from(batches)
      .innerJoin(products, eq(products.id, batches.productId))
      .leftJoin(equipment, eq(equipment.id, batches.equipmentId))
      .where(
        and(
          eq(batches.siteId, ctx.site.id),
          gte(batches.startedAt, new Date(ctx.fromMs)),
          lt(batches.startedAt, new Date(ctx.toMs)),
          cursor ? sql`(${batches.startedAt}, ${batches.id}) > (${cursor.at}::timestamptz, ${cursor.id}::uuid)` : undefined,
        ),
      )
      .orderBy(asc(batches.startedAt), asc(batches.id))
      .limit(PAGE_SIZE);
    if (rows.length === 0) return;
    yield rows;
    if (rows.length < PAGE_SIZE) return;
    const last = rows[rows.length - 1];
    cursor = { at: last.cursorAt, id: last.batch.id };
  }
}

async function pageDetails(ids: string[], what: { readings?: boolean; actions?: boolean; signatures?: boolean }) {
  const [rs, acts, confs, sigs] = await Promise.all([
    what.readings ? db.select().from(readings).where(inArray(readings.batchId, ids)).orderBy(asc(readings.takenAt), asc(readings.receivedAt)) : [],
    what.actions ? db.select().from(correctiveActions).where(inArray(correctiveActions.batchId, ids)).orderBy(asc(correctiveActions.takenAt)) : [],
    what.actions ? db.select().from(actionConfirmations).where(inArray(actionConfirmations.batchId, ids)) : [],
    what.signatures ? db.select().from(verifications).where(inArray(verifications.batchId, ids)).orderBy(desc(verifications.signedAt)) : [],
  ]);
  return {
    readings: groupBy(rs, (r) => r.batchId),
    actions: groupBy(acts, (a) => a.batchId),
    confirmations: new Map(confs.map((c) => [c.correctiveActionId, c])),
    // The latest signature of each batch (rows come newest first).
    signatures: new Map([...sigs].reverse().map((v) => [v.batchId, v])),
  };
}

async function userNames(organisationId: string) {
  const rows = await db.select({ id: users.id, name: users.name }).from(users).where(eq(users.organisationId, organisationId));
  return new Map(rows.map((u) => [u.id, u.name]));
}

async function counts(ctx: Ctx) {
  const inRange = sql`SELECT id FROM ${batches} WHERE ${batches.siteId} = ${ctx.site.id} AND ${batches.startedAt} >= ${new Date(ctx.fromMs).toISOString()}::timestamptz AND ${batches.startedAt} < ${new Date(ctx.toMs).toISOString()}::timestamptz`;
  const result = await db.execute<{ batches: string; readings: string; actions: string }>(sql`
    SELECT (SELECT count(*) FROM (${inRange}) b) AS batches,
           (SELECT count(*) FROM ${readings} WHERE ${readings.batchId} IN (${inRange})) AS readings,
           (SELECT count(*) FROM ${correctiveActions} WHERE ${correctiveActions.batchId} IN (${inRange})) AS actions`);
  const row = result.rows[0];
  return { batches: Number(row.batches), readings: Number(row.readings), actions: Number(row.actions) };
}

/**
 * A batch whose record shows something to look at: a stage missed, a discard, a corrective action or a
 * reading entered late. The pictures and the weekly e-mail's counts use the same rule.
 */
export const flaggedBatch = sql<boolean>`(${batches.missedAt} IS NOT NULL OR ${batches.state} = 'discarded'
  OR EXISTS (SELECT 1 FROM ${correctiveActions} ca WHERE ca.batch_id = ${batches.id})
  OR EXISTS (SELECT 1 FROM ${readings} r WHERE r.batch_id = ${batches.id} AND r.late))`;

const inPeriod = (ctx: Pick<Ctx, "site" | "fromMs" | "toMs">) => and(eq(batches.siteId, ctx.site.id), gte(batches.startedAt, new Date(ctx.fromMs)), lt(batches.startedAt, new Date(ctx.toMs)));

/**
 * A period's batches, flagged ones and ended ones nobody has verified (as they stand now). Each is a
 * condition in WHERE: there drizzle qualifies the columns (in a select list it would not, and the
 * subqueries' own `id` would win).
 */
export async function periodSummary(site: Site, range: ExportRange) {
  const { fromMs, toMs } = rangeInstants(range, site.timeZone);
  const where = inPeriod({ site, fromMs, toMs });
  const [all, flagged, unverified] = await Promise.all(
    [undefined, flaggedBatch, awaitingVerification].map((condition) => db.select({ n: count() }).from(batches).where(and(where, condition)).then(([r]) => r.n)),
  );
  return { batches: all, flagged, unverified };
}

/** The batches that get a picture: flagged first, then by start, at most MAX_PICTURES. */
async function pictureSelection(ctx: Ctx) {
  const [rows, [flagged]] = await Promise.all([
    db.select({ id: batches.id }).from(batches).where(inPeriod(ctx)).orderBy(desc(flaggedBatch), asc(batches.startedAt), asc(batches.id)).limit(MAX_PICTURES),
    db.select({ n: count() }).from(batches).where(and(inPeriod(ctx), flaggedBatch)),
  ]);
  return { ids: new Set(rows.map((r) => r.id)), flagged: Math.min(flagged.n, MAX_PICTURES) };
}

// ---------------------------------------------------------------------------------------------
// The tables: columns and rows, shared by the workbook and the CSV files.

export type Cell = string | number | boolean | Date | null | undefined | { url: string; text: string };
type CellStyle = "number" | "temperature" | "datetime" | "wrap" | "label" | "header";
type Column = { header: string; width: number; style?: CellStyle };
type Table = { name: string; columns: Column[]; rows: () => AsyncGenerator<Cell[]> };

function tables(ctx: Ctx, names: Map<string, string>) {
  const t = getI18n(ctx.lang).t;
  const zone = ctx.site.timeZone;
  const unit = ctx.site.temperatureUnit;
  const when = (d: Date | null | undefined) => (d ? wallClock(d.getTime(), zone) : null);
  const who = (id: string | null | undefined) => (id ? (names.get(id) ?? "") : "");
  const s = (key: string, o?: Record<string, unknown>) => t(`recordsSheet.${key}`, o ?? {}) as string;
  const method = (m: string) => t(`library.methods.${m}`, { defaultValue: m }) as string;
  const detailOf = (a: typeof correctiveActions.$inferSelect) => {
    const d = a.detail as { method?: string; lid?: boolean; reason?: string; quantityKg?: number; from?: { method?: string } };
    if (a.kind === "change_method") return s("moveDetail", { method: method(d.method ?? ""), lid: d.lid ? s("withLid") : "", from: method(d.from?.method ?? "") });
    if (a.kind === "discard") return (d.reason ?? "") + (d.quantityKg ? s("quantity", { kg: d.quantityKg }) : "");
    return JSON.stringify(d);
  };
  const lotOf = (b: BatchRow) => [b.batch.lotCode, b.product.name];

  const stageColumns: Column[] = [];
  for (let n = 1; n <= STAGE_COLUMNS; n++) {
    stageColumns.push(
      { header: s("stageLimit", { n, unit }), width: 11, style: "temperature" },
      { header: s("stageDeadline", { n }), width: 17, style: "datetime" },
      { header: s("stageStatus", { n }), width: 12 },
      { header: s("stageMetValue", { n, unit }), width: 12, style: "temperature" },
      { header: s("stageMetAt", { n }), width: 17, style: "datetime" },
    );
  }

  const batchTable: Table = {
    name: s("batchesName"),
    columns: [
      { header: s("lot"), width: 16 },
      { header: s("product"), width: 24 },
      { header: s("started"), width: 17, style: "datetime" },
      { header: s("ruleSetCode"), width: 22 },
      { header: s("state"), width: 14 },
      { header: s("outcome"), width: 12 },
      ...stageColumns,
      { header: s("attempts"), width: 9, style: "number" },
      { header: s("readingsCount"), width: 9, style: "number" },
      { header: s("actionsCount"), width: 11, style: "number" },
      { header: s("actionsSummary"), width: 40, style: "wrap" },
      { header: s("ended"), width: 17, style: "datetime" },
      { header: s("verifiedBy"), width: 18 },
      { header: s("signedAt"), width: 17, style: "datetime" },
    ],
    async *rows() {
      for await (const page of batchPages(ctx)) {
        const d = await pageDetails(page.map((r) => r.batch.id), { readings: true, actions: true, signatures: true });
        for (const row of page) {
          const rs = d.readings.get(row.batch.id) ?? [];
          const acts = d.actions.get(row.batch.id) ?? [];
          const counted = new Map(effectiveReadings(rs).map((r) => [r.id, r]));
          const evaluation = evaluateRows(ctx.site, row, rs, ctx.now);
          const stages: Cell[] = [];
          for (let i = 0; i < STAGE_COLUMNS; i++) {
            const st = evaluation.stages[i];
            const met = st?.metBy ? counted.get(st.metBy) : undefined;
            stages.push(
              st ? round1(fromCelsius(toCelsius(st.limit.value, st.limit.unit), unit)) : null,
              st?.deadline ? wallClock(st.deadline, zone) : null,
              st ? s(`stageStatuses.${st.status}`) : null,
              met ? round1(fromCelsius(met.valueC, unit)) : null,
              met ? when(met.takenAt) : null,
            );
          }
          const sig = d.signatures.get(row.batch.id);
          yield [
            ...lotOf(row),
            when(row.batch.startedAt),
            `${row.batch.ruleSetCode} v${getRuleSet(row.batch.ruleSetCode)?.version ?? "?"}`,
            s(`states.${row.batch.state}`),
            s(`outcomes.${evaluation.outcome}`),
            ...stages,
            evaluation.attempts.length,
            rs.length,
            acts.length,
            acts.map((a) => `${s(`actionKinds.${a.kind}`)}: ${detailOf(a)}`).join("\n"),
            when(row.batch.endedAt),
            sig ? who(sig.signedBy) : null,
            sig ? when(sig.signedAt) : null,
          ];
        }
      }
    },
  };

  const readingTable: Table = {
    name: s("readingsName"),
    columns: [
      { header: s("lot"), width: 16 },
      { header: s("product"), width: 24 },
      { header: s("kind"), width: 10 },
      { header: s("valueEntered"), width: 10, style: "number" },
      { header: s("unit"), width: 6 },
      { header: s("valueC"), width: 8, style: "temperature" },
      { header: s("takenAt"), width: 17, style: "datetime" },
      { header: s("receivedAt"), width: 17, style: "datetime" },
      { header: s("late"), width: 7 },
      { header: s("takenAtEdited"), width: 9 },
      { header: s("enteredBy"), width: 18 },
      { header: s("source"), width: 9 },
      { header: s("probe"), width: 12 },
      { header: s("photo"), width: 10 },
      { header: s("corrects"), width: 17, style: "datetime" },
      { header: s("correctsValue"), width: 10, style: "number" },
      { header: s("correctionReason"), width: 36, style: "wrap" },
      { header: s("readingId"), width: 38 },
    ],
    async *rows() {
      for await (const page of batchPages(ctx)) {
        const d = await pageDetails(page.map((r) => r.batch.id), { readings: true });
        for (const row of page) {
          const rs = d.readings.get(row.batch.id) ?? [];
          const byId = new Map(rs.map((r) => [r.id, r]));
          for (const r of rs) {
            const corrected = r.correctsReadingId ? byId.get(r.correctsReadingId) : undefined;
            yield [
              ...lotOf(row),
              s(`readingKinds.${r.kind}`),
              r.valueEntered,
              `°${r.unitEntered}`,
              round1(r.valueC),
              when(r.takenAt),
              when(r.receivedAt),
              r.late,
              r.takenAtEdited,
              who(r.enteredBy),
              s(`sources.${r.source}`),
              r.probe,
              r.photoId ? { url: new URL(`/photos/${r.photoId}`, env.APP_URL).href, text: s("photoLink") } : null,
              corrected ? when(corrected.takenAt) : null,
              corrected ? corrected.valueEntered : null,
              r.correctionReason,
              r.id,
            ];
          }
        }
      }
    },
  };

  const actionTable: Table = {
    name: s("actionsName"),
    columns: [
      { header: s("lot"), width: 16 },
      { header: s("product"), width: 24 },
      { header: s("kind"), width: 24 },
      { header: s("detail"), width: 40, style: "wrap" },
      { header: s("takenBy"), width: 18 },
      { header: s("actionTakenAt"), width: 17, style: "datetime" },
      { header: s("confirmedBy"), width: 18 },
      { header: s("confirmedAt"), width: 17, style: "datetime" },
      { header: s("confirmationNote"), width: 30, style: "wrap" },
    ],
    async *rows() {
      for await (const page of batchPages(ctx)) {
        const d = await pageDetails(page.map((r) => r.batch.id), { actions: true });
        for (const row of page) {
          for (const a of d.actions.get(row.batch.id) ?? []) {
            const c = d.confirmations.get(a.id);
            yield [...lotOf(row), s(`actionKinds.${a.kind}`), detailOf(a), who(a.takenBy), when(a.takenAt), c ? who(c.confirmedBy) : null, c ? when(c.confirmedAt) : null, c?.note ?? null];
          }
        }
      }
    },
  };

  return { batches: batchTable, readings: readingTable, actions: actionTable };
}

// ---------------------------------------------------------------------------------------------
// The curves: one picture per selected batch, under a caption row, two to a printed page.

/** How the pictures sit in the Curves sheet: shown at 600 px wide, 20 rows of 20 px (15 pt) each. */
export const CURVE_SHOWN = { widthPx: 600, heightPx: Math.round((600 * CURVE_PNG.height) / CURVE_PNG.width) };
const CURVE_ROWS = Math.ceil(CURVE_SHOWN.heightPx / 20) + 1;
type PictureRow = { picture: Omit<SheetPicture, "row" | "col">; rows: number; pageBreak: boolean };
type SheetRow = Cell[] | PictureRow;
const isPicture = (r: SheetRow): r is PictureRow => !Array.isArray(r);

type Words = (key: string, o?: Record<string, unknown>) => string;
const curveWords = (lang: Language): Words => {
  const t = getI18n(lang).t;
  return (key, o) => t(`recordsCurves.${key}`, o ?? {}) as string;
};

function curveColumns(s: Words, c: Words): Column[] {
  return [
    { header: s("lot"), width: 14 },
    { header: s("product"), width: 22 },
    { header: s("started"), width: 17, style: "datetime" },
    { header: s("outcome"), width: 11 },
    { header: c("flags"), width: 20 },
    { header: c("batchPage"), width: 10 },
  ];
}

async function* curveRows(ctx: Ctx, selected: Set<string>): AsyncGenerator<SheetRow> {
  const t = getI18n(ctx.lang).t;
  const s = (key: string, o?: Record<string, unknown>) => t(`recordsSheet.${key}`, o ?? {}) as string;
  const c = curveWords(ctx.lang);
  const zone = ctx.site.timeZone;
  const labels = {
    title: t("chart.title") as string,
    timeAxis: t("chart.time") as string,
    temperatureAxis: t("chart.temperature") as string,
    reading: t("chart.reading") as string,
    late: t("batch.late") as string,
    corrected: t("chart.corrected") as string,
    predicted: t("chart.predicted") as string,
    band: t("chart.band") as string,
    deadline: t("batch.deadline") as string,
    dangerZone: t("chart.dangerZone") as string,
    summaryNoReadings: t("chart.summaryNoReadings") as string,
    summaryPrediction: t("chart.summaryPrediction") as string,
  };
  let shown = 0;
  // Pictures being drawn while the rows before them are written: sharp draws on libuv's threads, so
  // the next one's assessment and markup (on this thread) overlap the last one's rasterising.
  const drawing: { caption: Cell[]; picture: Promise<Omit<SheetPicture, "row" | "col">> }[] = [];
  async function* ready(keep: number): AsyncGenerator<SheetRow> {
    while (drawing.length > keep) {
      const next = drawing.shift()!;
      yield next.caption;
      shown += 1;
      yield { picture: await next.picture, rows: CURVE_ROWS, pageBreak: shown % 2 === 0 };
    }
  }
  for await (const page of batchPages(ctx)) {
    const mine = page.filter((r) => selected.has(r.batch.id));
    if (!mine.length) continue;
    const d = await pageDetails(mine.map((r) => r.batch.id), { readings: true, actions: true });
    for (const row of mine) {
      const rs = d.readings.get(row.batch.id) ?? [];
      const acts = d.actions.get(row.batch.id) ?? [];
      const moves = acts.filter((a) => a.kind === "change_method").map((a) => a.takenAt.getTime());
      const a = assessRows(ctx.site, row, rs, ctx.now, moves.length ? Math.max(...moves) : undefined);
      // An ended batch is drawn as it ended; one still cooling as it stood at the export.
      const at = row.batch.endedAt ? Math.min(row.batch.endedAt.getTime(), ctx.now) : ctx.now;
      const record = rs.filter((r) => !r.correctsReadingId).map((r) => ({ t: r.takenAt.getTime(), c: r.valueC, late: r.late }));
      const series = chartSeries(a, record, at);
      const rule = getRuleSet(row.batch.ruleSetCode)!;
      const png = curvePng({
        readings: record,
        predicted: series.predicted,
        band: series.band,
        stages: series.stages.map((st) => ({ ...st, label: t("home.stage", { n: st.label }) as string })),
        startedAt: row.batch.startedAt.getTime(),
        now: at,
        unit: ctx.site.temperatureUnit,
        timeZone: zone,
        dangerZone: { lowC: rule.stages.at(-1)!.to.c, highC: rule.stages[0].from.c },
        labels: { ...labels, now: c(row.batch.endedAt ? "ended" : "atExport"), summaryReadings: t("chart.summaryReadings", { count: record.length }) as string },
      });
      const flags = [
        row.batch.missedAt ? c("flagMissed") : null,
        row.batch.state === "discarded" ? c("flagDiscarded") : null,
        acts.length ? c("flagAction") : null,
        rs.some((r) => r.late) ? c("flagLate") : null,
      ].filter(Boolean);
      const picture = png.then((bytes) => ({ png: bytes, ...CURVE_SHOWN, name: `${row.batch.lotCode} ${row.product.name}`, description: c("description", { lot: row.batch.lotCode, product: row.product.name }) }));
      // Awaited in turn by ready(); until then a failure must not count as unhandled.
      picture.catch(() => undefined);
      drawing.push({
        caption: [
          row.batch.lotCode,
          row.product.name,
          wallClock(row.batch.startedAt.getTime(), zone),
          s(`outcomes.${a.evaluation.outcome}`),
          flags.join(", "),
          { url: new URL(`/sites/${ctx.site.id}/batches/${row.batch.id}`, env.APP_URL).href, text: c("open") },
        ],
        picture,
      });
      yield* ready(PICTURES_AHEAD - 1);
    }
  }
  yield* ready(0);
}

// Every string that lands in a data row may come from a person (lot codes, names, reasons): the
// workbook's cells are plain strings, never formulas, but a copy pasted or saved as CSV elsewhere would be.
async function* neutralised<R extends SheetRow>(rows: AsyncGenerator<R>) {
  for await (const row of rows) yield isPicture(row) ? row : row.map((c) => (typeof c === "string" ? neutraliseFormula(c) : c));
}

// ---------------------------------------------------------------------------------------------
// The workbook writer: exceljs's streaming writer, each row committed (serialised and deflated) as it
// comes, so a long export holds about one page of rows at a time.

type SheetSpec = {
  name: string;
  columns: { width: number; style?: CellStyle }[];
  /** Rows above the data that repeat on every printed page and stay in view (a note, the header). */
  headRows: { cells: Cell[]; style: CellStyle }[];
  /** An autofilter on the last head row down to the last data row. */
  table: boolean;
  orientation?: "portrait" | "landscape";
  /** Data rows; a picture row anchors its picture at the next row and leaves `rows` empty rows under it. */
  rows: AsyncIterable<SheetRow>;
};

const BOLD = { name: "Calibri", size: 11, bold: true };
const TOP_WRAP = { wrapText: true, vertical: "top" } as const;
const STYLES: Record<CellStyle | "link", Partial<ExcelJS.Style>> = {
  number: {},
  temperature: { numFmt: "0.0" },
  datetime: { numFmt: "yyyy-mm-dd hh:mm" },
  wrap: { alignment: TOP_WRAP },
  label: { font: BOLD, alignment: { vertical: "top" } },
  header: { font: BOLD, alignment: TOP_WRAP, fill: { type: "pattern", pattern: "solid", fgColor: { argb: "FFDCEBF5" } } },
  link: { font: { name: "Calibri", size: 11, underline: true, color: { argb: "FF1F5F99" } } },
};

/** Waits while the response's buffer is full (the reader is slower than the database). */
async function backpressure(out: Writable) {
  if (!out.writableNeedDrain) return;
  await new Promise<void>((resolve) => {
    const done = () => {
      out.off("drain", done);
      out.off("close", done);
      resolve();
    };
    out.on("drain", done);
    out.on("close", done);
  });
  if (out.destroyed) throw new Error("the download was closed before the workbook was written");
}

/** Writes the workbook to `out` and ends it; resolves when the last byte has been handed over. */
async function writeWorkbook(out: Writable, sheets: SheetSpec[]) {
  const workbook = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: out, useStyles: true, useSharedStrings: false });
  for (const spec of sheets) {
    const head = spec.headRows.length;
    const frozen = spec.table && head > 0;
    const sheet = workbook.addWorksheet(spec.name, {
      views: frozen ? [{ state: "frozen", ySplit: head, topLeftCell: `A${head + 1}`, activeCell: `A${head + 1}` }] : [{ state: "normal" }],
      pageSetup: {
        orientation: spec.orientation ?? "landscape",
        fitToPage: true,
        fitToWidth: 1,
        fitToHeight: 0,
        margins: { left: 0.4, right: 0.4, top: 0.6, bottom: 0.6, header: 0.3, footer: 0.3 },
        ...(head ? { printTitlesRow: `1:${head}` } : {}),
      },
      headerFooter: { oddFooter: "&A · &P / &N" },
    });
    sheet.columns = spec.columns.map((c) => ({ width: c.width }));
    let written = 0;
    const pictures: SheetPicture[] = [];
    const put = (cells: Cell[], rowStyle?: CellStyle) => {
      const row = sheet.addRow([]);
      written += 1;
      cells.forEach((value, i) => {
        if (value === null || value === undefined || value === "") return;
        if (typeof value === "number" && !Number.isFinite(value)) return;
        const cell = row.getCell(i + 1);
        const columnStyle = spec.columns[i]?.style;
        if (typeof value === "object" && !(value instanceof Date)) {
          cell.value = { text: value.text, hyperlink: value.url };
          cell.style = STYLES.link;
          return;
        }
        cell.value = value;
        // A date always shows as one; a number takes its column's format; text only a layout style.
        const style: CellStyle | undefined =
          value instanceof Date ? "datetime" : typeof value === "number" ? (columnStyle === "temperature" ? "temperature" : undefined) : typeof value === "string" ? (rowStyle ?? (columnStyle === "wrap" || columnStyle === "label" ? columnStyle : undefined)) : undefined;
        if (style) cell.style = STYLES[style];
      });
      row.commit();
      return row;
    };
    for (const r of spec.headRows) put(r.cells, r.style);
    let last = head;
    for await (const item of spec.rows) {
      if (isPicture(item)) {
        pictures.push({ ...item.picture, row: written, col: 0 });
        let row: ExcelJS.Row | undefined;
        for (let i = 0; i < item.rows; i++) row = put([]);
        if (item.pageBreak) row?.addPageBreak();
      } else put(item);
      last = written;
      await backpressure(out);
    }
    addSheetPictures(workbook, sheet, pictures);
    // The streaming writer writes the filter after the rows, so the range can end at the last row. It
    // does not add the hidden _xlnm._FilterDatabase name Excel itself writes; the filter works without it.
    if (frozen) sheet.autoFilter = { from: { row: head, column: 1 }, to: { row: last, column: Math.max(spec.columns.length, 1) } };
    sheet.commit();
  }
  await workbook.commit();
}

// ---------------------------------------------------------------------------------------------
// The two formats.

async function context(site: Site, user: Exporter, range: ExportRange, format: string, audit: Record<string, unknown> = {}) {
  const now = Date.now();
  const { fromMs, toMs } = rangeInstants(range, site.timeZone);
  await recordAudit(db, {
    actor: "actor" in user ? user.actor : { kind: "user", userId: user.id },
    organisationId: site.organisationId,
    siteId: site.id,
    action: "records.exported",
    entity: "site",
    entityId: site.id,
    data: { from: range.from, to: range.to, format, ...audit },
  });
  return { site, range, fromMs, toMs, now, lang: user.language } satisfies Ctx;
}

function download(body: Readable, fileName: string, contentType: string) {
  return new Response(createReadableStreamFromReadable(body), {
    headers: {
      "content-type": contentType,
      "content-disposition": `attachment; filename="${fileName}"`,
      "cache-control": "private, no-store",
    },
  });
}

/**
 * The workbook (a cover; batches, readings and corrective actions; the curves), ready to write: the
 * export is audited and its cover counted here, and `write(out)` streams the file into `out` and ends
 * it (resolving when the last byte is handed over). `audit` adds to the audit entry's data.
 */
export async function recordsWorkbook(site: Site, user: Exporter, range: ExportRange, audit: Record<string, unknown> = {}) {
  const ctx = await context(site, user, range, "xlsx", audit);
  const [org] = await db.select({ name: organisations.name }).from(organisations).where(eq(organisations.id, site.organisationId));
  const [names, totals, selection] = await Promise.all([userNames(site.organisationId), counts(ctx), pictureSelection(ctx)]);
  const t = getI18n(ctx.lang).t;
  const s = (key: string, o?: Record<string, unknown>) => t(`recordsSheet.${key}`, o ?? {}) as string;
  const ruleSet = getRuleSet(site.ruleSetCode);
  const zone = site.timeZone;
  const c = curveWords(ctx.lang);
  const pictured = selection.ids.size;
  const curvesNote =
    pictured === totals.batches
      ? c("coverAll", { count: pictured })
      : c("coverSome", { count: pictured, total: totals.batches, flagged: selection.flagged, max: MAX_PICTURES });
  const cover: Cell[][] = [
    [s("organisation"), org?.name ?? ""],
    [s("site"), site.name],
    [s("period"), s("periodValue", { from: range.from, to: range.to })],
    [s("timeZone"), zone],
    [s("ruleSet"), ruleSet ? s("ruleSetValue", { name: ruleSet.name, code: ruleSet.code, version: ruleSet.version }) : site.ruleSetCode],
    [s("citation"), ruleSet ? `${ruleSet.citation}. ${ruleSet.source}` : ""],
    [s("exportedBy"), "actor" in user ? user.label : `${user.name} <${user.email}>`],
    [s("exportedAt"), wallClock(ctx.now, zone)],
    [s("counts"), s("countsValue", totals)],
    [c("coverLabel"), curvesNote],
    [s("retention"), s("retentionValue", { days: site.retentionDays })],
    [s("caution"), t("app.caution") as string],
    ["", s("timeNote", { zone })],
    ["", s("textNote")],
  ];
  const tabs = tables(ctx, names);
  const note = s("sheetNote", { zone, unit: site.temperatureUnit });
  const sheet = (table: Table): SheetSpec => ({
    name: table.name,
    columns: table.columns,
    headRows: [{ cells: [note], style: "label" }, { cells: table.columns.map((c) => c.header), style: "header" }],
    table: true,
    rows: neutralised(table.rows()),
  });
  const curveCols = curveColumns(s, c);
  const write = (out: Writable) =>
    writeWorkbook(out, [
      {
        name: s("coverName"),
        columns: [{ width: 30, style: "label" }, { width: 100, style: "wrap" }],
        headRows: [],
        table: false,
        rows: (async function* () {
          yield [s("title")];
          for (const row of cover) yield row;
        })(),
      },
      sheet(tabs.batches),
      sheet(tabs.readings),
      sheet(tabs.actions),
      {
        name: c("sheetName"),
        columns: curveCols,
        // The note says what the pictures are (and are not) on every printed page.
        headRows: [{ cells: [`${curvesNote} ${t("app.caution")}`], style: "label" }, { cells: curveCols.map((c) => c.header), style: "header" }],
        table: false,
        orientation: "portrait",
        rows: neutralised(curveRows(ctx, selection.ids)),
      },
    ]);
  return { fileName: exportFileName(site.name, range, "xlsx"), totals, pictured, write };
}

/** The workbook as a download, streamed as it is written. */
export async function exportWorkbook(site: Site, user: Exporter, range: ExportRange) {
  const workbook = await recordsWorkbook(site, user, range);
  const out = new PassThrough();
  workbook.write(out).catch((error) => {
    console.error("records export failed", error);
    out.destroy(error);
  });
  return download(out, workbook.fileName, "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet");
}

/** One table as CSV: UTF-8 with a byte-order mark (so spreadsheets read the accents), CRLF lines. */
export async function exportCsv(site: Site, user: Exporter, range: ExportRange, which: ExportSheet) {
  const ctx = await context(site, user, range, `csv:${which}`);
  const table = tables(ctx, await userNames(site.organisationId))[which];
  async function* lines() {
    yield "\uFEFF" + csvLine(table.columns.map((c) => c.header));
    let buffered = "";
    for await (const row of table.rows()) {
      buffered += csvLine(row.map((c) => (c instanceof Date ? c : c && typeof c === "object" ? c.url : c)));
      if (buffered.length >= 64 * 1024) {
        yield buffered;
        buffered = "";
      }
    }
    if (buffered) yield buffered;
  }
  const body = Readable.from(lines());
  body.on("error", (error) => console.error("records export failed", error));
  return download(body, exportFileName(site.name, range, `${which}.csv`), "text/csv; charset=utf-8");
}
