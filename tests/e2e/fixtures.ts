import { test as base, expect, type Page } from "@playwright/test";
import { DEMO_PASSWORD, demoUsers } from "../../db/demo";

export const SCREENS = "test-results/screens";

/** Every page fails its test on an unexpected console error. */
export const test = base.extend<{ page: Page }>({
  page: async ({ page }, use) => {
    const errors: string[] = [];
    page.on("console", (m) => {
      // A 4xx answer to a form is the app's deliberate "fix this field"; the page shows why.
      // An offline tablet's failed sends are expected too: the outbox keeps the entry.
      if (m.type() === "error" && !/Failed to load resource: (the server responded with a status of 4\d\d|net::ERR_INTERNET_DISCONNECTED)/.test(m.text())) errors.push(m.text());
    });
    page.on("pageerror", (e) => errors.push(e.message));
    await use(page);
    expect(errors, "console errors").toEqual([]);
  },
});
export { expect };

export const demo = (site: "harbor" | "wattle", role: "cook" | "manager" | "qa" | "admin") => demoUsers.find((u) => u.site === site && u.role === role)!;

/** Taps a person on the station once the page is interactive (a tap before hydration would be lost). */
export async function tapPerson(page: Page, name: string) {
  const button = page.getByRole("button", { name: new RegExp(name) });
  await button.waitFor();
  await page.locator("html[data-hydrated]").waitFor({ state: "attached" });
  await button.click();
}

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.goto("/signin");
  await page.getByLabel(/e-mail|correo/i).fill(email);
  await page.getByLabel(/^(password|contraseña)$/i).fill(password);
  await page.getByRole("button", { name: /^(sign in|iniciar sesión|entrar)$/i }).click();
  await page.waitForURL(/\/sites\//);
}
