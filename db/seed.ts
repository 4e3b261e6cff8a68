import { eq } from "drizzle-orm";
import { connect } from "./connect";
import { DEMO_PASSWORD, demoEquipment, demoOrganisation, demoProducts, demoSites, demoUsers } from "./demo";
import { addLibrary, addMembership, createOrganisation, createSite, createUser } from "./factories";
import { auditEvents, organisations, products, sites } from "./schema";

// `tsx db/seed.ts` builds the demo scenario once; `--print` lists the demo sign-ins.
if (process.argv.includes("--print")) {
  console.log("\n  Demo sign-ins (password for all: " + DEMO_PASSWORD + ")\n");
  console.log("  " + "site".padEnd(26) + "role".padEnd(9) + "e-mail".padEnd(32) + "PIN");
  for (const u of demoUsers) {
    const site = demoSites.find((s) => s.key === u.site)!;
    console.log("  " + site.name.padEnd(26) + u.role.padEnd(9) + u.email.padEnd(32) + u.pin);
  }
  process.exit(0);
}

const { pool, db } = connect();
const existing = await db.select({ id: organisations.id }).from(organisations).where(eq(organisations.slug, demoOrganisation.slug));
if (existing.length > 0) {
  console.log("  demo scenario already present");
} else {
  await db.transaction(async (tx) => {
    const org = await createOrganisation(tx, demoOrganisation);
    const siteIds: Record<string, string> = {};
    for (const { key, ...s } of demoSites) {
      siteIds[key] = (await createSite(tx, { organisationId: org.id, ...s })).id;
    }
    for (const u of demoUsers) {
      const user = await createUser(tx, {
        organisationId: org.id,
        name: u.name,
        email: u.email,
        password: DEMO_PASSWORD,
        pin: u.pin,
        language: u.language,
      });
      await addMembership(tx, user.id, siteIds[u.site], u.role);
    }
    await tx.insert(auditEvents).values({
      organisationId: org.id,
      actorKind: "system",
      actorLabel: "seed",
      action: "demo.seeded",
      entity: "organisation",
      entityId: org.id,
    });
  });
  console.log("  demo scenario created");
}
// The library arrived after the first demo databases: add it to any demo site that has none.
const demoSiteRows = await db
  .select({ id: sites.id })
  .from(sites)
  .innerJoin(organisations, eq(organisations.id, sites.organisationId))
  .where(eq(organisations.slug, demoOrganisation.slug));
for (const site of demoSiteRows) {
  const has = await db.select({ id: products.id }).from(products).where(eq(products.siteId, site.id)).limit(1);
  if (has.length === 0) await addLibrary(db, site.id, { products: demoProducts.map((p) => ({ ...p, siteId: site.id })), equipment: demoEquipment.map((e) => ({ ...e, siteId: site.id })) });
}
await pool.end();
