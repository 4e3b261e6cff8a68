import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { memberships, users } from "~db/schema";
import { Client, location, signedIn } from "../helpers/client";
import { db, newTenant, tag } from "../helpers/db";
import { linkIn, waitForMail } from "../helpers/maildev";

describe("invitations", () => {
  it("a manager invites a cook by e-mail; the link sets a password and the cook signs in at that site", async () => {
    const { people, site } = await newTenant();
    const manager = await signedIn(people.manager.email, people.manager.password);
    const email = `new-cook-${tag()}@tenant.example`;
    const before = Date.now() - 1000;
    const res = await manager.post(`/sites/${site.id}/team`, { intent: "invite", email, name: "Ines Okafor", role: "cook" });
    expect(res.status).toBe(200);
    expect(await res.text()).toContain(`Invitation sent to ${email}`);

    const mail = await waitForMail(email, { after: before });
    expect(mail.subject).toBe(`You are invited to Chillwright at ${site.name}`);
    expect(mail.text).toContain("as Cook");
    const path = linkIn(mail, "/invite/");

    const invitee = new Client();
    const page = await (await invitee.get(path)).text();
    expect(page).toContain("invited you as Cook");
    const short = await invitee.post(path, { name: "Ines Okafor", password: "short", confirm: "short" });
    expect(short.status).toBe(400);
    expect(await short.text()).toContain("Use at least 10 characters.");
    const accepted = await invitee.post(path, { name: "Ines Okafor", password: "a-fine-password", confirm: "a-fine-password" });
    expect(location(accepted)).toBe("/signin?passwordSet=1");

    const [user] = await db.select().from(users).where(eq(users.email, email));
    expect(user.organisationId).toBe(site.organisationId);
    const [m] = await db.select().from(memberships).where(eq(memberships.userId, user.id));
    expect(m).toMatchObject({ siteId: site.id, role: "cook" });

    const cook = await signedIn(email, "a-fine-password");
    expect(location(await cook.get("/"))).toBe(`/sites/${site.id}`);
    // The link works once.
    expect(await (await new Client().get(path)).text()).toContain("This invitation is not valid any more");
  });

  it("a manager cannot invite an administrator; an administrator can", async () => {
    const { people, site } = await newTenant();
    const manager = await signedIn(people.manager.email, people.manager.password);
    const email = `boss-${tag()}@tenant.example`;
    const res = await manager.post(`/sites/${site.id}/team`, { intent: "invite", email, name: "Would-be Boss", role: "admin" });
    expect(res.status).toBe(403);
    expect(await res.text()).toContain("Only an administrator can give or take the administrator role.");
    const admin = await signedIn(people.admin.email, people.admin.password);
    expect((await admin.post(`/sites/${site.id}/team`, { intent: "invite", email, name: "Real Boss", role: "admin" })).status).toBe(200);
  });

  it("an e-mail of another organisation's account cannot be invited, and nothing is stored", async () => {
    const a = await newTenant();
    const b = await newTenant();
    const manager = await signedIn(a.people.manager.email, a.people.manager.password);
    const res = await manager.post(`/sites/${a.site.id}/team`, { intent: "invite", email: b.people.cook.email, name: "Poached", role: "cook" });
    expect(res.status).toBe(400);
    expect(await res.text()).toContain("That e-mail belongs to an account of another organisation.");
    const rows = await db.select().from(memberships).where(eq(memberships.userId, b.people.cook.id));
    expect(rows).toHaveLength(1);
  });

  it("a bad e-mail gets a message on the field and sends nothing", async () => {
    const { people, site } = await newTenant();
    const manager = await signedIn(people.manager.email, people.manager.password);
    const res = await manager.post(`/sites/${site.id}/team`, { intent: "invite", email: "not-an-email", name: "X", role: "cook" });
    expect(res.status).toBe(400);
    expect(await res.text()).toContain("Enter an e-mail address.");
  });
});
