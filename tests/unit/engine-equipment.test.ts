import { describe, expect, it } from "vitest";
import {
  FOOD_EMISSIVITY,
  PanFillSchema,
  STEFAN_BOLTZMANN,
  computeRadiationCoefficient,
  coolingMethods,
  faces,
  getCoolingMethod,
  getPanMaterial,
  getPanSize,
  heatTransferBands,
  lidModel,
  panGeometry,
  panMaterials,
  panSizes,
  surfaceCoefficients,
} from "~/lib/engine/equipment";
import { fieldErrors } from "~/lib/forms";

const within = (x: number, [low, high]: readonly number[]) => x >= low && x <= high;
const stainless = "stainless-steel";

describe("pans (EN 631 Gastronorm and US steam-table sizes)", () => {
  it("GN 1/1 is 530 × 325 mm with depths of 20, 40, 65, 100, 150 and 200 mm", () => {
    // EN 631-1, as given in REFERENCES
    const gn = getPanSize("gn-1/1")!;
    expect([gn.lengthMm, gn.widthMm]).toEqual([530, 325]);
    expect(gn.depthsMm).toEqual([20, 40, 65, 100, 150, 200]);
    expect(gn.status).toBe("cited");
  });

  it("GN 1/2 is 325 × 265 mm and GN 1/3 is 325 × 176 mm", () => {
    // EN 631-1, as given in REFERENCES
    expect([getPanSize("gn-1/2")!.lengthMm, getPanSize("gn-1/2")!.widthMm]).toEqual([325, 265]);
    expect([getPanSize("gn-1/3")!.lengthMm, getPanSize("gn-1/3")!.widthMm]).toEqual([325, 176]);
  });

  it("sizes recalled rather than read are marked memory", () => {
    for (const id of ["gn-2/1", "gn-1/4", "gn-1/6", "gn-1/9", "us-full", "us-1/2", "us-1/3", "us-1/4", "us-1/6", "us-1/9"])
      expect(getPanSize(id)!.status, id).toBe("memory");
  });

  it("each Gastronorm fraction tiles the GN 1/1 footprint within 1 %", () => {
    // EN 631: fractions are laid out on the 530 × 325 mm module
    const full = 530 * 325;
    const fractions: Record<string, number> = { "gn-2/1": 2, "gn-1/2": 1 / 2, "gn-1/3": 1 / 3, "gn-1/4": 1 / 4, "gn-1/6": 1 / 6, "gn-1/9": 1 / 9 };
    for (const [id, f] of Object.entries(fractions)) {
      const p = getPanSize(id)!;
      expect(Math.abs((p.lengthMm * p.widthMm) / (full * f) - 1), id).toBeLessThan(0.01);
    }
  });

  it("US pans are converted from inches: the full-size 12 × 20 in pan is 304.8 × 508 mm at 2½, 4 and 6 in", () => {
    const full = getPanSize("us-full")!;
    expect([full.lengthMm, full.widthMm]).toEqual([508, 304.8]);
    expect(full.depthsMm).toEqual([63.5, 101.6, 152.4]);
    for (const [id, f] of [["us-1/2", 2], ["us-1/3", 3], ["us-1/4", 4], ["us-1/6", 6], ["us-1/9", 9]] as const) {
      const p = getPanSize(id)!;
      expect(Math.abs((p.lengthMm * p.widthMm * f) / (508 * 304.8) - 1), id).toBeLessThan(0.01);
    }
  });

  it("every material has a conductivity, wall thickness and emissivity with a source", () => {
    expect(panMaterials.map((m) => m.id).sort()).toEqual(["aluminium", "polycarbonate", "stainless-steel"]);
    // Incropera & DeWitt, Table A.1, AISI 304 at 300 K: k = 14.9 W/m·K
    expect(getPanMaterial(stainless)!.k).toBe(14.9);
    for (const m of panMaterials) {
      expect(m.kSource.length + m.wallSource.length + m.emissivitySource.length).toBeGreaterThan(60);
      expect(m.emissivity).toBeGreaterThan(0);
      expect(m.emissivity).toBeLessThanOrEqual(1);
    }
  });
});

