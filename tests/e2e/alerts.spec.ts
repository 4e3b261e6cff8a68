import { randomUUID } from "node:crypto";
import { signedIn } from "../helpers/client";
import { newTenant } from "../helpers/db";
import { linkIn, mailsTo } from "../helpers/maildev";
import { expect, SCREENS, signIn, test } from "./fixtures";

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

test("a manager gets the missed-stage e-mail, opens its link, acknowledges it, and verifies the batch once it is discarded", async ({ page }) => {
  test.setTimeout(90_000);
  const t = await newTenant();
  const cook = await signedIn(t.people.cook.email, t.people.cook.password);
  // Stage 1 (2 h to 70 °F) ends 3 s from now, and the food is still at 100 °F.
  const started = await cook.request("/api/v1/batches", {
    json: {
      clientId: randomUUID(),
      productId: t.product.id,
      lotCode: "ALERT-7",
      pan: { size: "gn-1/1", depthMm: 100, fillDepthMm: 75 },
      method: "walk-in",
      start: { value: 150, unit: "F", takenAt: new Date(Date.now() - 2 * 3600_000 + 3000).toISOString() },
    },
  });
  const batchId = (await started.json()).batch.id as string;
  await cook.request(`/api/v1/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 100, unit: "F" } });

  // The sweep raises the missed stage at its deadline; the e-mail arrives through maildev.
  let mail;
  for (let i = 0; i < 100 && !mail; i++) {
    mail = (await mailsTo(t.people.manager.email)).find((m) => /Stage 1 missed/.test(m.subject) && m.subject.includes("ALERT-7"));
    if (!mail) await sleep(200);
  }
  expect(mail, "the missed-stage e-mail").toBeTruthy();
  expect(mail!.text).toMatch(/Deadline: .*M[SD]T/);
  const link = new URL(mail!.text.match(/https?:\/\/\S+\?alert=\S+/)![0]);
  expect(linkIn(mail!, `/sites/${t.site.id}/batches/${batchId}`)).toBe(`/sites/${t.site.id}/batches/${batchId}`);

  await signIn(page, t.people.manager.email, t.people.manager.password);
  await page.goto(link.pathname + link.search);
  const alert = page.getByTestId("batch-alert").filter({ hasText: "Stage missed" });
  await expect(alert).toBeVisible();
  await expect(page.getByText(/Predictions are guidance/).first()).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/alert-batch.png`, fullPage: true });
  await alert.getByRole("button", { name: "Acknowledge" }).click();
  await expect(page.getByText("Acknowledged: escalation stopped.")).toBeVisible();
  await expect(page.getByTestId("batch-alert").filter({ hasText: "Stage missed" })).toContainText(`Acknowledged by manager ${t.people.manager.email.split(".")[1].split("@")[0]}`);

  // The cook discards the batch; the manager confirms that and signs the record.
  const discard = await cook.request(`/api/v1/batches/${batchId}/actions`, { json: { kind: "discard", clientId: randomUUID(), quantityKg: 6, reason: "Missed stage 1; no time to reheat" } });
  expect(discard.status).toBe(201);
  await page.reload();
  await expect(page.getByTestId("verification-status")).toHaveText("Waiting for a signature");
  const action = page.getByTestId("corrective-action");
  await action.getByRole("button", { name: "Confirm this action" }).click();
  await expect(page.getByText("Corrective action confirmed.")).toBeVisible();
  await page.getByLabel("I have read the record and agree with the statement above").check();
  await page.getByRole("button", { name: "Sign the record" }).click();
  await expect(page.getByTestId("verification-status")).toHaveText("Signed");
  await page.screenshot({ path: `${SCREENS}/alert-batch-signed.png`, fullPage: true });

  // The alerts screen shows the event, who it went to and that it was acknowledged.
  await page.goto(`/sites/${t.site.id}/alerts`);
  const row = page.getByTestId("alert-event").filter({ hasText: "Stage missed" });
  await expect(row).toContainText("ALERT-7");
  await expect(row).toContainText("sent");
  await expect(row).toContainText("Acknowledged by");
  await page.screenshot({ path: `${SCREENS}/alerts.png`, fullPage: true });
});
