import { createProduct } from "../../db/factories";
import { addAction, afterSweep, coolingBatch, endedBatch, minutesAgo } from "../helpers/batches";
import { db, newTenant } from "../helpers/db";
import { expect, SCREENS, signIn, test } from "./fixtures";

// A kitchen tablet held upright.
test.use({ viewport: { width: 820, height: 1180 } });

async function kitchen() {
  const t = await newTenant();
  const compote = await createProduct(db, { siteId: t.site.id, name: "Apple compote", composition: { water: 85, carbohydrate: 14, fibre: 1 } });
  // The cooling batches' forecasts and due times are the engine's, from their pans, methods and readings.
  const offTrack = await coolingBatch(t, { verdict: "behind", lotCode: "OT-7", startedMinutesAgo: 20 });
  await coolingBatch(t, { verdict: "tight", lotCode: "AR-3", productId: compote.id });
  // 45 min since its only reading: past the 30-min interval and the 10-min grace.
  await coolingBatch(t, { lotCode: "OD-2", startedMinutesAgo: 45 });
  const moved = await coolingBatch(t, { lotCode: "MV-1" });
  await addAction(t, moved.id);
  await endedBatch(t, { state: "cooled", endedAt: minutesAgo(30), lotCode: "DN-5", startedAt: minutesAgo(300), productId: compote.id });
  await endedBatch(t, { state: "cooled", endedAt: minutesAgo(20), lotCode: "DN-6", startedAt: minutesAgo(280) });
  await afterSweep(t);
  return { t, offTrack };
}

test("a manager on a tablet sees the day at a glance, then sorts, filters and opens the review queue", async ({ page }) => {
  const { t, offTrack } = await kitchen();
  await signIn(page, t.people.manager.email, t.people.manager.password);
  await expect(page.getByRole("heading", { name: "Today at a glance" })).toBeVisible();
  await expect(page.getByTestId("glance-pass")).toContainText("2 of 2 batches that ended since Monday");
  await expect(page.getByTestId("glance-at-risk")).toContainText("2");
  await expect(page.getByTestId("glance-overdue")).toContainText("1");
  await page.screenshot({ path: `${SCREENS}/home-manager-glance.png`, fullPage: true });

  await page.getByRole("navigation", { name: "Main menu" }).getByRole("link", { name: "Review" }).click();
  await expect(page.getByRole("heading", { name: `Review queue at ${t.site.name}` })).toBeVisible();
  const rows = page.getByTestId("queue-row");
  await expect(rows).toHaveCount(6);
  await expect(rows.first()).toContainText("OT-7");
  await expect(page.getByTestId("caution")).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/review-queue.png`, fullPage: true });

  // Oldest first by start.
  await page.getByRole("link", { name: /^Started/ }).click();
  await expect(page).toHaveURL(/sort=started/);
  await expect(page.getByRole("columnheader", { name: /Started/ })).toHaveAttribute("aria-sort", "descending");
  await page.getByRole("link", { name: /^Started/ }).click();
  await expect(page.getByRole("columnheader", { name: /Started/ })).toHaveAttribute("aria-sort", "ascending");
  await expect(rows.first()).toContainText("DN-5");
  await page.screenshot({ path: `${SCREENS}/review-sorted.png`, fullPage: true });

  await page.getByRole("link", { name: /^Waiting for a signature/ }).click();
  await expect(rows).toHaveCount(2);
  await page.getByLabel("Product or lot").fill("compote");
  await page.getByRole("button", { name: "Search" }).click();
  await expect(rows).toHaveCount(1);
  await expect(rows.first()).toContainText("DN-5");
  await page.screenshot({ path: `${SCREENS}/review-filtered.png`, fullPage: true });

  await page.getByRole("link", { name: "Clear search" }).click();
  await expect(page).not.toHaveURL(/q=/);
  await page.getByRole("link", { name: /^Predicted to miss/ }).click();
  await expect(rows).toHaveCount(1);
  await rows.first().getByTestId("queue-row-link").click();
  await expect(page).toHaveURL(new RegExp(`/sites/${t.site.id}/batches/${offTrack.id}$`));
});

test("the review queue in landscape and in Spanish, and an empty queue", async ({ page }) => {
  await page.setViewportSize({ width: 1180, height: 820 });
  const { t } = await kitchen();
  await signIn(page, t.people.qa.email, t.people.qa.password);
  await page.getByRole("navigation", { name: "Main menu" }).getByRole("link", { name: "Review" }).click();
  await expect(page.getByTestId("queue-row")).toHaveCount(6);
  await page.screenshot({ path: `${SCREENS}/review-queue-landscape.png`, fullPage: true });
  await page.getByRole("button", { name: /Español/ }).click();
  await expect(page.locator("html")).toHaveAttribute("lang", "es");
  await expect(page.getByRole("heading", { name: `Cola de revisión de ${t.site.name}` })).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/review-queue-es.png`, fullPage: true });
  await page.getByRole("button", { name: /English/ }).click();

  const empty = await newTenant();
  await page.context().clearCookies();
  await signIn(page, empty.people.manager.email, empty.people.manager.password);
  await page.goto(`/sites/${empty.site.id}/review`);
  await expect(page.getByTestId("queue-empty")).toHaveText(/Nothing needs you right now/);
  await page.screenshot({ path: `${SCREENS}/review-empty.png`, fullPage: true });
  await page.goto(`/sites/${empty.site.id}`);
  await page.screenshot({ path: `${SCREENS}/home-manager-empty.png`, fullPage: true });
});
