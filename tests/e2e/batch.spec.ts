import type { Page } from "@playwright/test";
import { cameraJpeg } from "../helpers/images";
import { demo, expect, SCREENS, signIn, tapPerson, test } from "./fixtures";

async function stationWithCook(page: Page, site: "harbor" | "wattle", name: string) {
  await signIn(page, demo(site, "manager").email);
  await page.getByRole("link", { name: "Set up station" }).click();
  await page.getByLabel("Station name").fill(name);
  await page.getByRole("button", { name: "Make this a station" }).click();
  const cook = demo(site, "cook");
  await tapPerson(page, cook.name);
  for (const d of cook.pin) await page.getByRole("button", { name: d, exact: true }).click();
  await page.getByRole("button", { name: "OK" }).click();
  if ((await page.locator("html").getAttribute("lang")) === "es") await page.getByRole("button", { name: /English/ }).click();
}

async function startBatch(page: Page, lot: string, start: string) {
  await page.getByRole("link", { name: "Start a batch" }).click();
  await page.getByLabel("Product").selectOption({ label: "Smoky black-bean chili" });
  await page.getByLabel("Lot or batch code").fill(lot);
  for (const k of start) await page.getByRole("button", { name: k, exact: true }).click();
  await page.getByRole("button", { name: "Start cooling" }).click();
  await expect(page.getByRole("heading", { name: "Smoky black-bean chili" })).toBeVisible();
}

test("a reading made while the network is down stays on the tablet, is sent once when it returns, and a photo goes with it", async ({ page, context }) => {
  await stationWithCook(page, "wattle", "Offline tablet");
  await startBatch(page, "OFF-1", "63");
  await context.setOffline(true);
  for (const k of ["5", "4"]) await page.getByRole("button", { name: k, exact: true }).click();
  await page.locator('input[type="file"]').setInputFiles({ name: "probe.jpg", mimeType: "image/jpeg", buffer: await cameraJpeg() });
  await expect(page.getByText("Photo: probe.jpg")).toBeVisible();
  await page.getByRole("button", { name: "Save reading" }).click();
  await expect(page.getByTestId("pending").first()).toContainText("1 entry is saved on this tablet and not sent yet");
  await page.screenshot({ path: `${SCREENS}/offline-pending.png`, fullPage: true });
  await context.setOffline(false);
  await expect(page.getByRole("cell", { name: "54 °C" })).toBeVisible({ timeout: 20_000 });
  await expect(page.getByTestId("pending")).toHaveCount(0);
  await expect(page.getByRole("img", { name: "Photo of the probe" })).toBeVisible();
  // Sent exactly once, even though the tablet retried.
  await page.reload();
  await expect(page.getByRole("cell", { name: "54 °C" })).toHaveCount(1);
  await page.screenshot({ path: `${SCREENS}/offline-sent.png`, fullPage: true });
});

test("a missed stage asks for a reheat, and the reheat starts the clock again", async ({ page }) => {
  await stationWithCook(page, "wattle", "Reheat tablet");
  await page.getByRole("link", { name: "Start a batch" }).click();
  await page.getByLabel("Lot or batch code").fill("RH-1");
  for (const k of "62") await page.getByRole("button", { name: k, exact: true }).click();
  // The batch went into the walk-in two and a half hours ago.
  const local = (d: Date) => new Date(d.getTime() - d.getTimezoneOffset() * 60_000).toISOString().slice(0, 16);
  await page.getByLabel("Taken at (leave empty for now)").fill(local(new Date(Date.now() - 150 * 60_000)));
  await page.getByRole("button", { name: "Start cooling" }).click();
  await expect(page.getByRole("row").filter({ hasText: "62 °C" }).getByText("late entry")).toBeVisible();
  // Still 30 °C now: FSANZ 3.2.2 stage 1 (60 °C → 21 °C within 2 h) is missed.
  for (const k of "30") await page.getByRole("button", { name: k, exact: true }).click();
  await page.getByRole("button", { name: "Save reading" }).click();
  await expect(page.getByText("A stage was missed: reheat to 74 °C (165 °F) and cool again, or discard.")).toBeVisible();
  await expect(page.getByText("missed", { exact: true })).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/batch-missed.png`, fullPage: true });
  for (const k of "76") await page.getByRole("button", { name: k, exact: true }).click();
  await page.getByRole("button", { name: "Save reheat" }).click();
  await expect(page.getByRole("cell", { name: "76 °C" })).toBeVisible();
  await expect(page.getByText("A stage was missed: reheat")).toHaveCount(0);
  await expect(page.getByText("reheat", { exact: true })).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/batch-reheated.png`, fullPage: true });
});

