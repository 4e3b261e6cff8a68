import { describe, expect, it } from "vitest";
import { getI18n, resolveLanguage } from "~/lib/i18n";
import { en } from "~/lib/locales/en";
import { es } from "~/lib/locales/es";

const keys = (o: object, prefix = ""): string[] =>
  Object.entries(o).flatMap(([k, v]) => (typeof v === "object" && v ? keys(v, `${prefix}${k}.`) : [`${prefix}${k}`]));
const placeholders = (s: string) => [...s.matchAll(/\{\{(\w+)\}\}/g)].map((m) => m[1]).sort();

// Strings that read the same in Spanish: unit abbreviations and names.
const sameInBothLanguages = ["app.name", "home.minutes", "home.days", "station.pin", "settings.fahrenheit", "settings.celsius", "pans.material"];

describe("languages", () => {
  it("Spanish has every English key, and no others", () => {
    expect(keys(es).sort()).toEqual(keys(en).sort());
  });

  it("every Spanish string keeps the placeholders of its English one", () => {
    const lookup = (o: object, k: string) => k.split(".").reduce((a: any, p) => a[p], o) as string;
    for (const k of keys(en)) expect(placeholders(lookup(es, k)), k).toEqual(placeholders(lookup(en, k)));
  });

  it("no Spanish string is left in English", () => {
    const same = keys(en).filter((k) => {
      const a = k.split(".").reduce((o: any, p) => o[p], en);
      const b = k.split(".").reduce((o: any, p) => o[p], es);
      return a === b && /[a-z]{4,}/i.test(a) && !sameInBothLanguages.includes(k);
    });
    expect(same).toEqual([]);
  });

  it("the quick-switch cookie wins over the user's setting, which wins over the browser", () => {
    expect(resolveLanguage("es", "en", "en-US")).toBe("es");
    expect(resolveLanguage(null, "es", "en-US")).toBe("es");
    expect(resolveLanguage(null, null, "fr-FR, es;q=0.8")).toBe("es");
    expect(resolveLanguage("de", null, null)).toBe("en");
  });

  it("translates with interpolation in both languages", () => {
    expect(getI18n("en").t("home.welcome", { name: "Ada" })).toBe("Hello, Ada");
    expect(getI18n("es").t("home.welcome", { name: "Ada" })).toContain("Ada");
    expect(getI18n("es").t("nav.home")).toBe("Hoy");
  });
});
