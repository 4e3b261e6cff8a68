import { randomUUID } from "node:crypto";
import { and, asc, eq, inArray, sql } from "drizzle-orm";
import ExcelJS from "exceljs";
import sharp from "sharp";
import { beforeAll, describe, expect, it } from "vitest";
import { actionConfirmations, auditEvents, batches, correctiveActions, readings, users, verifications } from "~db/schema";
import { en } from "~/lib/locales/en";
import { lastWeek, localDateOf, rangeInstants } from "~/lib/records-export";
import { getRuleSet } from "~/lib/rule-sets";
import { endedBatch } from "../helpers/batches";
import { Client, location, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";
import { parseCsv } from "../helpers/csv";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
type RuleRecord = { outcome: string; stages: { stage: number; limit: { value: number; unit: string }; deadline: string | null; status: string; metBy: string | null }[] };
const MIN = 60_000;
const ago = (m: number) => new Date(Date.now() - m * MIN).toISOString();
const ZONE = "America/Denver";

// The site's wall clock of a database instant, formatted independently of the export's own code.
const denver = new Intl.DateTimeFormat("sv-SE", { timeZone: ZONE, year: "numeric", month: "2-digit", day: "2-digit", hour: "2-digit", minute: "2-digit", hourCycle: "h23" });
const siteClock = (d: Date | string) => denver.format(new Date(d)).replace(",", "");
type ReadCell = ExcelJS.CellValue;
// A spreadsheet date carries the wall clock in its UTC fields.
const cellClock = (c: ReadCell) => {
  expect(c).toBeInstanceOf(Date);
  return (c as Date).toISOString().slice(0, 16).replace("T", " ");
};

// The workbook as exceljs reads it, and each sheet's values row by row (an empty cell is null).
async function loadWorkbook(res: Response) {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(await res.arrayBuffer());
  return wb;
}
function sheetOf(wb: ExcelJS.Workbook, name: string) {
  const sheet = wb.getWorksheet(name);
  expect(sheet, name).toBeDefined();
  const rows: ReadCell[][] = [];
  sheet!.eachRow({ includeEmpty: true }, (row, n) => {
    rows[n - 1] = Array.from({ length: row.cellCount }, (_, i) => row.getCell(i + 1).value ?? null);
  });
  return { sheet: sheet!, rows: Array.from(rows, (r) => r ?? []) };
}

async function startBatch(t: Tenant, cook: Client, lotCode: string, minutesAgo: number) {
  const res = await cook.request("/api/v1/batches", {
    json: {
      clientId: randomUUID(),
      productId: t.product.id,
      lotCode,
      pan: { size: "gn-1/1", depthMm: 65, count: 1, fillDepthMm: 50 },
      method: "walk-in",
      start: { value: 150, unit: "F", takenAt: ago(minutesAgo) },
    },
  });
  expect(res.status).toBe(201);
  return ((await res.json()) as { batch: { id: string; lotCode: string } }).batch;
}

async function addReading(cook: Client, batchId: string, body: object) {
  const res = await cook.request(`/api/v1/batches/${batchId}/readings`, { json: { clientId: randomUUID(), ...body } });
  expect(res.status).toBe(201);
  return (await res.json()) as { reading: { id: string }; record: RuleRecord };
}

describe("records export", () => {
  let t: Tenant;
  let qa: Client;
  let cook: Client;
  let passed: { id: string; record: RuleRecord };
  let range: { from: string; to: string };
  let photoId: string;
  const reason = '+1, "typo" on the keypad\nre-probed';
  const discardReason = '-2 "spoiled", left out';
  const lots = { passed: '=HYPERLINK("x")', cold: "+1", discarded: "@SUM(A1)" };

  beforeAll(async () => {
    t = await newTenant();
    cook = await signedIn(t.people.cook.email, t.people.cook.password);
    qa = await signedIn(t.people.qa.email, t.people.qa.password);
    // A batch that cools through both stages, with one reading corrected afterwards.
    const a = await startBatch(t, cook, lots.passed, 200);
    const r120 = await addReading(cook, a.id, { value: 120, unit: "F", takenAt: ago(150), probe: "P-2" });
    await addReading(cook, a.id, { value: 68, unit: "F", takenAt: ago(100) });
    const last = await addReading(cook, a.id, { value: 40, unit: "F", takenAt: ago(60) });
    expect(last.record.outcome).toBe("passed");
    await addReading(cook, a.id, { value: 118, unit: "F", takenAt: ago(150), corrects: { readingId: r120.reading.id, reason } });
    passed = { id: a.id, record: last.record };
    // A reading in °C below zero: a number, never text.
    // It carries a photo: a link in the workbook.
    const png = await sharp({ create: { width: 64, height: 48, channels: 3, background: "#2e86c1" } }).png().toBuffer();
    const upload = await cook.request("/api/v1/photos", { body: png, headers: { "content-type": "application/octet-stream" } });
    expect(upload.status).toBe(201);
    photoId = ((await upload.json()) as { id: string }).id;
    const b = await startBatch(t, cook, lots.cold, 40);
    await addReading(cook, b.id, { value: -2, unit: "C", takenAt: ago(30), photoId });
    // A discarded batch, its action confirmed and the record signed by the manager.
    const c = await startBatch(t, cook, lots.discarded, 20);
    const act = await cook.request(`/api/v1/batches/${c.id}/actions`, { json: { kind: "discard", clientId: randomUUID(), quantityKg: 4, reason: discardReason } });
    expect(act.status).toBe(201);
    const [ca] = await db.select().from(correctiveActions).where(eq(correctiveActions.batchId, c.id));
    await db.insert(actionConfirmations).values({ correctiveActionId: ca.id, batchId: c.id, siteId: t.site.id, confirmedBy: t.people.manager.id, note: "Seen in the bin" });
    for (const id of [a.id, c.id]) {
      await db.insert(verifications).values({ batchId: id, siteId: t.site.id, signedBy: t.people.manager.id, statement: "Checked.", statementVersion: 1, readingsCovered: 1, actionsCovered: 0 });
    }
    const now = Date.now();
    range = { from: localDateOf(now - 24 * 60 * MIN, ZONE), to: localDateOf(now, ZONE) };
  });

  const names = async () => new Map((await db.select({ id: users.id, name: users.name }).from(users).where(eq(users.organisationId, t.org.id))).map((u) => [u.id, u.name]));
  const batchReadings = async () => {
    const ids = (await db.execute<{ id: string }>(sql`SELECT id FROM batches WHERE site_id = ${t.site.id} ORDER BY started_at, id`)).rows.map((r) => r.id);
    const rs = await db.select().from(readings).where(inArray(readings.batchId, ids)).orderBy(asc(readings.takenAt), asc(readings.receivedAt));
    return { ids, rs: ids.flatMap((id) => rs.filter((r) => r.batchId === id)) };
  };

  async function download(path: string) {
    const res = await qa.get(path);
    expect(res.status, await res.clone().text().then((s) => s.slice(0, 200))).toBe(200);
    return res;
  }

  it("the workbook has a cover with the period, rule set, caution and retention, and sheets of batches, readings and corrective actions", async () => {
    const res = await download(`/sites/${t.site.id}/export.xlsx?from=${range.from}&to=${range.to}`);
    expect(res.headers.get("content-type")).toBe("application/vnd.openxmlformats-officedocument.spreadsheetml.sheet");
    expect(res.headers.get("content-disposition")).toBe(`attachment; filename="kitchen-${t.org.slug.slice(7)}-cooling-records-${range.from}-to-${range.to}.xlsx"`);
    const wb = await loadWorkbook(res);
    expect(wb.worksheets.map((s) => s.name)).toEqual(["Cover", "Batches", "Readings", "Corrective actions", "Curves"]);
    const coverSheet = sheetOf(wb, "Cover");
    const cover = new Map(coverSheet.rows.slice(1).map((r) => [r[0], r[1]]));
    expect(coverSheet.rows[0][0]).toBe("Cooling records");
    // The cover scrolls freely and repeats nothing when printed; its labels are bold, its values wrap.
    expect(coverSheet.sheet.views.map((v) => v.state)).toEqual(["normal"]);
    expect(coverSheet.sheet.autoFilter ?? null).toBeNull();
    expect(coverSheet.sheet.pageSetup.printTitlesRow).toBeUndefined();
    expect(coverSheet.sheet.pageSetup).toMatchObject({ orientation: "landscape", fitToPage: true, fitToWidth: 1, fitToHeight: 0 });
    expect([coverSheet.sheet.getColumn(1).width, coverSheet.sheet.getColumn(2).width]).toEqual([30, 100]);
    expect(coverSheet.sheet.getCell("A2").font?.bold).toBe(true);
    expect(coverSheet.sheet.getCell("B2").alignment?.wrapText).toBe(true);
    const exportedAt = coverSheet.sheet.getRow(coverSheet.rows.findIndex((r) => r[0] === "Exported at (site time)") + 1).getCell(2);
    expect(exportedAt.type).toBe(ExcelJS.ValueType.Date);
    expect(exportedAt.value).toBeInstanceOf(Date);
    expect(exportedAt.numFmt).toBe("yyyy-mm-dd hh:mm");
    expect(cover.get("Organisation")).toBe(`Tenant ${t.org.slug.slice(7)}`);
    expect(cover.get("Site")).toBe(t.site.name);
    expect(cover.get("Period")).toContain(`${range.from} to ${range.to}`);
    expect(cover.get("Time zone")).toBe(ZONE);
    const rules = getRuleSet("fda-3-501.14-a")!;
    expect(cover.get("Rule set in force at the site")).toBe(`${rules.name} — ${rules.code}, version ${rules.version}`);
    expect(cover.get("Source")).toContain(rules.citation);
    expect(cover.get("Exported by")).toBe(`qa ${t.org.slug.slice(7)} <${t.people.qa.email}>`);
    expect(Math.abs(Date.parse(`${cellClock(cover.get("Exported at (site time)")!).replace(" ", "T")}Z`) - Date.parse(`${siteClock(new Date()).replace(" ", "T")}Z`))).toBeLessThanOrEqual(60_000);
    expect(cover.get("Caution")).toBe(en.app.caution);
    expect(cover.get("Retention")).toContain(`${t.site.retentionDays} days`);
    const { rs } = await batchReadings();
    expect(cover.get("Contents")).toBe(`3 batches, ${rs.length} readings, 1 corrective actions`);
  });

  it("each batch is a row with real dates in site time, numbers as numbers, the rule's deadlines and the reading that met each stage", async () => {
    const wb = await loadWorkbook(await download(`/sites/${t.site.id}/export.xlsx?from=${range.from}&to=${range.to}`));
    const sheet = sheetOf(wb, "Batches");
    expect(sheet.rows[0][0]).toContain(ZONE);
    const header = sheet.rows[1] as string[];
    expect(header.slice(0, 6)).toEqual(["Lot", "Product", "Started", "Rule set", "State", "Outcome"]);
    const col = (name: string) => {
      const i = header.indexOf(name);
      expect(i, name).toBeGreaterThanOrEqual(0);
      return i;
    };
    const rows = sheet.rows.slice(2);
    expect(rows).toHaveLength(3);
    // Lot codes that look like formulas come out as text with an apostrophe.
    expect(rows.map((r) => r[0])).toEqual([`'${lots.passed}`, `'${lots.cold}`, `'${lots.discarded}`]);
    // …as plain string cells, never formulas.
    for (let n = 3; n <= 5; n++) {
      const lot = sheet.sheet.getRow(n).getCell(1);
      expect(lot.type).toBe(ExcelJS.ValueType.String);
      expect(typeof lot.value).toBe("string");
      expect(lot.formula).toBeUndefined();
    }
    const dbBatches = (await db.execute<{ id: string; started_at: string; ended_at: string | null }>(sql`SELECT id, started_at, ended_at FROM batches WHERE site_id = ${t.site.id} ORDER BY started_at, id`)).rows;
    dbBatches.forEach((b, i) => {
      expect(cellClock(rows[i][col("Started")])).toBe(siteClock(b.started_at));
      expect(rows[i][col("Product")]).toBe(t.product.name);
    });
    const [a, , c] = rows;
    expect(a[col("State")]).toBe("cooled");
    expect(a[col("Outcome")]).toBe("passed");
    expect(a[col("Rule set")]).toBe("fda-3-501.14-a v1");
    expect(a[col("Stage 1 limit (°F)")]).toBe(70);
    expect(a[col("Stage 2 limit (°F)")]).toBe(41);
    // Cell by cell on the first batch's row: dates are Date cells with a date format, counts and
    // temperatures are numbers (temperatures to one decimal), text is text.
    const cellA = (name: string) => sheet.sheet.getRow(3).getCell(col(name) + 1);
    for (const name of ["Started", "Stage 1 deadline", "Stage 1 met at", "Stage 2 deadline", "Stage 2 met at", "Ended", "Signed at"]) {
      expect(cellA(name).type, name).toBe(ExcelJS.ValueType.Date);
      expect(cellA(name).value, name).toBeInstanceOf(Date);
      expect(cellA(name).numFmt, name).toBe("yyyy-mm-dd hh:mm");
    }
    for (const name of ["Stage 1 limit (°F)", "Stage 1 met by (°F)", "Stage 2 limit (°F)", "Stage 2 met by (°F)"]) {
      expect(cellA(name).type, name).toBe(ExcelJS.ValueType.Number);
      expect(typeof cellA(name).value, name).toBe("number");
      expect(cellA(name).numFmt, name).toBe("0.0");
    }
    for (const name of ["Attempts", "Readings", "Corrective actions"]) {
      expect(cellA(name).type, name).toBe(ExcelJS.ValueType.Number);
      expect(typeof cellA(name).value, name).toBe("number");
    }
    for (const name of ["Product", "Rule set", "State", "Outcome", "Verified by"]) expect(cellA(name).type, name).toBe(ExcelJS.ValueType.String);
    // The header row is bold on a fill, the note above it bold.
    expect(sheet.sheet.getCell("A1").font?.bold).toBe(true);
    expect(sheet.sheet.getCell("A2").font?.bold).toBe(true);
    expect(sheet.sheet.getCell("A2").fill).toMatchObject({ type: "pattern", pattern: "solid", fgColor: { argb: "FFDCEBF5" } });
    const { rs } = await batchReadings();
    for (const s of passed.record.stages) {
      expect(cellClock(a[col(`Stage ${s.stage} deadline`)])).toBe(siteClock(s.deadline!));
      expect(a[col(`Stage ${s.stage} status`)]).toBe("met");
      const met = rs.find((r) => r.id === s.metBy)!;
      expect(a[col(`Stage ${s.stage} met by (°F)`)]).toBe(met.valueEntered);
      expect(cellClock(a[col(`Stage ${s.stage} met at`)])).toBe(siteClock(met.takenAt));
    }
    expect(a[col("Readings")]).toBe(5);
    expect(a[col("Attempts")]).toBe(1);
    expect(cellClock(a[col("Ended")])).toBe(siteClock(dbBatches[0].ended_at!));
    const who = await names();
    const [sig] = await db.select().from(verifications).where(eq(verifications.batchId, passed.id));
    expect(a[col("Verified by")]).toBe(who.get(t.people.manager.id));
    expect(cellClock(a[col("Signed at")])).toBe(siteClock(sig.signedAt));
    expect(c[col("State")]).toBe("discarded");
    expect(c[col("Corrective actions")]).toBe(1);
    expect(c[col("Actions taken")]).toBe(`discarded: ${discardReason} (4 kg)`);
    // A header that stays in view, an autofilter, landscape pages that fit the width and repeat the header.
    expect(sheet.sheet.views[0]).toMatchObject({ state: "frozen", ySplit: 2, topLeftCell: "A3" });
    expect(sheet.sheet.autoFilter).toBe(`A2:${sheet.sheet.getColumn(header.length).letter}5`);
    expect(sheet.sheet.pageSetup).toMatchObject({ orientation: "landscape", fitToPage: true, fitToWidth: 1, fitToHeight: 0, printTitlesRow: "1:2" });
    expect(sheet.sheet.getColumn(1).width).toBe(16);
    expect(sheet.sheet.getColumn(col("Started") + 1).width).toBe(17);
    expect(sheet.sheet.getColumn(col("Actions taken") + 1).width).toBe(40);
    expect(sheet.sheet.headerFooter.oddFooter).toBe("&A · &P / &N");
  });

  it("the readings sheet has every reading as entered, with °C, site times, who entered it and what a correction corrects", async () => {
    const wb = await loadWorkbook(await download(`/sites/${t.site.id}/export.xlsx?from=${range.from}&to=${range.to}`));
    const sheet = sheetOf(wb, "Readings");
    const header = sheet.rows[1] as string[];
    const col = (name: string) => header.indexOf(name);
    const rows = sheet.rows.slice(2);
    const { rs } = await batchReadings();
    expect(rows).toHaveLength(rs.length);
    expect(rs.length).toBe(8);
    const who = await names();
    rs.forEach((r, i) => {
      const row = rows[i];
      expect(row[col("Value as entered")]).toBe(r.valueEntered);
      expect(typeof row[col("Value as entered")]).toBe("number");
      expect(row[col("Unit")]).toBe(`°${r.unitEntered}`);
      expect(row[col("°C")]).toBe(Math.round(r.valueC * 10) / 10);
      expect(cellClock(row[col("Taken at")])).toBe(siteClock(r.takenAt));
      expect(cellClock(row[col("Received at")])).toBe(siteClock(r.receivedAt));
      expect(row[col("Late")]).toBe(r.late);
      expect(row[col("Entered by")]).toBe(who.get(r.enteredBy!));
      expect(row[col("Reading id")]).toBe(r.id);
      const cell = (name: string) => sheet.sheet.getRow(i + 3).getCell(col(name) + 1);
      expect(cell("Value as entered").type).toBe(ExcelJS.ValueType.Number);
      expect(cell("°C").type).toBe(ExcelJS.ValueType.Number);
      expect(cell("°C").numFmt).toBe("0.0");
      for (const name of ["Taken at", "Received at"]) {
        expect(cell(name).type, name).toBe(ExcelJS.ValueType.Date);
        expect(cell(name).value, name).toBeInstanceOf(Date);
        expect(cell(name).numFmt, name).toBe("yyyy-mm-dd hh:mm");
      }
      expect(cell("Late").type).toBe(ExcelJS.ValueType.Boolean);
      expect(cell("Reading id").type).toBe(ExcelJS.ValueType.String);
      // A photo is a link to it; a reading without one has an empty cell.
      if (r.photoId) {
        expect(cell("Photo").type).toBe(ExcelJS.ValueType.Hyperlink);
        expect(cell("Photo").value).toEqual({ text: en.recordsSheet.photoLink, hyperlink: new URL(`/photos/${r.photoId}`, process.env.APP_URL).href });
        expect(cell("Photo").font?.underline).toBe(true);
      } else expect(cell("Photo").type).toBe(ExcelJS.ValueType.Null);
    });
    expect(rs.filter((r) => r.photoId).map((r) => r.photoId)).toEqual([photoId]);
    expect(sheet.sheet.views[0]).toMatchObject({ state: "frozen", ySplit: 2, topLeftCell: "A3" });
    expect(sheet.sheet.autoFilter).toBe(`A2:${sheet.sheet.getColumn(header.length).letter}${rs.length + 2}`);
    expect(sheet.sheet.pageSetup.printTitlesRow).toBe("1:2");
    expect(header.map((_, i) => sheet.sheet.getColumn(i + 1).width).slice(0, 8)).toEqual([16, 24, 10, 10, 6, 8, 17, 17]);
    const cold = rows.find((r) => r[col("Unit")] === "°C")!;
    expect(cold[col("Value as entered")]).toBe(-2);
    expect(cold[col("°C")]).toBe(-2);
    const fix = rs.findIndex((r) => r.correctsReadingId);
    const corrected = rs.find((r) => r.id === rs[fix].correctsReadingId)!;
    expect(rows[fix][col("Correction reason")]).toBe(`'${reason}`);
    expect(rows[fix][col("Value it corrects")]).toBe(120);
    expect(cellClock(rows[fix][col("Corrects reading taken at")])).toBe(siteClock(corrected.takenAt));
    expect(rows.filter((r) => r[col("Probe")] === "P-2")).toHaveLength(1);
  });

  it("the Curves sheet has one cooling-curve picture per batch, under a caption row naming the batch, two to a printed page", async () => {
    const wb = await loadWorkbook(await download(`/sites/${t.site.id}/export.xlsx?from=${range.from}&to=${range.to}`));
    const cover = new Map(sheetOf(wb, "Cover").rows.map((r) => [r[0], r[1]]));
    expect(cover.get("Cooling curves")).toBe("The Curves sheet has the cooling curve of each of the 3 batches.");
    const { sheet, rows } = sheetOf(wb, "Curves");
    expect(rows[0][0]).toContain("The Curves sheet has");
    expect(rows[0][0]).toContain(en.app.caution);
    expect(rows[1]).toEqual(["Lot", "Product", "Started", "Outcome", "Flagged", "Batch page"]);
    expect(sheet.pageSetup).toMatchObject({ orientation: "portrait", fitToWidth: 1, printTitlesRow: "1:2" });
    const images = sheet.getImages().toSorted((a, b) => a.range.tl.nativeRow - b.range.tl.nativeRow);
    expect(images).toHaveLength(3);
    const dbBatches = (await db.execute<{ id: string; lot_code: string; started_at: string }>(sql`SELECT id, lot_code, started_at FROM batches WHERE site_id = ${t.site.id} ORDER BY started_at, id`)).rows;
    for (const [i, image] of images.entries()) {
      // The picture starts in column A on the row under its caption, and is shown 600 px wide.
      expect(image.range.tl.nativeCol).toBe(0);
      const caption = rows[image.range.tl.nativeRow - 1];
      expect(caption[0]).toBe(`'${dbBatches[i].lot_code}`);
      expect(caption[1]).toBe(t.product.name);
      expect(cellClock(caption[2])).toBe(siteClock(dbBatches[i].started_at));
      expect(caption[5]).toEqual({ text: "open", hyperlink: new URL(`/sites/${t.site.id}/batches/${dbBatches[i].id}`, process.env.APP_URL).href });
      expect((image.range as unknown as { ext: { width: number; height: number } }).ext).toMatchObject({ width: 600, height: 378 });
      const media = wb.getImage(Number(image.imageId));
      expect(media.extension).toBe("png");
      const meta = await sharp(media.buffer as unknown as Buffer).metadata();
      expect(meta).toMatchObject({ format: "png", width: 1200, height: 756 });
      // A real picture, not a blank: many colours are in it.
      const { data } = await sharp(media.buffer as unknown as Buffer).resize(200).raw().toBuffer({ resolveWithObject: true });
      expect(new Set(Array.from({ length: data.length / 3 }, (_, k) => data.readUIntBE(k * 3, 3))).size).toBeGreaterThan(20);
    }
    // Caption rows are evenly spaced: the picture's rows and one to spare under each.
    expect(images[1].range.tl.nativeRow - images[0].range.tl.nativeRow).toBe(images[2].range.tl.nativeRow - images[1].range.tl.nativeRow);
    expect(rows[images[0].range.tl.nativeRow - 1][3]).toBe("passed");
    // The discarded batch shows why it is flagged.
    // (its start reading, taken 20 min before it reached the server, is a late entry)
    expect(rows[images[2].range.tl.nativeRow - 1][4]).toBe("discarded, corrective action, late entry");
  });

  it("a period with more batches than pictures allowed pictures the flagged ones first and says so on the cover", async () => {
    const busy = await newTenant();
    const q = await signedIn(busy.people.qa.email, busy.people.qa.password);
    const start = Date.now() - 20 * 60 * MIN;
    const made: { id: string; lotCode: string }[] = [];
    for (let i = 0; i < 101; i++) {
      const b = await endedBatch(busy, { state: "cooled", startedAt: new Date(start + i * 6 * MIN), endedAt: new Date(start + i * 6 * MIN + 240 * MIN), lotCode: `N-${String(i).padStart(3, "0")}` });
      made.push(b);
    }
    // The two last to start are flagged: one missed a stage, one has a late entry.
    await db.update(batches).set({ missedAt: new Date(start) }).where(eq(batches.id, made[100].id));
    await db.insert(readings).values({ batchId: made[99].id, siteId: busy.site.id, clientId: randomUUID(), valueEntered: 40, unitEntered: "F", valueC: 4.4, takenAt: new Date(start + 99 * 6 * MIN + 200 * MIN), late: true, source: "api" });
    const day = { from: localDateOf(start - 24 * 60 * MIN, busy.site.timeZone), to: localDateOf(Date.now(), busy.site.timeZone) };
    const res = await q.get(`/sites/${busy.site.id}/export.xlsx?from=${day.from}&to=${day.to}`);
    expect(res.status).toBe(200);
    const wb = await loadWorkbook(res);
    const cover = new Map(sheetOf(wb, "Cover").rows.map((r) => [r[0], r[1]]));
    expect(cover.get("Cooling curves")).toContain("curves of 100 of the 101 batches (at most 100 a file): the 2 flagged batches first");
    expect(cover.get("Cooling curves")).toContain("Every batch's curve is on its batch page.");
    const { sheet, rows } = sheetOf(wb, "Curves");
    const images = sheet.getImages();
    expect(images).toHaveLength(100);
    const pictured = images.map((im) => rows[im.range.tl.nativeRow - 1][0]);
    expect(pictured).toContain("N-100");
    expect(pictured).toContain("N-099");
    // The one left out is the last unflagged batch to start; the rest keep their order by start.
    expect(pictured).not.toContain("N-098");
    expect(pictured.slice(0, 3)).toEqual(["N-000", "N-001", "N-002"]);
    expect(rows[images.find((im) => rows[im.range.tl.nativeRow - 1][0] === "N-099")!.range.tl.nativeRow - 1][4]).toBe("late entry");
  });

  it("the corrective-actions sheet names the action, who took it and its confirmation", async () => {
    const wb = await loadWorkbook(await download(`/sites/${t.site.id}/export.xlsx?from=${range.from}&to=${range.to}`));
    const sheet = sheetOf(wb, "Corrective actions");
    expect(sheet.rows[1]).toEqual(["Lot", "Product", "Kind", "Detail", "Taken by", "Taken at", "Confirmed by", "Confirmed at", "Confirmation note"]);
    expect(sheet.rows).toHaveLength(3);
    const [row] = sheet.rows.slice(2);
    const [ca] = await db.select().from(correctiveActions).where(eq(correctiveActions.siteId, t.site.id));
    const [conf] = await db.select().from(actionConfirmations).where(eq(actionConfirmations.correctiveActionId, ca.id));
    const who = await names();
    expect(row).toEqual([
      `'${lots.discarded}`,
      t.product.name,
      "discarded",
      `'${discardReason} (4 kg)`,
      who.get(t.people.cook.id),
      expect.any(Date),
      who.get(t.people.manager.id),
      expect.any(Date),
      "Seen in the bin",
    ]);
    expect(cellClock(row[5])).toBe(siteClock(ca.takenAt));
    expect(cellClock(row[7])).toBe(siteClock(conf.confirmedAt));
    expect(sheet.sheet.getCell("F3").type).toBe(ExcelJS.ValueType.Date);
    expect(sheet.sheet.getCell("H3").numFmt).toBe("yyyy-mm-dd hh:mm");
    expect(sheet.sheet.getCell("D3").alignment?.wrapText).toBe(true);
    expect(sheet.sheet.views[0]).toMatchObject({ state: "frozen", ySplit: 2 });
    expect(sheet.sheet.autoFilter).toBe("A2:I3");
    expect(sheet.sheet.pageSetup.printTitlesRow).toBe("1:2");
  });

  it("CSV quotes commas, quotes and line breaks, neutralises formula-like text, keeps numbers as numbers and starts with a BOM", async () => {
    const res = await download(`/sites/${t.site.id}/export.csv?sheet=readings&from=${range.from}&to=${range.to}`);
    expect(res.headers.get("content-type")).toBe("text/csv; charset=utf-8");
    expect(res.headers.get("content-disposition")).toContain(`-${range.from}-to-${range.to}.readings.csv"`);
    const bytes = Buffer.from(await res.arrayBuffer());
    expect([...bytes.subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]);
    const text = bytes.toString("utf8").slice(1);
    // The raw text: the quote doubled inside a quoted field, the line break kept inside the quotes.
    expect(text).toContain(`"'+1, ""typo"" on the keypad\nre-probed"`);
    expect(text).toContain(`"'=HYPERLINK(""x"")"`);
    const rows = parseCsv(text);
    const header = rows[0];
    const col = (name: string) => header.indexOf(name);
    const { rs } = await batchReadings();
    expect(rows).toHaveLength(rs.length + 1);
    const cold = rows.find((r) => r[col("Unit")] === "°C")!;
    expect(cold[col("Value as entered")]).toBe("-2");
    expect(cold[col("°C")]).toBe("-2");
    expect(cold[col("Lot")]).toBe("'+1");
    const fix = rows.slice(1).find((r) => r[col("Correction reason")])!;
    expect(fix[col("Correction reason")]).toBe(`'${reason}`);
    expect(rows[1][col("Taken at")]).toBe(siteClock(rs[0].takenAt));

    const batchesCsv = parseCsv((await (await download(`/sites/${t.site.id}/export.csv?sheet=batches&from=${range.from}&to=${range.to}`)).text()).replace(/^\uFEFF/, ""));
    expect(batchesCsv.slice(1).map((r) => r[0])).toEqual([`'${lots.passed}`, "'+1", "'@SUM(A1)"]);
    expect(batchesCsv[1][batchesCsv[0].indexOf("Stage 1 limit (°F)")]).toBe("70");
    const actionsCsv = parseCsv((await (await download(`/sites/${t.site.id}/export.csv?sheet=actions&from=${range.from}&to=${range.to}`)).text()).replace(/^\uFEFF/, ""));
    expect(actionsCsv[1][3]).toBe(`'${discardReason} (4 kg)`);
  });

  it("each download is recorded in the audit log with its range and format", async () => {
    await download(`/sites/${t.site.id}/export.csv?sheet=actions&from=${range.from}&to=${range.to}`);
    const events = await db.select().from(auditEvents).where(and(eq(auditEvents.siteId, t.site.id), eq(auditEvents.action, "records.exported")));
    expect(events.some((e) => e.actorUserId === t.people.qa.id && (e.data as Record<string, string>).format === "csv:actions" && (e.data as { from: string }).from === range.from)).toBe(true);
    // The person's own workbook download, not the sweep's weekly e-mail (also an xlsx export).
    expect(events.some((e) => e.actorUserId === t.people.qa.id && (e.data as { format: string }).format === "xlsx")).toBe(true);
  });

  it("without dates the export is last week, Monday to Sunday in the site's zone", async () => {
    const res = await download(`/sites/${t.site.id}/export.xlsx`);
    const week = lastWeek(ZONE);
    expect(new Date(`${week.from}T12:00:00Z`).getUTCDay()).toBe(1);
    expect(res.headers.get("content-disposition")).toContain(`-${week.from}-to-${week.to}.xlsx"`);
    const wb = await loadWorkbook(res);
    const { fromMs, toMs } = rangeInstants(week, ZONE);
    const [{ n }] = (await db.execute<{ n: number }>(sql`SELECT count(*)::int AS n FROM batches WHERE site_id = ${t.site.id} AND started_at >= ${new Date(fromMs).toISOString()}::timestamptz AND started_at < ${new Date(toMs).toISOString()}::timestamptz`)).rows;
    expect(sheetOf(wb, "Batches").rows).toHaveLength(2 + n);
  });

  it("cooks are refused, another organisation's site is not found, and signed-out visitors go to sign-in", async () => {
    const path = `/sites/${t.site.id}/export.xlsx?from=${range.from}&to=${range.to}`;
    expect((await cook.get(path)).status).toBe(403);
    expect((await cook.get(`/sites/${t.site.id}/export.csv?sheet=readings`)).status).toBe(403);
    for (const role of ["manager", "admin"] as const) {
      const c = await signedIn(t.people[role].email, t.people[role].password);
      expect((await c.get(path)).status).toBe(200);
    }
    const other = await newTenant();
    const stranger = await signedIn(other.people.qa.email, other.people.qa.password);
    expect((await stranger.get(path)).status).toBe(404);
    expect((await stranger.get(`/sites/${t.site.id}/export.csv?sheet=batches`)).status).toBe(404);
    const anonymous = await new Client().get(path);
    expect(anonymous.status).toBe(302);
    expect(location(anonymous)).toBe(`/signin?next=${encodeURIComponent(path)}`);
  });

  it("bad dates and a bad sheet are refused with a 400 that says what is wrong", async () => {
    const cases: [string, RegExp][] = [
      ["export.xlsx?from=2025-02-30&to=2025-03-02", /does not exist/],
      ["export.xlsx?from=2025-03-01", /to: Give the date as YYYY-MM-DD/],
      ["export.xlsx?from=03/01/2025&to=2025-03-02", /from: Give the date as YYYY-MM-DD/],
      ["export.xlsx?from=2025-03-09&to=2025-03-02", /must not be after/],
      ["export.xlsx?from=2024-01-01&to=2025-01-01", /at most 366 days/],
      ["export.csv?sheet=people&from=2025-03-01&to=2025-03-02", /sheet is one of batches, readings, actions/],
      ["export.csv?from=2025-03-01&to=2025-03-02", /sheet is one of/],
    ];
    for (const [query, message] of cases) {
      const res = await qa.get(`/sites/${t.site.id}/${query}`);
      expect(res.status, query).toBe(400);
      expect(await res.text(), query).toMatch(message);
    }
    // 366 days, the most a range may cover, is fine.
    expect((await qa.get(`/sites/${t.site.id}/export.csv?sheet=batches&from=2024-01-01&to=2024-12-31`)).status).toBe(200);
  });
});
