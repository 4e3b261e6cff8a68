import { describe, expect, it } from "vitest";
import { Client, location } from "../helpers/client";
import { newTenant } from "../helpers/db";
import { linkIn, mailsTo, waitForMail } from "../helpers/maildev";

describe("password reset by e-mail", () => {
  it("the e-mailed link sets a new password once, and the old one stops working", async () => {
    const { people } = await newTenant();
    const c = new Client();
    const before = Date.now() - 1000;
    const res = await c.post("/forgot-password", { email: people.cook.email });
    expect(res.status).toBe(200);
    expect(await res.text()).toContain("a reset link is on its way");

    const mail = await waitForMail(people.cook.email, { after: before });
    expect(mail.subject).toBe("Reset your Chillwright password");
    const path = linkIn(mail, "/reset-password/");
    expect((await c.get(path)).status).toBe(200);

    const mismatch = await c.post(path, { password: "brand-new-password", confirm: "something-else" });
    expect(mismatch.status).toBe(400);
    expect(await mismatch.text()).toContain("The two passwords differ.");

    const done = await c.post(path, { password: "brand-new-password", confirm: "brand-new-password" });
    expect(location(done)).toBe("/signin?passwordSet=1");

    expect((await new Client().signIn(people.cook.email, people.cook.password)).location).toContain("code=credentials");
    expect((await new Client().signIn(people.cook.email, "brand-new-password")).location).toMatch(/\/$/);

    const reuse = await c.post(path, { password: "another-new-password", confirm: "another-new-password" });
    expect(reuse.status).toBe(400);
    expect(await reuse.text()).toContain("This link is not valid any more");
    expect((await new Client().signIn(people.cook.email, "another-new-password")).location).toContain("code=credentials");
  });

  it("an unknown address gets the same answer and no e-mail", async () => {
    const c = new Client();
    const email = `ghost-${Date.now()}@nowhere.example`;
    const res = await c.post("/forgot-password", { email });
    expect(await res.text()).toContain("a reset link is on its way");
    // A real account asked right after gets its mail; by then the unknown one would have had its own.
    const { people } = await newTenant();
    const before = Date.now();
    await c.post("/forgot-password", { email: people.qa.email });
    await waitForMail(people.qa.email, { after: before });
    expect(await mailsTo(email)).toHaveLength(0);
  });

  it("a made-up token shows that the link is not valid", async () => {
    const res = await new Client().get("/reset-password/not-a-real-token");
    expect(await res.text()).toContain("This link is not valid any more");
  });
});
