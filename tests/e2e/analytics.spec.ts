import type { Page } from "@playwright/test";
import { addMembership, createEquipment, createProduct, createSite } from "../../db/factories";
import { addReading, endedBatch, minutesAgo } from "../helpers/batches";
import { db, newTenant } from "../helpers/db";
import { expect, SCREENS, signIn, test } from "./fixtures";

const MIN = 60_000;

/** A kitchen with a fortnight of ended batches: products with long names, three methods, two units, every shift. */
async function kitchen() {
  const t = await newTenant();
  const composition = { water: 80, protein: 5, fat: 3, carbohydrate: 10, fibre: 1, ash: 1 };
  const rice = await createProduct(db, { siteId: t.site.id, name: "Steamed jasmine rice with coconut milk and lime leaf", composition });
  const soup = await createProduct(db, { siteId: t.site.id, name: "Lentil soup", composition });
  const blast = await createEquipment(db, { siteId: t.site.id, name: "Blast chiller by the pass", method: "blast-chiller" });
  const plan = [
    { productId: t.product.id, method: "walk-in", equipmentId: t.walkIn.id },
    { productId: rice.id, method: "blast-chiller", equipmentId: blast.id },
    { productId: soup.id, method: "ice-wand", equipmentId: null },
  ];
  for (let i = 0; i < 30; i++) {
    const p = plan[i % 3];
    const startedAt = minutesAgo(60 * 24 + i * 7 * 60 + (i % 5) * 37);
    const state = i % 7 === 3 ? "discarded" : i % 5 === 4 ? "cooled_after_reheat" : "cooled";
    const b = await endedBatch(t, { ...p, state, lotCode: `E2E-${i}`, startedAt, endedAt: new Date(startedAt.getTime() + 6 * 3600_000) });
    await addReading(t, b.id, 140, new Date(startedAt.getTime() + 10 * MIN));
    if (state !== "discarded") await addReading(t, b.id, 66, new Date(startedAt.getTime() + (40 + ((i * 23) % 150)) * MIN));
    else await addReading(t, b.id, 95, new Date(startedAt.getTime() + 90 * MIN));
  }
  // Two batches of a new dish: too few to judge.
  const confit = await createProduct(db, { siteId: t.site.id, name: "Duck confit", composition });
  for (const state of ["cooled", "discarded"] as const) await endedBatch(t, { productId: confit.id, state, startedAt: minutesAgo(2000), endedAt: minutesAgo(1600) });
  // A second site where the QA lead is QA too: the organisation view compares the two.
  const annex = await createSite(db, { organisationId: t.org.id, name: "Annex on the quay", timeZone: "America/New_York", temperatureUnit: "F", ruleSetCode: "fda-3-501.14-a" });
  await addMembership(db, t.people.qa.id, annex.id, "qa");
  const stew = await createProduct(db, { siteId: annex.id, name: "Beef stew", composition });
  for (let i = 0; i < 6; i++) await endedBatch({ ...t, site: annex, product: stew }, { state: i % 3 ? "cooled" : "discarded", startedAt: minutesAgo(600 + i * 300), endedAt: minutesAgo(300 + i * 300) });
  return t;
}

/** The page fits the viewport's width: nothing scrolls sideways. */
async function expectNoSidewaysScroll(page: Page) {
  const { scroll, client } = await page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, client: document.documentElement.clientWidth }));
  expect(scroll).toBeLessThanOrEqual(client);
}

