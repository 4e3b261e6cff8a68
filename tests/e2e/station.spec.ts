import { demo, expect, SCREENS, signIn, tapPerson, test } from "./fixtures";

test("a manager turns a tablet into a station; a cook taps their name and logs in with the keypad", async ({ page }) => {
  await signIn(page, demo("wattle", "manager").email);
  await page.getByRole("link", { name: "Set up station" }).click();
  await page.getByLabel("Station name").fill("Pass tablet");
  await page.screenshot({ path: `${SCREENS}/station-setup.png`, fullPage: true });
  await page.getByRole("button", { name: "Make this a station" }).click();
  await expect(page.getByRole("heading", { name: "Who is logging?" })).toBeVisible();
  await expect(page.getByTestId("station-name")).toHaveText("Wattle Grove Kitchen · Pass tablet");
  await page.screenshot({ path: `${SCREENS}/station-people.png`, fullPage: true });

  const cook = demo("wattle", "cook");
  await tapPerson(page, cook.name);
  for (const d of "1234") await page.getByRole("button", { name: d, exact: true }).click();
  await page.getByRole("button", { name: "OK" }).click();
  await expect(page.getByRole("alert")).toContainText("Wrong PIN. 4 tries left");
  await page.screenshot({ path: `${SCREENS}/station-wrong-pin.png`, fullPage: true });

  await page.getByRole("button", { name: "Clear" }).click();
  for (const d of cook.pin) await page.getByRole("button", { name: d, exact: true }).click();
  await page.getByRole("button", { name: "OK" }).click();
  await expect(page.getByRole("heading", { name: `Logging as ${cook.name}` })).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/station-cook.png`, fullPage: true });

  await page.getByRole("button", { name: "Español" }).click();
  await expect(page.locator("html")).toHaveAttribute("lang", "es");
  await page.getByRole("button", { name: /siguiente/i }).click();
  await expect(page.getByRole("heading", { level: 1 })).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/station-es.png`, fullPage: true });
});
