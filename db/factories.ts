import { hashSecret } from "../app/server/crypto.server";
import type { Db, Tx } from "./connect";
import { equipment, memberships, organisations, products, sites, users } from "./schema";

type Role = "cook" | "manager" | "qa" | "admin";

// Builders shared by the seed and the tests, so both make records the same way the app does.

export async function createOrganisation(db: Db | Tx, input: { name: string; slug: string }) {
  const [org] = await db.insert(organisations).values(input).returning();
  return org;
}

export async function createSite(
  db: Db | Tx,
  input: {
    organisationId: string;
    name: string;
    timeZone: string;
    temperatureUnit: "F" | "C";
    ruleSetCode: string;
    readingIntervalMinutes?: number;
  },
) {
  const [site] = await db.insert(sites).values(input).returning();
  return site;
}

export async function createUser(
  db: Db | Tx,
  input: {
    organisationId: string;
    name: string;
    email: string;
    password?: string;
    pin?: string;
    language?: "en" | "es";
    active?: boolean;
  },
) {
  const [user] = await db
    .insert(users)
    .values({
      organisationId: input.organisationId,
      name: input.name,
      email: input.email.toLowerCase(),
      passwordHash: input.password ? await hashSecret(input.password) : null,
      pinHash: input.pin ? await hashSecret(input.pin) : null,
      language: input.language ?? "en",
      active: input.active ?? true,
    })
    .returning();
  return user;
}

export async function addMembership(db: Db | Tx, userId: string, siteId: string, role: Role) {
  const [m] = await db.insert(memberships).values({ userId, siteId, role }).returning();
  return m;
}

/** A whole organisation with one site and one user of each role, for tests. */
export async function createTenant(db: Db | Tx, tag: string, password = "a-long-test-password") {
  const org = await createOrganisation(db, { name: `Tenant ${tag}`, slug: `tenant-${tag}` });
  const site = await createSite(db, {
    organisationId: org.id,
    name: `Kitchen ${tag}`,
    timeZone: "America/Denver",
    temperatureUnit: "F",
    ruleSetCode: "fda-3-501.14-a",
  });
  const people = {} as Record<Role, { id: string; email: string; password: string; pin: string }>;
  const pins: Record<Role, string> = { cook: "2468", manager: "1357", qa: "8642", admin: "9753" };
  for (const role of ["cook", "manager", "qa", "admin"] as const) {
    const email = `${role}.${tag}@tenant.example`;
    const user = await createUser(db, { organisationId: org.id, name: `${role} ${tag}`, email, password, pin: pins[role] });
    await addMembership(db, user.id, site.id, role);
    people[role] = { id: user.id, email, password, pin: pins[role] };
  }
  const product = await createProduct(db, { siteId: site.id, name: `Chili ${tag}`, composition: { water: 76, protein: 8, fat: 5, carbohydrate: 9, fibre: 1, ash: 1 }, defaultPanSize: "gn-1/1", defaultPanDepthMm: 100, defaultFillDepthMm: 75 });
  const walkIn = await createEquipment(db, { siteId: site.id, name: `Walk-in ${tag}`, method: "walk-in" });
  return { org, site, people, product, walkIn };
}

export async function createProduct(
  db: Db | Tx,
  input: { siteId: string; name: string; composition: Record<string, number>; defaultPanSize?: string; defaultPanDepthMm?: number; defaultFillDepthMm?: number; defaultMethod?: string },
) {
  const [p] = await db.insert(products).values(input).returning();
  return p;
}

export async function createEquipment(db: Db | Tx, input: { siteId: string; name: string; method: string }) {
  const [e] = await db.insert(equipment).values(input).returning();
  return e;
}

/** The demo library on one site: recipes and cooling equipment. */
export async function addLibrary(db: Db | Tx, siteId: string, library: { products: Parameters<typeof createProduct>[1][]; equipment: Parameters<typeof createEquipment>[1][] }) {
  for (const p of library.products) await createProduct(db, { ...p, siteId });
  for (const e of library.equipment) await createEquipment(db, { ...e, siteId });
}
