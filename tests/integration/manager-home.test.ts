import { eq, sql } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { equipment } from "~db/schema";
import { createEquipment } from "~db/factories";
import { afterSweep, coolingBatch, endedBatch, minutesAgo } from "../helpers/batches";
import { signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;

const text = (html: string) => html.replace(/<!-- -->/g, "").replace(/<[^>]+>/g, " ").replace(/\s+/g, " ");
/** The text of the element carrying `data-testid`, up to the next element of the same kind. */
const section = (html: string, testId: string) => {
  const at = html.indexOf(`data-testid="${testId}"`);
  expect(at, testId).toBeGreaterThan(-1);
  const from = html.indexOf(">", at) + 1;
  return text(html.slice(from, html.indexOf("</div>", from) + 6));
};

async function home(t: Tenant, role: "manager" | "qa" | "admin" | "cook" = "manager") {
  const c = await signedIn(t.people[role].email, t.people[role].password);
  const res = await c.get(`/sites/${t.site.id}`);
  expect(res.status).toBe(200);
  return res.text();
}

/** Monday 00:00 of this week in the site's time zone, as PostgreSQL computes it. */
async function weekStart(timeZone: string) {
  const r = await db.execute<{ at: Date }>(sql`select (date_trunc('week', now() at time zone ${timeZone}) at time zone ${timeZone}) as at`);
  return new Date(r.rows[0].at);
}

/** A unit with ended batches whose fitted ln s are `lnS`, oldest first. */
async function unitWith(t: Tenant, name: string, lnS: number[], learnedSd = 0.1) {
  const unit = await createEquipment(db, { siteId: t.site.id, name, method: "walk-in" });
  const mean = lnS.reduce((a, b) => a + b, 0) / lnS.length;
  await db.update(equipment).set({ learnedLnS: mean, learnedSd, learnedBatches: lnS.length }).where(eq(equipment.id, unit.id));
  for (const [i, x] of lnS.entries()) {
    await endedBatch(t, { equipmentId: unit.id, state: "cooled", startedAt: minutesAgo(60 * 24 * (lnS.length - i) + 300), endedAt: minutesAgo(60 * 24 * (lnS.length - i)), fittedLnS: x, lotCode: `${name}-${i}` });
  }
  return unit;
}

describe("manager's home", () => {
  it("counts this week's first-time passes from Monday 00:00 in the site's time zone", async () => {
    const t = await newTenant(); // America/Denver
    const monday = await weekStart("America/Denver");
    const at = (minutes: number) => new Date(monday.getTime() + minutes * 60_000);
    const ended = (state: "cooled" | "cooled_after_reheat" | "discarded", endedAt: Date) => endedBatch(t, { state, endedAt, startedAt: new Date(endedAt.getTime() - 4 * 3600_000) });
    await ended("cooled", at(30));
    await ended("cooled", at(90));
    await ended("cooled_after_reheat", at(120));
    await ended("discarded", at(150));
    // Sunday 23:30 in Denver is already Monday in UTC: it belongs to last week here.
    await ended("cooled", at(-30));
    await ended("discarded", at(-60 * 24));
    await coolingBatch(t); // still cooling: not ended
    const html = await home(t);
    const pass = section(html, "glance-pass");
    expect(pass).toContain("50 %");
    expect(pass).toContain("2 of 4 batches that ended since Monday");
  });

  it("with nothing ended this week says so rather than showing a rate", async () => {
    const t = await newTenant();
    expect(section(await home(t), "glance-pass")).toContain("No batch has ended since Monday.");
  });

  it("counts the batches at risk now and the readings overdue, and lists what is cooling with its forecast", async () => {
    const t = await newTenant();
    await coolingBatch(t, { verdict: "tight", lotCode: "T-1" });
    await coolingBatch(t, { verdict: "behind", lotCode: "B-1", startedMinutesAgo: 20 });
    // A reading every 30 min with 10 min of grace: 50 min since the last is overdue, 35 min is not yet.
    await coolingBatch(t, { lotCode: "A-1", startedMinutesAgo: 50 });
    await coolingBatch(t, { lotCode: "A-2", startedMinutesAgo: 35 });
    // A stage already missed is the record, not a forecast: not counted at risk.
    await coolingBatch(t, { verdict: "behind", lotCode: "M-1", startedMinutesAgo: 150, readings: [[5, 100]] });
    await endedBatch(t, { verdict: "behind", state: "cooled", endedAt: minutesAgo(5), lotCode: "E-1" }); // ended: not at risk
    await afterSweep(t);
    const html = await home(t);
    expect(section(html, "glance-at-risk")).toMatch(/^ ?At risk now 2 /);
    expect(section(html, "glance-overdue")).toMatch(/^ ?Readings overdue 1 /);
    const active = text(html.slice(html.indexOf('data-testid="glance-active"'), html.indexOf("</ul>", html.indexOf('data-testid="glance-active"'))));
    for (const lot of ["T-1", "B-1", "A-1", "A-2", "M-1"]) expect(active).toContain(`lot ${lot}`);
    expect(active).not.toContain("E-1");
    expect(active).toContain("Cutting it close");
    expect(active).toContain("Will miss");
    expect(html).toContain("Predictions are guidance.");
    expect((html.match(/href="\/sites\/[^"]+\/batches\/[0-9a-f-]{36}"/g) ?? []).length).toBe(5);
  });

  it("flags a walk-in whose last three batches cooled clearly slower, and not a steady one", async () => {
    const t = await newTenant();
    const falling = await unitWith(t, "Walk-in North", [0, 0.05, -0.05, 0.02, -0.5, -0.45, -0.55]);
    await unitWith(t, "Walk-in South", [0, 0.05, -0.05, -0.05, 0, -0.1]);
    // Lower by more than ln 1.25 but not by more than this unit's own wide spread: not flagged.
    await unitWith(t, "Walk-in Noisy", [0, 0.05, -0.05, -0.3, -0.3, -0.3], 0.5);
    // Too few earlier batches to tell.
    await unitWith(t, "Walk-in New", [0, -0.6, -0.6, -0.6]);
    for (const role of ["manager", "qa", "admin"] as const) {
      const html = await home(t, role);
      const list = section(html, "glance-equipment");
      expect(list).toContain("Walk-in North: surface factor about 40 % lower than before");
      for (const name of ["Walk-in South", "Walk-in Noisy", "Walk-in New"]) expect(list).not.toContain(name);
      expect(list).toContain("at most 80 % of what it was");
      expect(html).toContain(`/sites/${t.site.id}/equipment/${falling.id}`);
    }
  });

  it("a cook keeps the home they had: no day at a glance", async () => {
    const t = await newTenant();
    await coolingBatch(t, { verdict: "behind" });
    const html = await home(t, "cook");
    expect(html).not.toContain("Today at a glance");
    expect(html).toContain("Cooling rule in force");
  });
});

describe("equipment page", () => {
  it("shows the method's default coefficients, the unit's learned factor and effective coefficients, its trend and what it learned from", async () => {
    const t = await newTenant();
    const unit = await unitWith(t, "Walk-in East", [0, 0.05, -0.05, 0.02, -0.5, -0.45, -0.55]);
    await db.update(equipment).set({ learnedLnS: Math.log(0.8), learnedSd: 0.1, learnedBatches: 7 }).where(eq(equipment.id, unit.id));
    // Ended on this unit without enough readings to fit: nothing learned from it.
    await endedBatch(t, { equipmentId: unit.id, state: "cooled", endedAt: minutesAgo(10), fittedLnS: null, lotCode: "NOFIT-1" });
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const res = await manager.get(`/sites/${t.site.id}/equipment/${unit.id}`);
    expect(res.status).toBe(200);
    const html = await res.text();
    const page = text(html);
    expect(page).toContain("Cooling method: Walk-in cooler");
    expect(page).toContain("Learned factor: ×0.80 ± 0.08, from 7 batches");
    // Walk-in defaults: 4 W/m²K top and sides, 2 on the bottom; × 0.8 here, likely × exp(ln 0.8 ± 0.1).
    const table = text(html.slice(html.indexOf('data-testid="coefficients"'), html.indexOf("</table>", html.indexOf('data-testid="coefficients"'))));
    expect(table).toContain("Top 4.0 3.2 (likely 2.9–3.5)");
    expect(table).toContain("Bottom 2.0 1.6 (likely 1.4–1.8)");
    expect(table).toContain("W/m²K");
    expect(section(html, "trend")).toContain("Cooling slower lately: the last 3 batches averaged ×0.61, the ones before ×1.01.");
    const learned = text(html.slice(html.indexOf('data-testid="learned-from"'), html.indexOf("</table>", html.indexOf('data-testid="learned-from"'))));
    expect(learned).toContain("Walk-in East-6");
    expect(learned).toContain("×0.58");
    expect(learned).not.toContain("NOFIT-1");
    expect(page).toContain("Batches it learned from · 7 batches");
    expect((html.match(/href="\/sites\/[^"]+\/batches\/[0-9a-f-]{36}"/g) ?? []).length).toBe(7);

    // The library links to it.
    expect(await (await manager.get(`/sites/${t.site.id}/library`)).text()).toContain(`/sites/${t.site.id}/equipment/${unit.id}`);
  });

  it("pages a long history; cooks may not open it, and another site's unit is not found", async () => {
    const t = await newTenant();
    const unit = await unitWith(t, "Blast", Array.from({ length: 23 }, () => 0.1));
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const first = text(await (await manager.get(`/sites/${t.site.id}/equipment/${unit.id}`)).text());
    expect(first).toContain("Showing 1–20 of 23");
    const second = text(await (await manager.get(`/sites/${t.site.id}/equipment/${unit.id}?page=2`)).text());
    expect(second).toContain("Showing 21–23 of 23");
    expect((await manager.get(`/sites/${t.site.id}/equipment/${unit.id}?page=oops`)).status).toBe(200);
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    expect((await cook.get(`/sites/${t.site.id}/equipment/${unit.id}`)).status).toBe(403);
    const other = await newTenant();
    expect((await manager.get(`/sites/${t.site.id}/equipment/${other.walkIn.id}`)).status).toBe(404);
    expect((await manager.get(`/sites/${t.site.id}/equipment/nope`)).status).toBe(404);
  });
});
