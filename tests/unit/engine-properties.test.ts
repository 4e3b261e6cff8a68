import { describe, expect, it } from "vitest";
import {
  CompositionSchema,
  DirectPropertiesSchema,
  FoodThermalInputSchema,
  averageProperties,
  evaluateProperties,
  resolveProperties,
  type Composition,
} from "~/lib/engine/properties";
import { fieldErrors } from "~/lib/forms";
import choiOkos from "../../reference/choi-okos-1986.json";

const relative = (actual: number, expected: number) => Math.abs(actual / expected - 1);
const water: Composition = { water: 100, protein: 0, fat: 0, carbohydrate: 0, fibre: 0, ash: 0 };
const poly = (c: number[], t: number) => c[0] + c[1] * t + c[2] * t * t;

// Choi & Okos (1986), water polynomials as printed in REFERENCES (ASHRAE Handbook—Refrigeration,
// "Thermal Properties of Foods"), typed here independently of reference/choi-okos-1986.json.
const waterK = [0.57109, 1.7625e-3, -6.7036e-6];
const waterRho = [997.18, 3.1439e-3, -3.7574e-3];
const waterCpKJ = [4.1762, -9.0864e-5, 5.4731e-6];

describe("Choi & Okos properties from composition", () => {
  it("the reference data carries the Choi & Okos coefficients for every component", () => {
    // Choi & Okos (1986), as reproduced in ASHRAE Handbook—Refrigeration, "Thermal Properties of Foods"
    expect(choiOkos.components.water).toEqual({ k: waterK, rho: waterRho, cp: waterCpKJ });
    expect(choiOkos.components.protein).toEqual({
      k: [0.17881, 1.1958e-3, -2.7178e-6],
      rho: [1329.9, -0.5184, 0],
      cp: [2.0082, 1.2089e-3, -1.3129e-6],
    });
    expect(choiOkos.components.fat.k).toEqual([0.18071, -2.7604e-4, -1.7749e-7]);
    expect(choiOkos.components.carbohydrate.rho).toEqual([1599.1, -0.31046, 0]);
    expect(choiOkos.components.fibre.cp).toEqual([1.8459, 1.8306e-3, -4.6509e-6]);
    expect(choiOkos.components.ash.k).toEqual([0.32962, 1.4011e-3, -2.9069e-6]);
  });

  it("lean lamb has cp ≈ 3.59 kJ/kg·K at 41 °F (5 °C), within 1 %", () => {
    // ASHRAE Handbook—Refrigeration, Thermal Properties of Foods, worked example: 73.42 % water,
    // 20.29 % protein, 5.25 % fat, 1.06 % ash; cp ≈ 0.858 Btu/lb·°F = 3.59 kJ/kg·K
    const lamb = CompositionSchema.parse({ water: 73.42, protein: 20.29, fat: 5.25, ash: 1.06 });
    const { cp } = evaluateProperties(lamb, 5);
    expect(relative(cp, 3590)).toBeLessThan(0.01);
    expect(relative(cp, 0.858 * 4186.8)).toBeLessThan(0.01); // 1 Btu/lb·°F = 4186.8 J/kg·K (IT calorie basis)
  });

  it("water alone reproduces the Choi & Okos water polynomials, cp converted from kJ to J", () => {
    for (const t of [-1, 0, 5, 20, 57, 100]) {
      const p = evaluateProperties(water, t);
      expect(p.k).toBeCloseTo(poly(waterK, t), 12);
      expect(p.rho).toBeCloseTo(poly(waterRho, t), 9);
      expect(p.cp).toBeCloseTo(1000 * poly(waterCpKJ, t), 8);
      expect(p.alpha).toBeCloseTo(p.k / (p.rho * p.cp), 20);
    }
  });

  it("water at 20 °C lands near the steam-table values: k within 1 %, ρ and cp within 0.5 %", () => {
    // IAPWS formulations for liquid water at 20 °C, 1 atm (memory): k 0.598 W/m·K, ρ 998.2 kg/m³,
    // cp 4182 J/kg·K. The Choi & Okos k fit runs about 0.9 % high here (0.6037).
    const p = evaluateProperties(water, 20);
    expect(relative(p.k, 0.598)).toBeLessThan(0.01);
    expect(relative(p.rho, 998.2)).toBeLessThan(0.005);
    expect(relative(p.rho, 997)).toBeLessThan(0.005);
    expect(relative(p.cp, 4182)).toBeLessThan(0.005);
  });

  it("mashed potato (78 % water) has a computed diffusivity within 15 % of the measured 1.23e-7 m²/s", () => {
    // ASHRAE Handbook—Refrigeration, Thermal Properties of Foods, measured diffusivity of mashed cooked
    // potato: 1.23e-7 m²/s at 78 % water, 5 °C. Composition: memory (see reference/choi-okos-1986.json).
    const potato = CompositionSchema.parse({
      water: 78,
      protein: 2,
      fat: 0.1,
      carbohydrate: 18.8,
      fibre: 1.8,
      ash: 1.1,
      carbohydrateIncludesFibre: true,
    });
    const { alpha } = evaluateProperties(potato, 5);
    expect(relative(alpha, 1.23e-7)).toBeLessThan(0.15);
    expect(alpha).toBeGreaterThan(1.23e-7); // the parallel model for k errs high, as expected for it
  });

  it("every measured water-rich food in the reference data lands within 15 % of its measured diffusivity", () => {
    // ASHRAE Handbook—Refrigeration, measured diffusivities (beef round, codfish, halibut, mashed potato);
    // compositions and some temperatures are memory, marked in the data.
    for (const food of choiOkos.checks.measuredDiffusivity.foods) {
      const c = CompositionSchema.parse({ ...food.composition, carbohydrateIncludesFibre: food.carbohydrateIncludesFibre });
      expect(Math.abs(c.water - food.waterPercent)).toBeLessThan(0.5);
      const { alpha } = evaluateProperties(c, food.temperatureC);
      expect(relative(alpha, food.alpha), food.name).toBeLessThan(0.15);
    }
  });

  it("properties are refused below −1 °C (freezing is out of scope) and above 150 °C", () => {
    expect(() => evaluateProperties(water, -1.5)).toThrow(/freezing is out of scope/);
    expect(() => evaluateProperties(water, 151)).toThrow(/150 °C/);
    expect(() => averageProperties(water, { fromC: 60, toC: -5 })).toThrow(/freezing/);
    expect(() => evaluateProperties(water, -1)).not.toThrow();
  });
});

