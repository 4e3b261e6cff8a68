import ExcelJS from "exceljs";
import { eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { batches, products } from "~db/schema";
import { endedBatch, minutesAgo } from "../helpers/batches";
import { type Client, signedIn } from "../helpers/client";
import { parseCsv } from "../helpers/csv";
import { db, newTenant } from "../helpers/db";
import { makeShareLink } from "../helpers/share";

// Text people type (product names, lot codes) is shown as text everywhere: never as markup in a page,
// never as a formula in a spreadsheet.
const MARKUP = `<img src=x onerror="alert(1)">Stew`;
const FORMULA = `=HYPERLINK("http://evil.example","open")`;

describe("stored text is escaped wherever it is shown", () => {
  let t: Awaited<ReturnType<typeof newTenant>>;
  let qa: Client;
  let batchId: string;
  const today = () => new Date().toISOString().slice(0, 10);

  beforeAll(async () => {
    t = await newTenant();
    await db.update(products).set({ name: MARKUP }).where(eq(products.id, t.product.id));
    batchId = (await endedBatch(t, { state: "cooled", startedAt: minutesAgo(300), endedAt: minutesAgo(60), lotCode: FORMULA })).id;
    qa = await signedIn(t.people.qa.email, t.people.qa.password);
  });

  const pages = () => [
    `/sites/${t.site.id}/records`,
    `/sites/${t.site.id}/records/print`,
    `/sites/${t.site.id}/review`,
    `/sites/${t.site.id}/batches/${batchId}`,
    `/sites/${t.site.id}/analytics`,
    "/records",
  ];

  it("pages show the markup as text: the raw tag never appears, its escaped form does", async () => {
    for (const path of pages()) {
      const res = await qa.get(path);
      expect(res.status, path).toBe(200);
      const html = await res.text();
      expect(html, path).not.toContain("<img src=x");
      expect(html, path).toContain("&lt;img src=x");
    }
  });

  it("the share view does the same", async () => {
    const made = await makeShareLink(t, qa, { label: `<b>County</b>`, fromDate: "2026-01-01", toDate: today() });
    for (const path of [`/shared/${made.token}`, `/shared/${made.token}/batches/${batchId}`, `/shared/${made.token}/print`]) {
      const html = await (await qa.get(path)).text();
      expect(html, path).not.toContain("<img src=x");
      expect(html, path).not.toContain("<b>County</b>");
      expect(html, path).toContain("&lt;img src=x");
    }
  });

  it("the CSV and the workbook hold the formula as text, with the apostrophe that keeps it inert", async () => {
    const [b] = await db.select({ startedAt: batches.startedAt }).from(batches).where(eq(batches.id, batchId));
    const day = b.startedAt.toISOString().slice(0, 10);
    const range = `from=${new Date(Date.parse(day) - 86_400_000).toISOString().slice(0, 10)}&to=${today()}`;
    const csv = parseCsv(await (await qa.get(`/sites/${t.site.id}/export.csv?sheet=batches&${range}`)).text());
    const lotCells = csv.flat().filter((c) => c.includes("HYPERLINK"));
    expect(lotCells).toEqual([`'${FORMULA}`]);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(Buffer.from(await (await qa.get(`/sites/${t.site.id}/export.xlsx?${range}`)).arrayBuffer()) as never);
    const cells: ExcelJS.Cell[] = [];
    wb.eachSheet((ws) => ws.eachRow((row) => row.eachCell((c) => cells.push(c))));
    const lot = cells.filter((c) => String(c.value ?? "").includes("HYPERLINK") || (c.formula ?? "").includes("HYPERLINK"));
    expect(lot.length).toBeGreaterThan(0);
    for (const c of lot) {
      expect(c.type).not.toBe(ExcelJS.ValueType.Formula);
      expect(String(c.value)).toBe(`'${FORMULA}`);
    }
  });
});