describe("pan geometry", () => {
  it("a GN 1/1 65 mm pan filled to 50 mm: areas, volume and what each face touches in an ice bath", () => {
    const g = panGeometry({ size: "gn-1/1", depthMm: 65 }, 50, "ice-bath-still");
    expect([g.lengthM, g.widthM, g.panDepthM, g.fillDepthM]).toEqual([0.53, 0.325, 0.065, 0.05]);
    expect(g.volumeM3).toBeCloseTo(0.53 * 0.325 * 0.05, 12);
    expect(g.faces.top).toEqual({ areaM2: expect.closeTo(0.17225, 10), medium: "air", mediumC: 22 });
    expect(g.faces.bottom).toEqual({ areaM2: expect.closeTo(0.17225, 10), medium: "water", mediumC: 0 });
    expect(g.faces.walls).toEqual({ areaM2: expect.closeTo(2 * (0.53 + 0.325) * 0.05, 10), medium: "water", mediumC: 0 });
  });

  it("without a method the faces carry areas only", () => {
    const g = panGeometry({ size: "us-1/2", depthMm: 101.6 }, 60);
    expect(g.faces.top.medium).toBeNull();
    expect(g.faces.walls.mediumC).toBeNull();
    expect(g.lengthM).toBeCloseTo(0.3048, 10);
  });

  it("a fill deeper than the pan is refused with a clear message", () => {
    expect(() => panGeometry({ size: "gn-1/1", depthMm: 65 }, 80)).toThrow("Fill depth 80 mm is more than the pan's depth of 65 mm");
    const r = PanFillSchema.safeParse({ size: "gn-1/1", depthMm: 65, fillDepthMm: 80 });
    expect(fieldErrors(r.error!)).toEqual({ fillDepthMm: "Fill depth 80 mm is more than the pan's depth of 65 mm" });
  });

  it("a depth the size does not come in, an unknown size, or a non-positive fill get their own messages", () => {
    expect(fieldErrors(PanFillSchema.safeParse({ size: "gn-1/9", depthMm: 150, fillDepthMm: 50 }).error!)).toEqual({
      depthMm: "GN 1/9 comes 65 mm, 100 mm deep, not 150 mm",
    });
    expect(fieldErrors(PanFillSchema.safeParse({ size: "gn-3/1", depthMm: 65, fillDepthMm: 50 }).error!)).toEqual({
      size: 'Unknown pan size "gn-3/1"',
    });
    expect(fieldErrors(PanFillSchema.safeParse({ size: "gn-1/1", depthMm: 65, fillDepthMm: 0 }).error!)).toEqual({
      fillDepthMm: "Fill depth must be more than 0 mm",
    });
  });
});

describe("radiation", () => {
  it("σ is the CODATA 2018 value and food surfaces are taken as ε = 0.95", () => {
    // CODATA 2018: σ = 5.670374419e-8 W/m²K⁴ (exact in the 2019 SI)
    expect(STEFAN_BOLTZMANN).toBe(5.670374419e-8);
    expect(FOOD_EMISSIVITY).toBe(0.95);
  });

  it("a 30 °C food surface facing 3 °C walls at ε = 0.95 radiates 5–6.5 W/m²K, and 4εσTm³ agrees within 1 %", () => {
    // REFERENCES: radiation to 3 °C walls adds ≈ 5–6 W/m²K linearised at ε ≈ 0.95;
    // Incropera & DeWitt §1.2.3: h_r = εσ(Ts + T∞)(Ts² + T∞²) ≈ 4εσTm³
    const hr = computeRadiationCoefficient(30, 3, 0.95);
    expect(within(hr, [5, 6.5])).toBe(true);
    const tm = (30 + 3) / 2 + 273.15;
    const linear = 4 * 0.95 * 5.670374419e-8 * tm ** 3;
    expect(Math.abs(hr / linear - 1)).toBeLessThan(0.01);
    expect(hr).toBeCloseTo(5.2476, 3);
  });
});

