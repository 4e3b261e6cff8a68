import { createProduct } from "../../db/factories";
import { addReading, afterSweep, coolingBatch, endedBatch, minutesAgo, sign } from "../helpers/batches";
import { db, newTenant } from "../helpers/db";
import { expect, SCREENS, signIn, test } from "./fixtures";

const DAY = 24 * 60;

async function week() {
  const t = await newTenant();
  const compote = await createProduct(db, { siteId: t.site.id, name: "Pear and ginger compote", composition: { water: 84, carbohydrate: 15, fibre: 1 } });
  const start = minutesAgo(2 * DAY);
  const cooled = await endedBatch(t, { state: "cooled", startedAt: start, endedAt: minutesAgo(2 * DAY - 240), lotCode: "WK-101", equipmentId: t.walkIn.id, startedBy: t.people.cook.id });
  await addReading(t, cooled.id, 66, new Date(start.getTime() + 70 * 60_000));
  await addReading(t, cooled.id, 39, new Date(start.getTime() + 250 * 60_000));
  await sign(t, cooled.id, { readings: 3, actions: 0 });
  await endedBatch(t, { state: "cooled_after_reheat", startedAt: minutesAgo(DAY), endedAt: minutesAgo(DAY - 420), lotCode: "WK-102", productId: compote.id, method: "ice-bath-stirred" });
  await endedBatch(t, { state: "discarded", startedAt: minutesAgo(3 * DAY), endedAt: minutesAgo(3 * DAY - 200), missedAt: minutesAgo(3 * DAY - 120), lotCode: "WK-103" });
  await coolingBatch(t, { lotCode: "WK-104", startedMinutesAgo: 25 });
  await afterSweep(t);
  return t;
}

test.describe("records on a tablet", () => {
  test.use({ viewport: { width: 1180, height: 820 } });

  test("QA reads the week's records, filters them on the server, and opens the print view", async ({ page }) => {
    const t = await week();
    await signIn(page, t.people.qa.email, t.people.qa.password);
    await page.getByRole("navigation", { name: "Main menu" }).getByRole("link", { name: "Records" }).click();
    await expect(page.getByRole("heading", { name: `Records of ${t.site.name}` })).toBeVisible();
    const rows = page.getByTestId("record-row");
    await expect(rows).toHaveCount(4);
    await expect(page.getByTestId("total-pass-rate")).toHaveText("33.3 % (1 of 3)");
    await expect(page.getByTestId("caution")).toContainText("The probe reading is the record");
    await page.screenshot({ path: `${SCREENS}/records-view.png`, fullPage: true });

    await page.getByLabel("Outcome").selectOption({ label: "Discarded" });
    await page.getByRole("button", { name: "Show" }).click();
    await expect(page).toHaveURL(/outcome=discarded/);
    await expect(rows).toHaveCount(1);
    await expect(rows.first()).toContainText("WK-103");
    await expect(page.getByTestId("total-batches")).toHaveText("1");

    await page.getByRole("link", { name: "Clear filters" }).click();
    await expect(rows).toHaveCount(4);
    await page.getByTestId("records-table").getByRole("link", { name: /^Batch/ }).click();
    await expect(page.getByRole("columnheader", { name: /Batch/ })).toHaveAttribute("aria-sort", "ascending");
    await expect(rows.first()).toContainText("Chili");

    await page.getByTestId("records-print-link").click();
    await expect(page.getByRole("heading", { name: /Cooling log/ })).toBeVisible();
    await expect(page.getByTestId("print-row")).toHaveCount(4);
    await page.screenshot({ path: `${SCREENS}/records-print.png`, fullPage: true });
    await page.emulateMedia({ media: "print" });
    await page.screenshot({ path: `${SCREENS}/records-print-paper.png`, fullPage: true });
    // A printed page: A4 landscape, and the log must fit its width.
    const pdf = await page.pdf({ format: "A4", landscape: true, printBackground: true });
    expect(pdf.subarray(0, 4).toString()).toBe("%PDF");
  });

  test("portrait: the records view does not scroll sideways and reads in Spanish", async ({ page }) => {
    const t = await week();
    await page.setViewportSize({ width: 820, height: 1180 });
    await signIn(page, t.people.qa.email, t.people.qa.password);
    await page.goto(`/sites/${t.site.id}/records`);
    await expect(page.getByTestId("record-row")).toHaveCount(4);
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
    await page.getByRole("button", { name: "Español" }).click();
    await expect(page.getByRole("heading", { name: `Registros de ${t.site.name}` })).toBeVisible();
    await page.screenshot({ path: `${SCREENS}/records-view-es-portrait.png`, fullPage: true });
  });
});
