import { type Page } from "@playwright/test";
import { sharedKitchen } from "../helpers/share";
import { expect, SCREENS, signIn, test } from "./fixtures";

const tablet = { width: 820, height: 1180 };
test.use({ viewport: tablet });

/** A page's console errors, for a page made outside the fixture (a fresh context). */
function watchErrors(page: Page) {
  const errors: string[] = [];
  page.on("console", (m) => {
    if (m.type() === "error" && !/Failed to load resource: the server responded with a status of 4\d\d/.test(m.text())) errors.push(m.text());
  });
  page.on("pageerror", (e) => errors.push(e.message));
  return errors;
}

test("QA shares a period with an inspector, who reads it on a tablet with no account, until QA withdraws the link", async ({ page, browser }) => {
  const k = await sharedKitchen();
  await signIn(page, k.t.people.qa.email, k.t.people.qa.password);
  await page.getByRole("navigation", { name: "Main menu" }).getByRole("link", { name: "Records" }).click();
  await page.getByRole("main").getByRole("link", { name: "Share records" }).click();
  await expect(page.getByRole("heading", { name: `Share records at ${k.t.site.name}` })).toBeVisible();
  await page.locator("html[data-hydrated]").waitFor({ state: "attached" });

  await page.getByLabel("Who it is for").fill("County health inspection");
  await page.getByLabel("From (site date)").fill(k.range.from);
  await page.getByLabel("To (site date)").fill(k.range.to);
  await page.getByRole("spinbutton", { name: "In this many days" }).fill("10");
  await page.screenshot({ path: `${SCREENS}/sharing-form.png`, fullPage: true });
  await page.getByRole("button", { name: "Make the link" }).click();
  await expect(page.getByText("The link is made. Copy it now: it will not be shown again.")).toBeVisible();
  const link = await page.getByTestId("new-share-link").inputValue();
  expect(link).toMatch(/\/shared\/[A-Za-z0-9_-]{43}$/);
  await page.getByRole("button", { name: "Copy the link" }).click();
  await expect(page.getByTestId("share-link")).toHaveCount(1);
  await expect(page.getByTestId("share-status")).toHaveText("active");
  await page.screenshot({ path: `${SCREENS}/sharing-created.png`, fullPage: true });

  // The inspector: a fresh browser, no cookies, a tablet.
  const context = await browser.newContext({ viewport: tablet, hasTouch: true });
  expect(await context.cookies()).toEqual([]);
  const inspector = await context.newPage();
  const errors = watchErrors(inspector);
  await inspector.goto(link);
  await expect(inspector.getByTestId("read-only")).toHaveText("Read-only");
  await expect(inspector.getByTestId("share-header")).toContainText(k.t.site.name);
  await expect(inspector.getByTestId("share-header")).toContainText(`Records from ${k.range.from} to ${k.range.to}`);
  await expect(inspector.getByTestId("caution")).toContainText("The probe reading is the record");
  const rows = inspector.getByTestId("record-row");
  await expect(rows).toHaveCount(1);
  await expect(rows.first()).toContainText(k.batch.lot);
  await expect(rows.first()).toContainText("Cooled in time");
  await expect(inspector.getByText(k.old.lot)).toHaveCount(0);
  await inspector.screenshot({ path: `${SCREENS}/share-records.png`, fullPage: true });
  // On paper: no buttons or downloads, the header and the list.
  await inspector.emulateMedia({ media: "print" });
  await expect(inspector.getByRole("button", { name: "Print" })).toBeHidden();
  await expect(inspector.getByRole("heading", { name: "Downloads" })).toBeHidden();
  await inspector.screenshot({ path: `${SCREENS}/share-records-print.png`, fullPage: true });
  await inspector.emulateMedia({ media: "screen" });
  // The paper log of the shared dates.
  await inspector.getByTestId("shared-print-link").click();
  await expect(inspector.getByTestId("print-row")).toHaveCount(1);
  await inspector.screenshot({ path: `${SCREENS}/share-print-log.png`, fullPage: true });
  await inspector.goBack();

  await rows.first().getByRole("link", { name: k.t.product.name }).click();
  await expect(inspector).toHaveURL(new RegExp(`/batches/${k.batch.id}$`));
  await expect(inspector.getByRole("heading", { name: "Cooling curve" }).first()).toBeVisible();
  await expect(inspector.locator("svg").filter({ has: inspector.locator("circle") }).first()).toBeVisible();
  const thumb = inspector.getByRole("img", { name: "Photo" }).first();
  await expect(thumb).toBeVisible();
  await expect.poll(() => thumb.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth)).toBeGreaterThan(0);
  await expect(inspector.getByRole("button", { name: /sign|confirm|acknowledge/i })).toHaveCount(0);
  await inspector.screenshot({ path: `${SCREENS}/share-batch.png`, fullPage: true });

  await inspector.getByRole("link", { name: /All records of the period/ }).click();
  const [download] = await Promise.all([inspector.waitForEvent("download"), inspector.getByRole("link", { name: "Workbook (.xlsx)" }).click()]);
  expect(download.suggestedFilename()).toMatch(new RegExp(`${k.range.from}-to-${k.range.to}\\.xlsx$`));
  expect(await download.failure()).toBeNull();

  // QA sees the uses, then withdraws the link.
  await page.reload();
  await expect(page.getByTestId("share-uses")).toContainText(/^[3-9]/);
  await page.getByText(/Uses of “County health inspection”/).click();
  await expect(page.getByTestId("share-use").first()).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/sharing-uses.png`, fullPage: true });
  await page.getByRole("button", { name: "Withdraw" }).click();
  await expect(page.getByText("The link is withdrawn: it no longer opens anything.")).toBeVisible();
  await expect(page.getByTestId("share-status")).toHaveText("withdrawn");

  await inspector.reload();
  await expect(inspector.getByRole("heading", { name: "This link was withdrawn" })).toBeVisible();
  await expect(inspector.getByText(k.t.product.name)).toHaveCount(0);
  await expect(inspector.getByText(k.t.site.name)).toHaveCount(0);
  await inspector.screenshot({ path: `${SCREENS}/share-revoked.png`, fullPage: true });
  await context.close();
  expect(errors, "console errors of the inspector's page").toEqual([]);
});
