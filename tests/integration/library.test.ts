import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { auditEvents, equipment, products } from "~db/schema";
import { averageProperties, CompositionSchema } from "~/lib/engine/properties";
import { type Client, location, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;

const libraryOf = (tenant: Tenant) => `/sites/${tenant.site.id}/library`;
const managerOf = (tenant: Tenant) => signedIn(tenant.people.manager.email, tenant.people.manager.password);
// React separates neighbouring text nodes with comments in server-rendered HTML.
const read = async (res: Response) => (await res.text()).replaceAll("<!-- -->", "");

const lentilDal = {
  intent: "addProduct",
  name: "Lentil dal",
  water: "72",
  protein: "9",
  fat: "4",
  carbohydrate: "12",
  fibre: "2",
  ash: "1",
  defaultPanSize: "gn-1/2",
  defaultPanDepthMm: "65",
  defaultFillDepthMm: "40",
  defaultMethod: "blast-chiller",
};

const eventsFor = (entityId: string) => db.select().from(auditEvents).where(eq(auditEvents.entityId, entityId));

/** Makes the manager's client a station of the site and signs the cook in on it with their PIN. */
async function cookAtStation(tenant: Tenant, manager: Client) {
  await manager.post(`/sites/${tenant.site.id}/station-setup`, { intent: "create", name: "Line tablet" });
  const res = await manager.post("/station", { intent: "pin", userId: tenant.people.cook.id, pin: tenant.people.cook.pin });
  expect(location(res)).toBe("/station");
  return manager;
}

describe("site library", () => {
  it("a manager adds a product and the library shows the properties the engine will use", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    const res = await manager.post(libraryOf(tenant), lentilDal);
    expect(res.status).toBe(302);
    const [row] = await db.select().from(products).where(and(eq(products.siteId, tenant.site.id), eq(products.name, "Lentil dal")));
    expect(location(res)).toBe(`${libraryOf(tenant)}?done=productAdded&id=${row.id}`);
    expect(row).toMatchObject({
      composition: { water: 72, protein: 9, fat: 4, carbohydrate: 12, fibre: 2, ash: 1 },
      defaultPanSize: "gn-1/2",
      defaultPanDepthMm: 65,
      defaultFillDepthMm: 40,
      defaultMethod: "blast-chiller",
      active: true,
    });
    const [event] = await eventsFor(row.id);
    expect(event).toMatchObject({ action: "product.created", actorUserId: tenant.people.manager.id, siteId: tenant.site.id });

    const page = await read(await manager.get(location(res)!));
    expect(page).toContain("Product added.");
    const expected = averageProperties(CompositionSchema.parse(row.composition), { fromC: 60, toC: 5 });
    const en = (v: number, digits: number) => new Intl.NumberFormat("en", { minimumFractionDigits: digits, maximumFractionDigits: digits }).format(v);
    const item = page.slice(page.indexOf(`aria-label="Lentil dal"`));
    for (const [value, unit] of [
      [en(expected.k, 3), "W/m·K"],
      [en(expected.rho, 0), "kg/m³"],
      [en(expected.cp, 0), "J/kg·K"],
      [en(expected.alpha / 1e-7, 2), "× 10⁻⁷ m²/s"],
    ])
      expect(item).toMatch(new RegExp(`>${value.replace(".", "\\.")}</span> <span[^>]*>${unit}<`));
    expect(page).toContain("GN 1/2, 65 mm deep, food 40 mm deep · Blast chiller");
  });

  it("a carbohydrate figure that includes fibre is stored net of it", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    const res = await manager.post(libraryOf(tenant), { ...lentilDal, name: "Bean salad", carbohydrate: "14", fibre: "2", carbohydrateIncludesFibre: "true" });
    expect(res.status).toBe(302);
    const [row] = await db.select().from(products).where(and(eq(products.siteId, tenant.site.id), eq(products.name, "Bean salad")));
    expect(row.composition).toEqual({ water: 72, protein: 9, fat: 4, carbohydrate: 12, fibre: 2, ash: 1 });
  });

  it("a composition that does not add up is refused with a message on it, and nothing is stored", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    const res = await manager.post(libraryOf(tenant), { ...lentilDal, water: "50", carbohydrate: "8" });
    expect(res.status).toBe(400);
    expect(await read(res)).toContain("These figures add up to 74 %; they must add up to between 95 and 105 %.");
    expect(await db.select().from(products).where(eq(products.name, "Lentil dal")).then((r) => r.filter((p) => p.siteId === tenant.site.id))).toEqual([]);
    expect(await db.select().from(auditEvents).where(and(eq(auditEvents.siteId, tenant.site.id), eq(auditEvents.action, "product.created")))).toEqual([]);
  });

  it("each bad field gets its own message and nothing is stored", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    const res = await manager.post(libraryOf(tenant), { ...lentilDal, name: " ", water: "", fat: "-3", protein: "lots", defaultMethod: "freezer" });
    expect(res.status).toBe(400);
    const html = await read(res);
    expect(html).toMatch(/id="f-name-error"[^>]*>Fill this in\./);
    expect(html).toMatch(/id="f-water-error"[^>]*>Fill this in\./);
    expect(html).toMatch(/id="f-fat-error"[^>]*>Enter a percentage from 0 to 100\./);
    expect(html).toMatch(/id="f-protein-error"[^>]*>Enter a percentage from 0 to 100\./);
    expect(html).toMatch(/id="f-defaultMethod-error"[^>]*>Choose a cooling method from the list\./);

    const tooDeep = await manager.post(libraryOf(tenant), { ...lentilDal, defaultPanDepthMm: "65", defaultFillDepthMm: "90" });
    expect(tooDeep.status).toBe(400);
    expect(await read(tooDeep)).toMatch(/id="f-defaultFillDepthMm-error"[^>]*>Food depth is a whole number of millimetres/);
    const wrongDepth = await manager.post(libraryOf(tenant), { ...lentilDal, defaultPanSize: "gn-1/9", defaultPanDepthMm: "150" });
    expect(await read(wrongDepth)).toMatch(/id="f-defaultPanDepthMm-error"[^>]*>Choose one of the depths this pan comes in\./);
    const fibre = await manager.post(libraryOf(tenant), { ...lentilDal, carbohydrate: "1", fibre: "2", carbohydrateIncludesFibre: "true" });
    expect(await read(fibre)).toMatch(/id="f-fibre-error"[^>]*>Fibre cannot be more than the carbohydrate figure that includes it\./);

    const stored = await db.select().from(products).where(eq(products.siteId, tenant.site.id));
    expect(stored.map((p) => p.name)).toEqual([tenant.product.name]);
  });

  it("a second product with the same name is refused", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    const res = await manager.post(libraryOf(tenant), { ...lentilDal, name: tenant.product.name.toUpperCase() });
    expect(res.status).toBe(400);
    expect(await read(res)).toContain("This site already has one with that name.");
  });

  it("editing a product changes it and records what it was before", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    const form = await read(await manager.get(`${libraryOf(tenant)}?edit=${tenant.product.id}`));
    expect(form).toContain(`Edit ${tenant.product.name}`);
    const res = await manager.post(libraryOf(tenant), { ...lentilDal, intent: "editProduct", productId: tenant.product.id, name: "Chili, less fat", fat: "3", water: "73" });
    expect(location(res)).toBe(`${libraryOf(tenant)}?done=productSaved&id=${tenant.product.id}`);
    const [row] = await db.select().from(products).where(eq(products.id, tenant.product.id));
    expect(row).toMatchObject({ name: "Chili, less fat", composition: { water: 73, fat: 3 }, defaultPanSize: "gn-1/2", defaultMethod: "blast-chiller" });
    const [event] = await eventsFor(tenant.product.id);
    expect(event.action).toBe("product.updated");
    expect(event.data).toMatchObject({ before: { name: tenant.product.name, composition: { water: 76, fat: 5 } }, after: { name: "Chili, less fat" } });
  });

  it("a retired product stays on record, inactive, and is no longer offered to cooks", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    await manager.post(libraryOf(tenant), lentilDal);
    const res = await manager.post(libraryOf(tenant), { intent: "retireProduct", productId: tenant.product.id });
    expect(location(res)).toBe(`${libraryOf(tenant)}?done=productRetired&id=${tenant.product.id}`);
    const [row] = await db.select().from(products).where(eq(products.id, tenant.product.id));
    expect(row.active).toBe(false);
    expect((await eventsFor(tenant.product.id)).map((e) => e.action)).toEqual(["product.retired"]);
    const page = await read(await manager.get(libraryOf(tenant)));
    expect(page).toContain(tenant.product.name);
    expect(page).toContain("Retired");

    const station = await cookAtStation(tenant, manager);
    const start = await read(await station.get("/station/batches/new"));
    expect(start).toContain("Lentil dal");
    expect(start).not.toContain(tenant.product.name);
  });

  it("a retired product can be put back in use", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    await manager.post(libraryOf(tenant), { intent: "retireProduct", productId: tenant.product.id });
    const res = await manager.post(libraryOf(tenant), { intent: "reactivateProduct", productId: tenant.product.id });
    expect(res.status).toBe(302);
    const [row] = await db.select().from(products).where(eq(products.id, tenant.product.id));
    expect(row.active).toBe(true);
    expect((await eventsFor(tenant.product.id)).map((e) => e.action).sort()).toEqual(["product.reactivated", "product.retired"]);
  });

  it("a manager adds equipment, renames it and retires it, each change audited", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    const res = await manager.post(libraryOf(tenant), { intent: "addEquipment", name: "Blast chiller 2", method: "blast-chiller" });
    expect(res.status).toBe(302);
    const [added] = await db.select().from(equipment).where(and(eq(equipment.siteId, tenant.site.id), eq(equipment.name, "Blast chiller 2")));
    expect(added).toMatchObject({ method: "blast-chiller", active: true, learnedBatches: 0, learnedLnS: null });
    expect(await read(await manager.get(libraryOf(tenant)))).toMatch(/>Blast chiller 2<\/a><\/h3>[\s\S]*?not learned yet/);

    expect((await manager.post(libraryOf(tenant), { intent: "renameEquipment", equipmentId: added.id, name: "Blast chiller by the door" })).status).toBe(302);
    expect((await manager.post(libraryOf(tenant), { intent: "retireEquipment", equipmentId: added.id })).status).toBe(302);
    const [after] = await db.select().from(equipment).where(eq(equipment.id, added.id));
    expect(after).toMatchObject({ name: "Blast chiller by the door", active: false });
    const events = await eventsFor(added.id);
    expect(events.map((e) => e.action).sort()).toEqual(["equipment.created", "equipment.renamed", "equipment.retired"]);
    expect(events.find((e) => e.action === "equipment.renamed")!.data).toMatchObject({ before: "Blast chiller 2", after: "Blast chiller by the door" });

    const station = await cookAtStation(tenant, manager);
    expect(await read(await station.get("/station/batches/new"))).not.toContain("Blast chiller by the door");
  });

  it("equipment without a name or with an unknown method is refused and nothing is stored", async () => {
    const tenant = await newTenant();
    const manager = await managerOf(tenant);
    const res = await manager.post(libraryOf(tenant), { intent: "addEquipment", name: "", method: "chest-freezer" });
    expect(res.status).toBe(400);
    const html = await read(res);
    expect(html).toMatch(/id="new-equipment-name-error"[^>]*>Fill this in\./);
    expect(html).toMatch(/id="f-method-error"[^>]*>Choose a cooling method from the list\./);
    const rename = await manager.post(libraryOf(tenant), { intent: "renameEquipment", equipmentId: tenant.walkIn.id, name: "  " });
    expect(rename.status).toBe(400);
    expect(await db.select().from(equipment).where(eq(equipment.siteId, tenant.site.id))).toEqual([expect.objectContaining({ name: tenant.walkIn.name })]);
  });

  it("the surface factor the engine learned shows with its spread and the batches it rests on", async () => {
    const tenant = await newTenant();
    await db.update(equipment).set({ learnedLnS: Math.log(1.25), learnedSd: 0.08, learnedBatches: 7 }).where(eq(equipment.id, tenant.walkIn.id));
    const manager = await managerOf(tenant);
    const page = await read(await manager.get(libraryOf(tenant)));
    const line = new RegExp(`data-testid="learned-${tenant.walkIn.id}"[^>]*>([\\s\\S]*?)</p>`).exec(page)?.[1] ?? "";
    expect(line.replace(/<[^>]+>/g, "")).toBe("Learned surface factor: ×1.25 ± 0.10 · rests on 7 batches");
  });

  it("QA and cooks are refused, and another organisation sees nothing", async () => {
    const tenant = await newTenant();
    const other = await newTenant();
    const qa = await signedIn(tenant.people.qa.email, tenant.people.qa.password);
    const cook = await signedIn(tenant.people.cook.email, tenant.people.cook.password);
    expect((await qa.get(libraryOf(tenant))).status).toBe(403);
    expect((await cook.get(libraryOf(tenant))).status).toBe(403);
    expect((await qa.post(libraryOf(tenant), lentilDal)).status).toBe(403);
    expect((await cook.post(libraryOf(tenant), { intent: "retireProduct", productId: tenant.product.id })).status).toBe(403);

    const stranger = await managerOf(other);
    expect((await stranger.get(libraryOf(tenant))).status).toBe(404);
    expect((await stranger.post(libraryOf(tenant), lentilDal)).status).toBe(404);
    // Their own library cannot reach this site's records either.
    expect((await stranger.post(libraryOf(other), { intent: "retireProduct", productId: tenant.product.id })).status).toBe(404);
    expect((await stranger.post(libraryOf(other), { intent: "renameEquipment", equipmentId: tenant.walkIn.id, name: "Mine now" })).status).toBe(404);
    expect((await stranger.get(`${libraryOf(other)}?edit=${tenant.product.id}`)).status).toBe(404);
    const [product] = await db.select().from(products).where(eq(products.id, tenant.product.id));
    const [walkIn] = await db.select().from(equipment).where(eq(equipment.id, tenant.walkIn.id));
    expect(product.active).toBe(true);
    expect(walkIn.name).toBe(tenant.walkIn.name);
    expect(await db.select().from(products).where(eq(products.siteId, tenant.site.id))).toHaveLength(1);
  });
});
