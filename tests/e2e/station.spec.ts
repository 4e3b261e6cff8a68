import { coolingBatch } from "../helpers/batches";
import { newTenant } from "../helpers/db";
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

test("a busy site's station: the page arrives with the first cards and shows every batch once it is live", async ({ page }) => {
  // 30 batches cooling: more than the page brings rendered (FIRST_CARDS, app/components/batch-card.tsx).
  const t = await newTenant();
  for (let i = 1; i <= 30; i++) await coolingBatch(t, { lotCode: `BUSY-${String(i).padStart(2, "0")}`, startedMinutesAgo: 10 + i });
  await signIn(page, t.people.manager.email, t.people.manager.password);
  await page.goto(`/sites/${t.site.id}/station-setup`);
  await page.getByLabel("Station name").fill("Busy pass");
  await page.getByRole("button", { name: "Make this a station" }).click();
  await expect(page.getByRole("heading", { name: "Who is logging?" })).toBeVisible();

  // What the server sends: the first cards rendered, and the data of all of them.
  const html = await (await page.request.get("/station")).text();
  const rendered = html.match(/data-testid="batch-card"/g)?.length ?? 0;
  expect(rendered).toBeLessThan(30);
  expect(html).toContain(`data-cards="30" data-shown="${rendered}"`);
  // The count is of every batch, though the server read back only the first cards' data.
  expect(html).toContain("Cooling now (30)");
  expect(new Set(html.match(/BUSY-\d\d/g)).size).toBe(30);

  const cookName = `cook ${t.org.slug.replace("tenant-", "")}`;
  await tapPerson(page, cookName);
  for (const d of t.people.cook.pin) await page.getByRole("button", { name: d, exact: true }).click();
  await page.getByRole("button", { name: "OK" }).click();
  await expect(page.getByRole("heading", { name: `Logging as ${cookName}` })).toBeVisible();
  // Once live, every batch has its card, the oldest (started first) first.
  await page.reload();
  await page.locator("html[data-hydrated]").waitFor({ state: "attached" });
  await expect(page.getByTestId("batch-card")).toHaveCount(30);
  await expect(page.getByTestId("batch-card").first()).toContainText("BUSY-30");
  await expect(page.getByTestId("batch-card").last()).toContainText("BUSY-01");
  await page.screenshot({ path: `${SCREENS}/station-busy.png`, fullPage: false });
});
