import { demo, expect, SCREENS, signIn, test } from "./fixtures";

const navEn = {
  cook: ["Today", "My account"],
  qa: ["Today", "Review", "Records", "Analytics", "My account"],
  manager: ["Today", "Review", "Records", "Analytics", "Alerts", "Team", "Library", "Site settings", "Set up station", "My account"],
  admin: ["Today", "Review", "Records", "Analytics", "Alerts", "Team", "Library", "Site settings", "Set up station", "Sites", "My account"],
};

for (const role of ["cook", "manager", "qa", "admin"] as const) {
  test(`the ${role} signs in on a tablet and sees their own navigation in English and Spanish`, async ({ page }) => {
    const user = demo("harbor", role);
    await signIn(page, user.email);
    const menu = page.getByRole("navigation", { name: /main menu|menú principal/i });
    const links = () => menu.getByRole("link").allTextContents();
    // The demo cook prefers Spanish; bring every run to English first.
    if ((await page.locator("html").getAttribute("lang")) === "es") {
      await page.getByRole("button", { name: /English/ }).click();
      await expect(page.locator("html")).toHaveAttribute("lang", "en");
    }
    expect(await links()).toEqual(navEn[role]);
    await expect(page.getByTestId("current-site")).toHaveText("Harbor Street Commissary");
    await expect(page.getByRole("heading", { name: "Cooling rule in force" })).toBeVisible();
    await expect(page.getByText("From 135 °F to 70 °F within 2 h")).toBeVisible();
    await page.screenshot({ path: `${SCREENS}/home-${role}-en.png`, fullPage: true });

    await page.getByRole("button", { name: /Español/ }).click();
    await expect(page.locator("html")).toHaveAttribute("lang", "es");
    const es = await links();
    expect(es).toHaveLength(navEn[role].length);
    expect(es).not.toEqual(navEn[role]);
    expect(es[0]).toBe("Hoy");
    await page.screenshot({ path: `${SCREENS}/home-${role}-es.png`, fullPage: true });

    await page.setViewportSize({ width: 820, height: 1180 });
    await expect(menu).toBeVisible();
    // Upright, the menu wraps rather than hiding items off to the side.
    expect(await menu.evaluate((n) => n.scrollWidth - n.clientWidth)).toBeLessThanOrEqual(0);
    expect(await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)).toBeLessThanOrEqual(0);
    await page.screenshot({ path: `${SCREENS}/home-${role}-es-portrait.png`, fullPage: true });
  });
}

test("a wrong password shows a clear message on the sign-in page", async ({ page }) => {
  await page.goto("/signin");
  await page.getByLabel("E-mail").fill(demo("wattle", "cook").email);
  await page.getByLabel("Password").fill("not-my-password");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("alert")).toHaveText("That e-mail and password do not match an active account.");
  await page.screenshot({ path: `${SCREENS}/signin-error.png` });
});

test("the °C site shows its own rule in °C", async ({ page }) => {
  await signIn(page, demo("wattle", "manager").email);
  await expect(page.getByText("From 60 °C to 21 °C within 2 h")).toBeVisible();
  await expect(page.getByText("From 21 °C to 5 °C within 4 h")).toBeVisible();
  await page.getByRole("link", { name: "Team" }).click();
  await expect(page.getByRole("heading", { name: "Team at Wattle Grove Kitchen" })).toBeVisible();
  await page.screenshot({ path: `${SCREENS}/team-manager.png`, fullPage: true });
  await page.getByRole("link", { name: "Site settings" }).click();
  await expect(page.getByLabel("Temperature unit")).toHaveValue("C");
  await page.screenshot({ path: `${SCREENS}/settings-manager.png`, fullPage: true });
});