test("a cook starts a batch on the station, logs a reading with the keypad and sees the prediction", async ({ page }) => {
  await stationWithCook(page, "harbor", "Cook line tablet");
  await page.getByRole("link", { name: "Start a batch" }).click();

  await page.getByLabel("Product").selectOption({ label: "Smoky black-bean chili" });
  await page.getByLabel("Lot or batch code").fill("CH-1201-A");
  for (const k of ["1", "5", "2"]) await page.getByRole("button", { name: k, exact: true }).click();
  await expect(page.getByLabel("Core temperature now")).toHaveValue("152");
  await page.screenshot({ path: `${SCREENS}/batch-start.png`, fullPage: true });
  await page.getByRole("button", { name: "Start cooling" }).click();

  await expect(page.getByRole("heading", { name: "Smoky black-bean chili" })).toBeVisible();
  await expect(page.getByTestId("verdict")).toHaveText(/On course|Cutting it close|Will miss/);
  await expect(page.getByText("Stage 1: 70 °F")).toBeVisible();
  await expect(page.getByRole("cell", { name: "152 °F" })).toBeVisible();

  for (const k of ["1", "4", "4"]) await page.getByRole("button", { name: k, exact: true }).click();
  await page.getByRole("button", { name: "Save reading" }).click();
  await expect(page.getByRole("cell", { name: "144 °F" })).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/batch-page.png`, fullPage: true });

  // A deep pan of chili in a walk-in will not make it; moving it to a stirred ice bath changes the verdict.
  const verdict = page.getByTestId("verdict");
  const before = (await verdict.textContent())!;
  await page.getByRole("listitem").filter({ hasText: "Stirred ice-water bath" }).getByRole("button", { name: "Do this now" }).click();
  await expect(verdict).not.toHaveText(before);
  await page.screenshot({ path: `${SCREENS}/batch-after-ice-bath.png`, fullPage: true });

  await page.getByRole("link", { name: /Back/ }).click();
  const card = page.getByTestId("batch-card").filter({ hasText: "CH-1201-A" });
  await expect(card).toBeVisible();
  await expect(card).toContainText("144 °F");
  await page.screenshot({ path: `${SCREENS}/station-cards.png`, fullPage: true });

  // A card is a plain link that the list turns into a client-side navigation: the page is not reloaded.
  await page.evaluate(() => ((window as unknown as { stayed: boolean }).stayed = true));
  await card.click();
  await expect(page).toHaveURL(/\/station\/batches\/[0-9a-f-]{36}$/);
  await expect(page.getByRole("cell", { name: "144 °F" })).toBeVisible();
  expect(await page.evaluate(() => (window as unknown as { stayed?: boolean }).stayed)).toBe(true);
});

test("a bad temperature gets a message on the field and stores nothing", async ({ page }) => {
  await signIn(page, demo("wattle", "admin").email);
  await page.getByRole("link", { name: "Set up station" }).click();
  await page.getByLabel("Station name").fill("Prep tablet");
  await page.getByRole("button", { name: "Make this a station" }).click();
  const cook = demo("wattle", "cook");
  await tapPerson(page, cook.name);
  for (const d of cook.pin) await page.getByRole("button", { name: d, exact: true }).click();
  await page.getByRole("button", { name: "OK" }).click();
  await page.getByRole("link", { name: "Start a batch" }).click();
  await page.getByLabel("Lot or batch code").fill("R-77");
  for (const k of ["3", "0", "0"]) await page.getByRole("button", { name: k, exact: true }).click();
  await page.getByRole("button", { name: "Start cooling" }).click();
  await expect(page.getByText("A core temperature is between −30 °C and 110 °C")).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/batch-start-error.png`, fullPage: true });
});