describe("cooling methods", () => {
  it("covers the kitchen's methods, each with a distinct id", () => {
    expect(coolingMethods.map((m) => m.id)).toEqual([
      "walk-in",
      "reach-in",
      "blast-chiller",
      "ice-bath-still",
      "ice-bath-stirred",
      "ice-wand",
      "tumble-chiller",
      "cold-water-jacket",
    ]);
  });

  it("the textbook bands are 2–25 (free, gases) and 25–250 (forced, gases) W/m²K", () => {
    // Incropera & DeWitt, Table 1.1 (as given in REFERENCES); the liquid bands are memory
    expect(heatTransferBands["free-gas"].range).toEqual([2, 25]);
    expect(heatTransferBands["forced-gas"].range).toEqual([25, 250]);
  });

  it("every default lies inside its own range and inside the textbook band of its regime", () => {
    for (const m of coolingMethods) {
      for (const f of faces) {
        const c = m.faces[f].convection;
        expect(within(c.h, c.range), `${m.id} ${f}`).toBe(true);
        expect(within(c.h, heatTransferBands[c.regime].range), `${m.id} ${f} in ${c.regime}`).toBe(true);
        const e = m.faces[f].evaporation;
        if (e) expect(within(e.h, e.range), `${m.id} ${f} evaporation`).toBe(true);
      }
      if (m.insert) {
        expect(within(m.insert.h, m.insert.range)).toBe(true);
        expect(within(m.insert.h, heatTransferBands[m.insert.regime].range)).toBe(true);
        expect(within(m.insert.areaM2, m.insert.areaRange)).toBe(true);
      }
    }
    expect(within(lidModel.gapConvection.h, lidModel.gapConvection.range)).toBe(true);
    expect(within(lidModel.gapConvection.h, heatTransferBands["free-gas"].range)).toBe(true);
  });

  it("where a face radiates, convection plus radiation stays inside its band widened by the radiation coefficient", () => {
    for (const m of coolingMethods)
      for (const f of faces) {
        const exposure = m.faces[f];
        if (!exposure.radiation) continue;
        const hr = computeRadiationCoefficient(30, m.media[exposure.medium]!.tempC, FOOD_EMISSIVITY);
        expect(within(hr, [5, 6.5]), `${m.id} ${f} h_r`).toBe(true);
        const [low, high] = heatTransferBands[exposure.convection.regime].range;
        expect(within(exposure.convection.h + hr, [low, high + hr]), `${m.id} ${f}`).toBe(true);
      }
  });

  it("the defaults agree with REFERENCES' ranges for each method", () => {
    // REFERENCES, typical film coefficients (memory): still air 5–10 including radiation; blast chiller
    // 15–40; still ice-water bath 100–300; stirred ice bath 300–1000
    for (const id of ["walk-in", "reach-in"]) {
      const top = getCoolingMethod(id)!.faces.top;
      const hr = computeRadiationCoefficient(30, 3, FOOD_EMISSIVITY);
      expect(within(top.convection.h + hr, [5, 10]), id).toBe(true);
    }
    expect(within(getCoolingMethod("blast-chiller")!.faces.top.convection.h, [15, 40])).toBe(true);
    expect(getCoolingMethod("ice-bath-still")!.faces.walls.convection.range).toEqual([100, 300]);
    expect(getCoolingMethod("ice-bath-stirred")!.faces.walls.convection.range).toEqual([300, 1000]);
  });

  it("every default names its basis and status, and every face's medium has a temperature inside its range", () => {
    for (const m of coolingMethods) {
      for (const f of faces) {
        const { convection, medium } = m.faces[f];
        expect(convection.basis.length, `${m.id} ${f}`).toBeGreaterThan(20);
        expect(["cited", "computed", "memory", "common practice"]).toContain(convection.status);
        const condition = m.media[medium]!;
        expect(within(condition.tempC, condition.range), `${m.id} ${medium}`).toBe(true);
      }
    }
  });
});

