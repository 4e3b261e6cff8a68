import { demo, expect, SCREENS, signIn, test } from "./fixtures";

test("a cook starts a batch on the station, logs a reading with the keypad and sees the prediction", async ({ page }) => {
  await signIn(page, demo("harbor", "manager").email);
  await page.getByRole("link", { name: "Set up station" }).click();
  await page.getByLabel("Station name").fill("Cook line tablet");
  await page.getByRole("button", { name: "Make this a station" }).click();

  const cook = demo("harbor", "cook");
  await page.getByRole("button", { name: new RegExp(cook.name) }).click();
  for (const d of cook.pin) await page.getByRole("button", { name: d, exact: true }).click();
  await page.getByRole("button", { name: "OK" }).click();
  // The demo cook reads Spanish; this journey runs in English.
  if ((await page.locator("html").getAttribute("lang")) === "es") await page.getByRole("button", { name: /English/ }).click();
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

  await page.getByRole("link", { name: /Back/ }).click();
  const card = page.getByTestId("batch-card").filter({ hasText: "CH-1201-A" });
  await expect(card).toBeVisible();
  await expect(card).toContainText("144 °F");
  await page.screenshot({ path: `${SCREENS}/station-cards.png`, fullPage: true });
});

test("a bad temperature gets a message on the field and stores nothing", async ({ page }) => {
  await signIn(page, demo("wattle", "admin").email);
  await page.getByRole("link", { name: "Set up station" }).click();
  await page.getByLabel("Station name").fill("Prep tablet");
  await page.getByRole("button", { name: "Make this a station" }).click();
  const cook = demo("wattle", "cook");
  await page.getByRole("button", { name: new RegExp(cook.name) }).click();
  for (const d of cook.pin) await page.getByRole("button", { name: d, exact: true }).click();
  await page.getByRole("button", { name: "OK" }).click();
  await page.getByRole("link", { name: "Start a batch" }).click();
  await page.getByLabel("Lot or batch code").fill("R-77");
  for (const k of ["3", "0", "0"]) await page.getByRole("button", { name: k, exact: true }).click();
  await page.getByRole("button", { name: "Start cooling" }).click();
  await expect(page.getByText("A core temperature is between −30 °C and 110 °C")).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/batch-start-error.png`, fullPage: true });
});
