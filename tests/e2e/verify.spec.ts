import { randomUUID } from "node:crypto";
import { and, eq } from "drizzle-orm";
import { products, sites } from "~db/schema";
import { DEMO_PASSWORD } from "../../db/demo";
import { signedIn } from "../helpers/client";
import { db } from "../helpers/db";
import { demo, expect, SCREENS, signIn, test } from "./fixtures";

const ago = (min: number) => new Date(Date.now() - min * 60_000).toISOString();

/** A batch of chili the cook cooled at Harbor Street, moved to an ice bath on the way. */
async function finishedBatch() {
  const [row] = await db
    .select({ productId: products.id, siteId: sites.id })
    .from(products)
    .innerJoin(sites, eq(sites.id, products.siteId))
    .where(and(eq(sites.name, "Harbor Street Commissary"), eq(products.name, "Smoky black-bean chili")));
  const cook = await signedIn(demo("harbor", "cook").email, DEMO_PASSWORD);
  const res = await cook.request("/api/v1/batches", {
    json: { clientId: randomUUID(), productId: row.productId, lotCode: "SIGN-1", pan: { size: "gn-1/1", depthMm: 100, fillDepthMm: 75 }, method: "walk-in", start: { value: 150, unit: "F", takenAt: ago(150) } },
  });
  const id = (await res.json()).batch.id as string;
  const reading = (value: number, takenAt?: string) => cook.request(`/api/v1/batches/${id}/readings`, { json: { clientId: randomUUID(), value, unit: "F", takenAt } });
  await reading(100, ago(100));
  await reading(68, ago(60));
  await cook.request(`/api/v1/batches/${id}/actions`, { json: { kind: "change_method", clientId: randomUUID(), method: "ice-bath-stirred" } });
  await reading(40);
  return `/sites/${row.siteId}/batches/${id}`;
}

test("a manager confirms the corrective action on a finished batch and signs its record", async ({ page }) => {
  const path = await finishedBatch();
  const manager = demo("harbor", "manager");
  await signIn(page, manager.email);
  await page.goto(path);
  // Another journey may have left this demo manager on Spanish; this one reads the English words.
  if ((await page.locator("html").getAttribute("lang")) === "es") {
    await page.getByRole("button", { name: /English/ }).click();
    await expect(page.locator("html")).toHaveAttribute("lang", "en");
  }
  await expect(page.getByRole("heading", { name: "Smoky black-bean chili" })).toBeVisible();
  await expect(page.getByTestId("verification-status")).toHaveText("Waiting for a signature");
  await expect(page.getByText("Confirm the corrective action below first")).toBeVisible();
  await expect(page.getByRole("region", { name: "Stages" }).getByText(/Predictions are guidance/)).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/verify-before.png`, fullPage: true });

  const action = page.getByTestId("corrective-action");
  await action.getByLabel("Note (optional)").fill("Ice bath was ready; probe checked.");
  await action.getByRole("button", { name: "Confirm this action" }).click();
  await expect(page.getByText("Corrective action confirmed.")).toBeVisible();
  await expect(action).toContainText(`Confirmed by ${manager.name}`);

  // Signing without agreeing to the statement is refused with a message on the box.
  await page.getByRole("button", { name: "Sign the record" }).click();
  await expect(page.getByText("Tick the box to agree with the statement before signing.")).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/verify-error.png`, fullPage: true });

  await page.getByLabel("I have read the record and agree with the statement above").check();
  await page.getByLabel("Comment (optional)").fill("Record complete; the move to the ice bath saved the batch.");
  await page.screenshot({ path: `${SCREENS}/verify-form.png`, fullPage: true });
  await page.getByRole("button", { name: "Sign the record" }).click();
  await expect(page.getByTestId("verification-status")).toHaveText("Signed");
  await expect(page.getByTestId("signature")).toContainText(`Signed by ${manager.name}`);
  await expect(page.getByTestId("signature")).toContainText("the move to the ice bath saved the batch");
  await expect(page.getByRole("button", { name: "Sign the record" })).toHaveCount(0);
  await page.screenshot({ path: `${SCREENS}/verify-signed.png`, fullPage: true });
});
