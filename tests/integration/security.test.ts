import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { sites } from "~db/schema";
import { Client, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

const settings = { name: "Changed", temperatureUnit: "C", timeZone: "UTC", ruleSetCode: "fda-3-501.14-a", readingIntervalMinutes: "30", overdueGraceMinutes: "10", retentionDays: "730" };

describe("request security", () => {
  it("a cross-origin POST is refused before the action runs, and changes nothing", async () => {
    const { people, site } = await newTenant();
    const manager = await signedIn(people.manager.email, people.manager.password);
    const res = await manager.post(`/sites/${site.id}/settings`, settings, { origin: "https://evil.example" });
    // The router's own check answers 400 for page actions; ours answers 403 everywhere else.
    expect([400, 403]).toContain(res.status);
    const [after] = await db.select().from(sites).where(eq(sites.id, site.id));
    expect(after.name).toBe(site.name);
  });

  it("a cross-origin POST to a resource route is refused with 403 by the app's own check", async () => {
    const { people } = await newTenant();
    const manager = await signedIn(people.manager.email, people.manager.password);
    const res = await manager.post("/signout", {}, { origin: "https://evil.example" });
    expect(res.status).toBe(403);
    expect(await res.text()).toBe("Cross-origin request refused");
    expect(await manager.signedInUser()).not.toBeNull();
    const lang = await manager.post("/language", { lang: "es", back: "/" }, { origin: "http://127.0.0.1.evil.example" });
    expect(lang.status).toBe(403);
  });

  it("a cookie-carrying POST without an Origin header is refused too", async () => {
    const { people, site } = await newTenant();
    const manager = await signedIn(people.manager.email, people.manager.password);
    manager.origin = null;
    const res = await manager.post(`/sites/${site.id}/settings`, settings);
    expect(res.status).toBe(403);
  });

  it("pages carry a nonce-based CSP, frame-ancestors none, nosniff and a referrer policy", async () => {
    const res = await new Client().get("/signin");
    const csp = res.headers.get("content-security-policy") ?? "";
    expect(csp).toMatch(/script-src 'self' 'nonce-[A-Za-z0-9+/=]+'/);
    expect(csp).toContain("frame-ancestors 'none'");
    expect(csp).not.toContain("unsafe-eval");
    const nonce = /'nonce-([^']+)'/.exec(csp)![1];
    expect(await res.text()).toContain(`nonce="${nonce}"`);
    expect(res.headers.get("x-content-type-options")).toBe("nosniff");
    expect(res.headers.get("x-frame-options")).toBe("DENY");
    expect(res.headers.get("referrer-policy")).toBe("same-origin");
  });

  it("each page gets a fresh nonce", async () => {
    const a = (await new Client().get("/signin")).headers.get("content-security-policy");
    const b = (await new Client().get("/signin")).headers.get("content-security-policy");
    expect(a).not.toBe(b);
  });

  it("the language switch refuses to redirect off the site", async () => {
    for (const back of ["//evil.example/x", "/\\evil.example", "https://evil.example"]) {
      const res = await new Client().post("/language", { lang: "es", back });
      expect(res.headers.get("location"), back).toBe("/");
    }
    expect((await new Client().post("/language", { lang: "es", back: "/sites?x=1" })).headers.get("location")).toBe("/sites?x=1");
  });
});
