import { and, asc, desc, eq, ne, sql } from "drizzle-orm";
import { equipment, products } from "~db/schema";
import { recordAudit } from "./audit.server";
import { db, type Tx } from "./db.server";
import type { SessionUser } from "./guards.server";

type Site = { id: string; organisationId: string };

export type ProductFields = {
  name: string;
  composition: Record<string, number>;
  defaultPanSize: string;
  defaultPanDepthMm: number;
  defaultFillDepthMm: number;
  defaultMethod: string;
};

const actorOf = (u: SessionUser) => ({ kind: "user" as const, userId: u.id });

/** Every product of the site, the ones in use first; retired ones stay because batches name them. */
export function listProducts(siteId: string) {
  return db
    .select({
      id: products.id,
      name: products.name,
      composition: products.composition,
      defaultPanSize: products.defaultPanSize,
      defaultPanDepthMm: products.defaultPanDepthMm,
      defaultFillDepthMm: products.defaultFillDepthMm,
      defaultMethod: products.defaultMethod,
      active: products.active,
    })
    .from(products)
    .where(eq(products.siteId, siteId))
    .orderBy(desc(products.active), asc(products.name));
}

export function listEquipment(siteId: string) {
  return db
    .select({
      id: equipment.id,
      name: equipment.name,
      method: equipment.method,
      learnedLnS: equipment.learnedLnS,
      learnedSd: equipment.learnedSd,
      learnedBatches: equipment.learnedBatches,
      active: equipment.active,
    })
    .from(equipment)
    .where(eq(equipment.siteId, siteId))
    .orderBy(desc(equipment.active), asc(equipment.name));
}

/** Whether another product (or piece of equipment) of the site already has this name, ignoring case. */
export async function isNameTaken(kind: "product" | "equipment", siteId: string, name: string, exceptId?: string) {
  const table = kind === "product" ? products : equipment;
  const [row] = await db
    .select({ id: table.id })
    .from(table)
    .where(and(eq(table.siteId, siteId), sql`lower(${table.name}) = lower(${name})`, exceptId ? ne(table.id, exceptId) : undefined))
    .limit(1);
  return !!row;
}

export async function addProduct(actor: SessionUser, site: Site, fields: ProductFields) {
  return db.transaction(async (tx) => {
    const [row] = await tx.insert(products).values({ siteId: site.id, ...fields }).returning({ id: products.id });
    await audit(tx, actor, site, "product.created", "product", row.id, { after: fields });
    return row.id;
  });
}

/** False when the product is not one of this site's (the route answers 404). */
export async function editProduct(actor: SessionUser, site: Site, productId: string, fields: ProductFields) {
  return db.transaction(async (tx) => {
    const [before] = await tx
      .select({
        name: products.name,
        composition: products.composition,
        defaultPanSize: products.defaultPanSize,
        defaultPanDepthMm: products.defaultPanDepthMm,
        defaultFillDepthMm: products.defaultFillDepthMm,
        defaultMethod: products.defaultMethod,
      })
      .from(products)
      .where(and(eq(products.id, productId), eq(products.siteId, site.id)))
      .for("update");
    if (!before) return false;
    await tx.update(products).set(fields).where(and(eq(products.id, productId), eq(products.siteId, site.id)));
    await audit(tx, actor, site, "product.updated", "product", productId, { before, after: fields });
    return true;
  });
}

export async function setProductActive(actor: SessionUser, site: Site, productId: string, active: boolean) {
  return db.transaction(async (tx) => {
    const [row] = await tx
      .update(products)
      .set({ active })
      .where(and(eq(products.id, productId), eq(products.siteId, site.id)))
      .returning({ name: products.name });
    if (!row) return false;
    await audit(tx, actor, site, active ? "product.reactivated" : "product.retired", "product", productId, { name: row.name });
    return true;
  });
}

export async function addEquipment(actor: SessionUser, site: Site, fields: { name: string; method: string }) {
  return db.transaction(async (tx) => {
    const [row] = await tx.insert(equipment).values({ siteId: site.id, ...fields }).returning({ id: equipment.id });
    await audit(tx, actor, site, "equipment.created", "equipment", row.id, { after: fields });
    return row.id;
  });
}

export async function renameEquipment(actor: SessionUser, site: Site, equipmentId: string, name: string) {
  return db.transaction(async (tx) => {
    const [before] = await tx
      .select({ name: equipment.name })
      .from(equipment)
      .where(and(eq(equipment.id, equipmentId), eq(equipment.siteId, site.id)))
      .for("update");
    if (!before) return false;
    await tx.update(equipment).set({ name }).where(and(eq(equipment.id, equipmentId), eq(equipment.siteId, site.id)));
    await audit(tx, actor, site, "equipment.renamed", "equipment", equipmentId, { before: before.name, after: name });
    return true;
  });
}

export async function setEquipmentActive(actor: SessionUser, site: Site, equipmentId: string, active: boolean) {
  return db.transaction(async (tx) => {
    const [row] = await tx
      .update(equipment)
      .set({ active })
      .where(and(eq(equipment.id, equipmentId), eq(equipment.siteId, site.id)))
      .returning({ name: equipment.name });
    if (!row) return false;
    await audit(tx, actor, site, active ? "equipment.reactivated" : "equipment.retired", "equipment", equipmentId, { name: row.name });
    return true;
  });
}

function audit(tx: Tx, actor: SessionUser, site: Site, action: string, entity: string, entityId: string, data: Record<string, unknown>) {
  return recordAudit(tx, { actor: actorOf(actor), organisationId: site.organisationId, siteId: site.id, action, entity, entityId, data });
}
