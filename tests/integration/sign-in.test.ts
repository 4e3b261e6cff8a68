import { describe, expect, it } from "vitest";
import { Client, location, signedIn } from "../helpers/client";
import { newTenant } from "../helpers/db";

describe("sign-in", () => {
  it("a member signs in with e-mail and password and lands on their site", async () => {
    const { people, site } = await newTenant();
    const c = new Client();
    const r = await c.signIn(people.manager.email.toUpperCase(), people.manager.password);
    expect(r.location).toMatch(/\/$/);
    expect((await c.signedInUser())?.email).toBe(people.manager.email);
    const home = await c.get("/");
    expect(location(home)).toBe(`/sites/${site.id}`);
    const cookie = [...c.cookies.keys()].find((k) => k.includes("session-token"));
    expect(cookie).toBeDefined();
  });

  it("the session cookie is HttpOnly and SameSite=Lax", async () => {
    const { people } = await newTenant();
    const c = new Client();
    const page = await c.get("/signin");
    const csrfToken = /name="csrfToken" value="([^"]+)"/.exec(await page.text())![1];
    const res = await c.post("/auth/callback/credentials", { email: people.cook.email, password: people.cook.password, csrfToken, callbackUrl: "/" });
    const session = res.headers.getSetCookie().find((s) => s.startsWith("authjs.session-token="))!;
    expect(session).toMatch(/HttpOnly/i);
    expect(session).toMatch(/SameSite=Lax/i);
  });

  it("a wrong password is refused with a message and no session", async () => {
    const { people } = await newTenant();
    const c = new Client();
    const r = await c.signIn(people.cook.email, "not-the-password");
    expect(r.location).toContain("/signin?error=CredentialsSignin&code=credentials");
    expect(await c.signedInUser()).toBeNull();
    const page = await (await c.get(new URL(r.location).pathname + new URL(r.location).search)).text();
    expect(page).toContain("That e-mail and password do not match an active account.");
  });

  it("a sign-in post without the CSRF token is refused", async () => {
    const { people } = await newTenant();
    const c = new Client();
    await c.get("/signin");
    const res = await c.post("/auth/callback/credentials", { email: people.cook.email, password: people.cook.password, callbackUrl: "/" });
    expect(res.headers.get("location") ?? "").toContain("error=MissingCSRF");
    expect(await c.signedInUser()).toBeNull();
  });

  it("signing out ends the session, even for a copy of the old cookie", async () => {
    const { people } = await newTenant();
    const c = await signedIn(people.qa.email, people.qa.password);
    const stolen = new Client();
    stolen.cookies = new Map(c.cookies);
    expect(location(await stolen.get("/account"))).toBeNull();
    const res = await c.post("/signout", {});
    expect(location(res)).toBe("/signin?signedOut=1");
    expect(await c.signedInUser()).toBeNull();
    expect(location(await c.get("/account"))).toBe("/signin?next=%2Faccount");
    expect(location(await stolen.get("/account"))).toBe("/signin?next=%2Faccount");
  });

  it("parallel wrong guesses cannot get past the per-account limit", async () => {
    const { people } = await newTenant();
    const clients = Array.from({ length: 12 }, () => new Client());
    const results = await Promise.all(clients.map((c, i) => c.signIn(people.admin.email, `guess-${i}`)));
    expect(results.filter((r) => r.location.includes("code=credentials")).length).toBeLessThanOrEqual(5);
    expect((await new Client().signIn(people.admin.email, people.admin.password)).location).toContain("code=rate_limited");
  });

  it("a deactivated account can neither sign in nor keep using its session", async () => {
    const { people, site } = await newTenant();
    const cook = await signedIn(people.cook.email, people.cook.password);
    const manager = await signedIn(people.manager.email, people.manager.password);
    const res = await manager.post(`/sites/${site.id}/team`, { intent: "deactivate", userId: people.cook.id });
    expect(res.status).toBe(200);
    expect(location(await cook.get(`/sites/${site.id}`))).toMatch(/^\/signin/);
    const again = await new Client().signIn(people.cook.email, people.cook.password);
    expect(again.location).toContain("code=credentials");
  });

  it("five failed attempts lock the account for a while, even with the right password next", async () => {
    const { people } = await newTenant();
    const c = new Client();
    for (let i = 0; i < 5; i++) expect((await c.signIn(people.qa.email, `wrong-${i}`)).location).toContain("code=credentials");
    const r = await c.signIn(people.qa.email, people.qa.password);
    expect(r.location).toContain("code=rate_limited");
    // Another address is refused too: the limit is per account.
    const other = await new Client().signIn(people.qa.email, people.qa.password);
    expect(other.location).toContain("code=rate_limited");
  });

  it("only the proxy's own hop counts as the address: a client cannot pick its bucket", async () => {
    const tenant = await newTenant();
    const c = new Client();
    for (let i = 0; i < 30; i++) await c.signIn(`nobody-${i}@nowhere.example`, "whatever-it-is");
    // Prepending a made-up address does not escape the limit of the last hop.
    const sneaky = new Client();
    sneaky.address = `203.0.113.9, ${c.address}`;
    expect((await sneaky.signIn(tenant.people.admin.email, tenant.people.admin.password)).location).toContain("code=rate_limited");
  });

  it("thirty failures from one address lock that address for every account", async () => {
    const tenant = await newTenant();
    const c = new Client();
    for (let i = 0; i < 30; i++) await c.signIn(`nobody-${i}@nowhere.example`, "whatever-it-is");
    expect((await c.signIn(tenant.people.admin.email, tenant.people.admin.password)).location).toContain("code=rate_limited");
    // The same account from another address still signs in.
    expect((await new Client().signIn(tenant.people.admin.email, tenant.people.admin.password)).location).toMatch(/\/$/);
  });
});