describe("surface coefficients", () => {
  it("an open pan in a walk-in: the top adds radiation and evaporation to convection", () => {
    const s = surfaceCoefficients("walk-in", { lid: false, panMaterial: stainless });
    const hr = computeRadiationCoefficient(30, 3, 0.95);
    expect(s.topH).toBeCloseTo(4 + hr + 2, 10);
    expect(s.breakdown.top).toEqual({ convection: 4, radiation: hr, evaporation: 2, wallResistance: 0 });
    expect(s.mediumC).toEqual({ top: 3, bottom: 3, wall: 3 });
    expect(within(s.topH, s.range.top)).toBe(true);
  });

  it("the pan wall adds in series, 1/h_eff = 1/h + t/k: polycarbonate halves a stirred bath's coefficient or worse", () => {
    const pc = getPanMaterial("polycarbonate")!;
    const s = surfaceCoefficients("ice-bath-stirred", { lid: false, panMaterial: pc });
    expect(1 / s.wallH).toBeCloseTo(1 / 500 + pc.wallMm / 1000 / pc.k, 12);
    expect(s.wallH).toBeLessThan(250);
    const steel = surfaceCoefficients("ice-bath-stirred", { lid: false, panMaterial: stainless });
    expect(steel.wallH / 500).toBeGreaterThan(0.97);
  });

  it("a lid lowers the top coefficient and stops evaporation wherever a lid applies", () => {
    for (const m of coolingMethods.filter((x) => x.lidApplies))
      for (const material of panMaterials) {
        const open = surfaceCoefficients(m, { lid: false, panMaterial: material });
        const covered = surfaceCoefficients(m, { lid: true, panMaterial: material });
        expect(covered.lid).toBe(true);
        expect(covered.topH, `${m.id} ${material.id}`).toBeLessThan(open.topH);
        expect(covered.breakdown.top.evaporation).toBe(0);
        expect(covered.bottomH).toBe(open.bottomH);
        expect(within(covered.topH, covered.range.top)).toBe(true);
      }
  });

  it("a lid is ignored where the method has none: an ice paddle in use, a tumble chiller's bag", () => {
    for (const id of ["ice-wand", "tumble-chiller"]) {
      const covered = surfaceCoefficients(id, { lid: true, panMaterial: stainless });
      expect(covered.lid).toBe(false);
      expect(covered.topH).toBe(surfaceCoefficients(id, { lid: false, panMaterial: stainless }).topH);
    }
  });

  it("in an ice bath the base and walls see the water, the top the room; the bath may stand in a walk-in", () => {
    const s = surfaceCoefficients("ice-bath-still", { lid: false, panMaterial: stainless });
    expect(s.mediumC).toEqual({ top: 22, bottom: 0, wall: 0 });
    expect(s.breakdown.walls.radiation).toBe(0);
    const inWalkIn = surfaceCoefficients("ice-bath-still", { lid: false, panMaterial: stainless, mediumC: { air: 3 } });
    expect(inWalkIn.mediumC.top).toBe(3);
  });

  it("the ice paddle is an insert at 0 °C with its own coefficient and wetted area; the food is stirred", () => {
    const s = surfaceCoefficients("ice-wand", { lid: false, panMaterial: stainless });
    expect(s.stirsFood).toBe(true);
    expect(s.insert).toMatchObject({ h: 200, areaM2: 0.06, tempC: 0, latentHeatKJPerKg: 334 });
    expect(surfaceCoefficients("walk-in", { lid: false, panMaterial: stainless }).insert).toBeNull();
  });

  it("a tumble chiller's bag adds no wall resistance, whatever pan material is passed", () => {
    const s = surfaceCoefficients("tumble-chiller", { lid: false, panMaterial: "polycarbonate" });
    expect([s.topH, s.bottomH, s.wallH]).toEqual([300, 300, 300]);
  });

  it("every method's defaults sit inside its reported ranges for every material, lid on and off", () => {
    for (const m of coolingMethods)
      for (const material of panMaterials)
        for (const lid of [false, true]) {
          const s = surfaceCoefficients(m, { lid, panMaterial: material });
          const label = `${m.id} ${material.id} lid ${lid}`;
          expect(within(s.topH, s.range.top), label).toBe(true);
          expect(within(s.bottomH, s.range.bottom), label).toBe(true);
          expect(within(s.wallH, s.range.wall), label).toBe(true);
        }
  });

  it("unknown methods and materials are refused by name", () => {
    expect(() => surfaceCoefficients("freezer", { lid: false, panMaterial: stainless })).toThrow('Unknown cooling method "freezer"');
    expect(() => surfaceCoefficients("walk-in", { lid: false, panMaterial: "glass" })).toThrow('Unknown pan material "glass"');
  });
});
