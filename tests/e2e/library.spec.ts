import { demo, expect, SCREENS, signIn, test } from "./fixtures";

test.use({ viewport: { width: 820, height: 1180 } });

test("a manager on a tablet adds a product to the library and sees the properties the engine will use", async ({ page }) => {
  await signIn(page, demo("wattle", "manager").email);
  await page.getByRole("navigation", { name: "Main menu" }).getByRole("link", { name: "Library" }).click();
  await expect(page.getByRole("heading", { name: "Library at Wattle Grove Kitchen" })).toBeVisible();
  await expect(page.getByRole("heading", { name: "Pan sizes the engine knows" })).toBeVisible();

  // A unique name, so a second run against the same database adds another product.
  const name = `Lentil and pumpkin dal ${Date.now() % 100000}`;
  const form = page.getByRole("region", { name: "Add a product" });
  await form.getByLabel("Product name").fill(name);
  await form.getByLabel("Water", { exact: true }).fill("72");
  await form.getByLabel("Protein", { exact: true }).fill("9");
  await form.getByLabel("Fat", { exact: true }).fill("4");
  await form.getByLabel("Carbohydrate", { exact: true }).fill("10");
  await expect(form.getByText("The figures add up to 95 %.")).toBeVisible();
  await form.getByLabel("Carbohydrate", { exact: true }).fill("5");
  await expect(form.getByText("These figures add up to 90 %; they must add up to between 95 and 105 %.")).toBeVisible();
  await form.getByLabel("Carbohydrate", { exact: true }).fill("12");
  await form.getByLabel("Fibre", { exact: true }).fill("2");
  await form.getByLabel("Ash", { exact: true }).fill("1");
  await expect(form.getByText("The figures add up to 100 %.")).toBeVisible();
  const preview = form.getByTestId("property-preview");
  await expect(preview).toContainText("Conductivity k");
  await expect(preview).toContainText("W/m·K");
  await expect(preview).toContainText("× 10⁻⁷");

  await form.getByLabel("Pan size").selectOption("gn-1/2");
  await form.getByLabel("Pan depth").selectOption("100");
  await form.getByLabel("Food depth (mm)").fill("60");
  await form.getByLabel("Cooling method").selectOption("ice-bath-stirred");
  await page.screenshot({ path: `${SCREENS}/library-form.png`, fullPage: true });
  await form.getByRole("button", { name: "Add product" }).click();

  await expect(page.getByText("Product added.")).toBeVisible();
  const item = page.getByRole("listitem", { name });
  await expect(item).toContainText("In use");
  await expect(item).toContainText("Water 72 · Protein 9 · Fat 4 · Carbohydrate 12 · Fibre 2 · Ash 1 %");
  await expect(item).toContainText("Diffusivity α");
  await expect(item).toContainText("GN 1/2, 100 mm deep, food 60 mm deep · Ice-water bath, food stirred");
  // The form is empty again for the next product.
  await expect(page.getByRole("region", { name: "Add a product" }).getByLabel("Product name")).toHaveValue("");
  await page.screenshot({ path: `${SCREENS}/library.png`, fullPage: true });
});