test("a QA lead reads the analytics on a tablet, in English and in Spanish, and compares their sites", async ({ page }) => {
  const t = await kitchen();
  await page.setViewportSize({ width: 1024, height: 768 });
  await signIn(page, t.people.qa.email, t.people.qa.password);
  // Two sites now: the kitchen's home first (sign-in lands on the first by name).
  await page.goto(`/sites/${t.site.id}`);
  await page.getByRole("navigation", { name: "Main menu" }).getByRole("link", { name: "Analytics" }).click();
  await expect(page.getByRole("heading", { name: `Analytics at ${t.site.name}` })).toBeVisible();
  await expect(page.getByTestId("analytics-pass")).toContainText("of 32 ended batches cooled first time");
  await expect(page.getByRole("img", { name: /Pass rate by product/ })).toBeVisible();
  await expect(page.getByRole("img", { name: /Time to reach 70 °F/ })).toBeVisible();
  await expect(page.getByTestId("rate-method")).toContainText("Ice paddle stirred through the food, in a walk-in");
  await expect(page.getByTestId("stage-one-histogram")).toContainText("Stage-1 limit: 2 h");
  await expect(page.getByTestId("rate-product")).toContainText("Duck confit · too few to judge");
  await expect(page.getByTestId("rate-product")).toContainText("1 of 2 · 50 %");
  await expectNoSidewaysScroll(page);
  await page.screenshot({ path: `${SCREENS}/analytics-landscape-en.png`, fullPage: true });
  await page.getByTestId("stage-one-histogram").screenshot({ path: `${SCREENS}/analytics-histogram-en.png` });
  await page.getByTestId("rate-product").screenshot({ path: `${SCREENS}/analytics-products-en.png` });

  // The exact numbers, one tap away.
  await page.getByTestId("rate-shift").getByText("Show the numbers as a table").click();
  await expect(page.getByTestId("rate-shift-table").getByRole("rowheader", { name: /Night shift 21:00–05:00/ })).toBeVisible();
  await page.getByTestId("rate-shift").screenshot({ path: `${SCREENS}/analytics-shift-table.png` });

  await page.setViewportSize({ width: 768, height: 1024 });
  await expectNoSidewaysScroll(page);
  await page.screenshot({ path: `${SCREENS}/analytics-portrait-en.png`, fullPage: true });

  await page.getByRole("button", { name: /Español/ }).click();
  await expect(page.locator("html")).toHaveAttribute("lang", "es");
  await expect(page.getByRole("heading", { name: `Análisis de ${t.site.name}` })).toBeVisible();
  await expect(page.getByTestId("rate-method")).toContainText("Paleta de hielo removida en el alimento, dentro de la cámara");
  await expect(page.getByTestId("stage-one-histogram")).toContainText("Límite de la etapa 1: 2 h");
  await expectNoSidewaysScroll(page);
  await page.screenshot({ path: `${SCREENS}/analytics-portrait-es.png`, fullPage: true });
  await page.getByTestId("stage-one-histogram").screenshot({ path: `${SCREENS}/analytics-histogram-es-portrait.png` });
  await page.getByTestId("rate-shift").screenshot({ path: `${SCREENS}/analytics-shift-es-portrait.png` });
  await page.setViewportSize({ width: 1024, height: 768 });
  await expectNoSidewaysScroll(page);
  await page.screenshot({ path: `${SCREENS}/analytics-landscape-es.png`, fullPage: true });

  await page.getByRole("link", { name: "Comparar todos tus centros" }).click();
  await expect(page.getByRole("heading", { name: "Tus centros comparados" })).toBeVisible();
  await expect(page.getByTestId("sites-table").getByRole("rowheader")).toHaveCount(2);
  await expectNoSidewaysScroll(page);
  await page.screenshot({ path: `${SCREENS}/analytics-sites-es.png`, fullPage: true });

  await page.getByRole("button", { name: /English/ }).click();
  await expect(page.locator("html")).toHaveAttribute("lang", "en");
  await page.goto(`/sites/${t.site.id}/analytics?from=2025-02-30`);
  await expect(page.getByTestId("analytics-ignored")).toHaveText("Could not use the start date: showing the last 12 weeks instead. Give dates as YYYY-MM-DD, and real days.");
  await page.screenshot({ path: `${SCREENS}/analytics-bad-date.png` });
});