describe("composition input", () => {
  it("normalises a composition that adds up to 95–105 % to exactly 100 %", () => {
    const c = CompositionSchema.parse({ water: 80, protein: 12, fat: 5, carbohydrate: 4, ash: 1 }); // 102 %
    const total = c.water + c.protein + c.fat + c.carbohydrate + c.fibre + c.ash;
    expect(total).toBeCloseTo(100, 12);
    expect(c.water).toBeCloseTo((80 * 100) / 102, 12);
    expect(c.fibre).toBe(0);
  });

  it("total carbohydrate that includes fibre has the fibre subtracted, so fibre is not counted twice", () => {
    const table = { water: 78, protein: 2, fat: 0.1, carbohydrate: 18.8, fibre: 1.8, ash: 1.1 };
    const net = CompositionSchema.parse({ ...table, carbohydrateIncludesFibre: true });
    expect(net.carbohydrate).toBeCloseTo(17, 10);
    expect(net.fibre).toBeCloseTo(1.8, 10);
    expect(net.water).toBeCloseTo(78, 10);
    const doubled = CompositionSchema.parse(table); // 101.8 %: accepted, but carbohydrate and fibre overlap
    expect(doubled.carbohydrate).toBeCloseTo((18.8 * 100) / 101.8, 10);
  });

  it("fibre larger than a total carbohydrate that includes it is refused on the fibre field", () => {
    const r = CompositionSchema.safeParse({ water: 80, protein: 15, carbohydrate: 2, fibre: 3, carbohydrateIncludesFibre: true });
    expect(r.success).toBe(false);
    expect(fieldErrors(r.error!)).toEqual({ fibre: expect.stringMatching(/cannot exceed total carbohydrate/) });
  });

  it("bad components give one message per field", () => {
    const r = CompositionSchema.safeParse({ water: -3, protein: 120, fat: "lots", ash: 2 });
    expect(r.success).toBe(false);
    expect(fieldErrors(r.error!)).toEqual({
      water: "Water cannot be negative",
      protein: "Protein cannot be more than 100 %",
      fat: "Fat must be a number (percent by mass)",
    });
    const missing = CompositionSchema.safeParse({ protein: 20 });
    expect(fieldErrors(missing.error!)).toEqual({ water: "Water must be a number (percent by mass)" });
  });

  it("a composition that does not add up to 95–105 % is refused with its total", () => {
    const low = CompositionSchema.safeParse({ water: 60, protein: 20 });
    expect(fieldErrors(low.error!)).toEqual({ form: "Components add up to 80 %; they must add up to between 95 and 105 %" });
    const high = CompositionSchema.safeParse({ water: 90, protein: 20 });
    expect(fieldErrors(high.error!).form).toMatch(/110 %/);
  });
});

describe("effective properties over a cooling range", () => {
  it("the Simpson mean of a quadratic property is exact: water's k over 60 → 5 °C", () => {
    // mean of c0 + c1T + c2T² over [a, b] = c0 + c1(a + b)/2 + c2(a² + ab + b²)/3
    const [a, b] = [5, 60];
    const mean = (c: number[]) => c[0] + (c[1] * (a + b)) / 2 + (c[2] * (a * a + a * b + b * b)) / 3;
    const p = averageProperties(water, { fromC: 60, toC: 5 });
    expect(p.k).toBeCloseTo(mean(waterK), 12);
    expect(p.rho).toBeCloseTo(mean(waterRho), 9);
    expect(p.cp).toBeCloseTo(1000 * mean(waterCpKJ), 8);
  });

  it("alpha is derived from the mean k, rho and cp, and sits between its end values", () => {
    const beef = CompositionSchema.parse({ water: 71, protein: 22.5, fat: 5, ash: 1.1 });
    const p = averageProperties(beef, { fromC: 60, toC: 5 });
    expect(p.alpha).toBeCloseTo(p.k / (p.rho * p.cp), 20);
    expect(p.rhoCp).toBeCloseTo(p.rho * p.cp, 6);
    const [cold, hot] = [evaluateProperties(beef, 5), evaluateProperties(beef, 60)];
    expect(p.alpha).toBeGreaterThan(cold.alpha);
    expect(p.alpha).toBeLessThan(hot.alpha);
  });

  it("the range may be given either way round; an empty range gives the point value", () => {
    const lamb = CompositionSchema.parse({ water: 73.42, protein: 20.29, fat: 5.25, ash: 1.06 });
    expect(averageProperties(lamb, { fromC: 60, toC: 5 })).toEqual(averageProperties(lamb, { fromC: 5, toC: 60 }));
    expect(averageProperties(lamb, { fromC: 20, toC: 20 })).toEqual(evaluateProperties(lamb, 20));
  });
});

describe("properties given directly", () => {
  it("k, rho and cp give alpha = k/(rho·cp)", () => {
    const p = DirectPropertiesSchema.parse({ k: 0.5, rho: 1050, cp: 3600 });
    expect(p.alpha).toBeCloseTo(0.5 / (1050 * 3600), 20);
    expect(p.rhoCp).toBe(1050 * 3600);
  });

  it("k and alpha alone give the volumetric heat capacity; rho and cp stay unknown", () => {
    const p = DirectPropertiesSchema.parse({ k: 0.5, alpha: 1.4e-7 });
    expect(p.rhoCp).toBeCloseTo(0.5 / 1.4e-7, 3);
    expect(p.rho).toBeUndefined();
    expect(p.cp).toBeUndefined();
    const withRho = DirectPropertiesSchema.parse({ k: 0.5, alpha: 1.4e-7, rho: 1050 });
    expect(withRho.cp).toBeCloseTo(0.5 / 1.4e-7 / 1050, 6);
  });

  it("unit slips get a message on their field: cp in kJ, alpha without its 10⁻⁷", () => {
    const cp = DirectPropertiesSchema.safeParse({ k: 0.5, rho: 1050, cp: 3.6 });
    expect(fieldErrors(cp.error!)).toEqual({ cp: expect.stringMatching(/3\.6 kJ\/kg·K is 3600/) });
    const alpha = DirectPropertiesSchema.safeParse({ k: 0.5, alpha: 1.4 });
    expect(fieldErrors(alpha.error!)).toEqual({ alpha: expect.stringMatching(/1\.4e-7/) });
    const k = DirectPropertiesSchema.safeParse({ k: 5, alpha: 1.4e-7, rho: -2 });
    expect(Object.keys(fieldErrors(k.error!)).sort()).toEqual(["k", "rho"]);
  });

  it("too few values, or four that disagree, are refused", () => {
    expect(fieldErrors(DirectPropertiesSchema.safeParse({ k: 0.5, rho: 1000 }).error!)).toEqual({
      form: "Give k and alpha, or rho and cp with k or alpha",
    });
    const clash = DirectPropertiesSchema.safeParse({ k: 0.5, rho: 1050, cp: 3600, alpha: 1.8e-7 });
    expect(fieldErrors(clash.error!)).toEqual({ alpha: expect.stringMatching(/disagrees with k\/\(rho·cp\)/) });
  });

  it("a batch's food is resolved to constant properties from either kind of input", () => {
    const range = { fromC: 60, toC: 5 };
    const fromComposition = FoodThermalInputSchema.parse({ kind: "composition", composition: { water: 100 } });
    expect(resolveProperties(fromComposition, range)).toEqual(averageProperties(water, range));
    const direct = FoodThermalInputSchema.parse({ kind: "direct", properties: { k: 0.5, alpha: 1.3e-7 } });
    expect(resolveProperties(direct, range).alpha).toBe(1.3e-7);
    expect(() => resolveProperties(direct, { fromC: 60, toC: -3 })).toThrow(/freezing/);
  });
});
