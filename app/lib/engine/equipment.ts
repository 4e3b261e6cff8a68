// Pans, pan materials and cooling methods as data (reference/pans.json, reference/cooling-methods.json),
// and the two helpers the predictor uses: the pan's geometry and each face's effective coefficient.
// SI in results: metres, W/m²K, °C.
import { z } from "zod";
import methodsData from "../../../reference/cooling-methods.json";
import pansData from "../../../reference/pans.json";

const StatusSchema = z.enum(["cited", "computed", "memory", "common practice"]);
const RangeSchema = z.tuple([z.number(), z.number()]).refine(([low, high]) => low <= high, "range must be [low, high]");
const RegimeSchema = z.enum(["free-gas", "forced-gas", "free-liquid", "forced-liquid"]);
const MediumSchema = z.enum(["air", "water", "coolant", "ice"]);
const ContainerSchema = z.enum(["pan", "bag", "kettle"]);

export type Status = z.infer<typeof StatusSchema>;
export type Range = [number, number];
export type Regime = z.infer<typeof RegimeSchema>;
export type Medium = z.infer<typeof MediumSchema>;
export const faces = ["top", "bottom", "walls"] as const;
export type Face = (typeof faces)[number];

const CoefficientSchema = z.object({
  h: z.number().nonnegative(),
  range: RangeSchema,
  status: StatusSchema,
  basis: z.string().min(10),
});
const ConvectionSchema = CoefficientSchema.extend({ regime: RegimeSchema });
const MediumConditionSchema = z.object({ tempC: z.number(), range: RangeSchema, status: StatusSchema, basis: z.string().min(10) });
const FaceSchema = z.object({
  medium: MediumSchema,
  convection: ConvectionSchema,
  radiation: z.boolean().default(false),
  evaporation: CoefficientSchema.optional(),
});
const InsertSchema = ConvectionSchema.extend({
  medium: MediumSchema,
  areaM2: z.number().positive(),
  areaRange: RangeSchema,
  iceMassKg: z.number().positive(),
  latentHeatKJPerKg: z.number().positive(),
});
const CoolingMethodSchema = z
  .object({
    id: z.string(),
    name: z.string(),
    container: ContainerSchema.default("pan"),
    media: z.partialRecord(MediumSchema, MediumConditionSchema),
    faces: z.object({ top: FaceSchema, bottom: FaceSchema, walls: FaceSchema }),
    lidApplies: z.boolean(),
    stirsFood: z.boolean(),
    insert: InsertSchema.nullable(),
    geometryNote: z.string().optional(),
  })
  .superRefine((m, ctx) => {
    for (const face of faces)
      if (!m.media[m.faces[face].medium])
        ctx.addIssue({ code: "custom", path: ["faces", face], message: `${m.id}: no ${m.faces[face].medium} in media` });
  });
const MethodsFileSchema = z.object({
  bands: z.record(RegimeSchema, z.object({ range: RangeSchema, status: StatusSchema, source: z.string() })),
  radiation: z.object({ stefanBoltzmann: z.number(), foodEmissivity: z.number(), referenceSurfaceC: z.number() }),
  lid: z.object({ basis: z.string(), gapConvection: ConvectionSchema }),
  methods: z.array(CoolingMethodSchema),
});

export type CoolingMethod = z.output<typeof CoolingMethodSchema>;
export type FaceExposure = z.output<typeof FaceSchema>;

const methodsFile = MethodsFileSchema.parse(methodsData);
export const coolingMethods: CoolingMethod[] = methodsFile.methods;
export const coolingMethodIds = coolingMethods.map((m) => m.id) as [string, ...string[]];
/** Typical film-coefficient bands (Incropera & DeWitt, Table 1.1), W/m²K. */
export const heatTransferBands = methodsFile.bands;
export const lidModel = methodsFile.lid;

/** CODATA 2018 value, W/m²K⁴. */
export const STEFAN_BOLTZMANN = methodsFile.radiation.stefanBoltzmann;
export const FOOD_EMISSIVITY = methodsFile.radiation.foodEmissivity;
export const REFERENCE_SURFACE_C = methodsFile.radiation.referenceSurfaceC;

const KELVIN = 273.15;
const MM_PER_INCH = 25.4;
// Nominal sizes: a tenth of a millimetre is finer than any pan is made.
const inchesToMm = (inches: number) => Math.round(inches * MM_PER_INCH * 10) / 10;

const GastronormSchema = z.object({
  id: z.string(),
  system: z.literal("gastronorm"),
  name: z.string(),
  lengthMm: z.number().positive(),
  widthMm: z.number().positive(),
  depthsMm: z.array(z.number().positive()).min(1),
  status: StatusSchema,
  depthsStatus: StatusSchema,
  source: z.string(),
});
const SteamTableSchema = z.object({
  id: z.string(),
  system: z.literal("us-steam-table"),
  name: z.string(),
  lengthIn: z.number().positive(),
  widthIn: z.number().positive(),
  depthsIn: z.array(z.number().positive()).min(1),
  status: StatusSchema,
  depthsStatus: StatusSchema,
  source: z.string(),
});
const PanSizeSchema = z
  .discriminatedUnion("system", [GastronormSchema, SteamTableSchema])
  .transform((p) =>
    p.system === "gastronorm"
      ? p
      : {
          id: p.id,
          system: p.system,
          name: p.name,
          lengthMm: inchesToMm(p.lengthIn),
          widthMm: inchesToMm(p.widthIn),
          depthsMm: p.depthsIn.map(inchesToMm),
          status: p.status,
          depthsStatus: p.depthsStatus,
          source: p.source,
        },
  );
const PanMaterialSchema = z.object({
  id: z.string(),
  name: z.string(),
  k: z.number().positive(),
  kSource: z.string(),
  kStatus: StatusSchema,
  wallMm: z.number().positive(),
  wallSource: z.string(),
  wallStatus: StatusSchema,
  emissivity: z.number().min(0).max(1),
  emissivitySource: z.string(),
  emissivityStatus: StatusSchema,
});

/** A pan size; US sizes are converted from their nominal inches. */
export type PanSize = z.output<typeof PanSizeSchema>;
export type PanMaterial = z.output<typeof PanMaterialSchema>;

const pansFile = z.object({ sizes: z.array(PanSizeSchema), materials: z.array(PanMaterialSchema) }).parse(pansData);
export const panSizes: PanSize[] = pansFile.sizes;
export const panSizeIds = panSizes.map((p) => p.id) as [string, ...string[]];
export const panMaterials: PanMaterial[] = pansFile.materials;
export const panMaterialIds = panMaterials.map((m) => m.id) as [string, ...string[]];

export const getPanSize = (id: string) => panSizes.find((p) => p.id === id);
export const getPanMaterial = (id: string) => panMaterials.find((m) => m.id === id);
export const getCoolingMethod = (id: string) => coolingMethods.find((m) => m.id === id);

const DEPTH_TOLERANCE_MM = 0.5;
const findDepth = (size: PanSize, depthMm: number) => size.depthsMm.find((d) => Math.abs(d - depthMm) <= DEPTH_TOLERANCE_MM);
const formatMm = (mm: number) => `${Math.round(mm * 10) / 10} mm`;

/** A pan in use: a size, one of its standard depths, and how deep the food is. */
export const PanFillSchema = z
  .object({
    size: z.string({ error: "Choose a pan size" }),
    depthMm: z.number({ error: "Pan depth must be a number in mm" }).positive("Pan depth must be more than 0 mm"),
    fillDepthMm: z.number({ error: "Fill depth must be a number in mm" }).positive("Fill depth must be more than 0 mm"),
  })
  .superRefine((p, ctx) => {
    const size = getPanSize(p.size);
    if (!size) {
      ctx.addIssue({ code: "custom", path: ["size"], message: `Unknown pan size "${p.size}"` });
      return;
    }
    const depth = findDepth(size, p.depthMm);
    if (depth === undefined) {
      ctx.addIssue({
        code: "custom",
        path: ["depthMm"],
        message: `${size.name} comes ${size.depthsMm.map(formatMm).join(", ")} deep, not ${formatMm(p.depthMm)}`,
      });
      return;
    }
    if (p.fillDepthMm > depth + DEPTH_TOLERANCE_MM)
      ctx.addIssue({
        code: "custom",
        path: ["fillDepthMm"],
        message: `Fill depth ${formatMm(p.fillDepthMm)} is more than the pan's depth of ${formatMm(depth)}`,
      });
  });

export type PanSelection = { size: string; depthMm: number };

export type FaceGeometry = { areaM2: number; medium: Medium | null; mediumC: number | null };
export type PanGeometry = {
  size: string;
  name: string;
  lengthM: number;
  widthM: number;
  panDepthM: number;
  fillDepthM: number;
  volumeM3: number;
  /** Wetted walls: perimeter × fill depth. With a method, each face names what it touches and its default temperature. */
  faces: Record<Face, FaceGeometry>;
};

function resolveMethod(method: CoolingMethod | string): CoolingMethod {
  if (typeof method !== "string") return method;
  const found = getCoolingMethod(method);
  if (!found) throw new RangeError(`Unknown cooling method "${method}"`);
  return found;
}

/** Dimensions for the engine, from nominal pan sizes (the food surface is a little smaller; calibration absorbs it). */
export function panGeometry(pan: PanSelection, fillDepthMm: number, method?: CoolingMethod | string): PanGeometry {
  const parsed = PanFillSchema.safeParse({ ...pan, fillDepthMm });
  if (!parsed.success) throw new RangeError(parsed.error.issues.map((i) => i.message).join("; "));
  const size = getPanSize(pan.size)!;
  const m = method === undefined ? null : resolveMethod(method);
  const lengthM = size.lengthMm / 1000;
  const widthM = size.widthMm / 1000;
  const fillDepthM = fillDepthMm / 1000;
  const face = (areaM2: number, f: Face): FaceGeometry => {
    const medium = m ? m.faces[f].medium : null;
    return { areaM2, medium, mediumC: m && medium ? m.media[medium]!.tempC : null };
  };
  return {
    size: size.id,
    name: size.name,
    lengthM,
    widthM,
    panDepthM: findDepth(size, pan.depthMm)! / 1000,
    fillDepthM,
    volumeM3: lengthM * widthM * fillDepthM,
    faces: {
      top: face(lengthM * widthM, "top"),
      bottom: face(lengthM * widthM, "bottom"),
      walls: face(2 * (lengthM + widthM) * fillDepthM, "walls"),
    },
  };
}

/**
 * Linearised radiation coefficient between a grey surface and large surroundings,
 * h_r = εσ(Ts + T∞)(Ts² + T∞²) in kelvin (Incropera & DeWitt, §1.2.3).
 */
export function computeRadiationCoefficient(surfaceC: number, surroundingsC: number, emissivity: number) {
  const ts = surfaceC + KELVIN;
  const tinf = surroundingsC + KELVIN;
  return emissivity * STEFAN_BOLTZMANN * (ts + tinf) * (ts * ts + tinf * tinf);
}

/** Effective emissivity of two large parallel grey surfaces (Incropera & DeWitt, §13.3). */
export const parallelPlateEmissivity = (e1: number, e2: number) => 1 / (1 / e1 + 1 / e2 - 1);

export type SurfaceOptions = {
  lid: boolean;
  panMaterial: PanMaterial | string;
  /** Food surface temperature at which radiation is linearised; default 30 °C. */
  surfaceC?: number;
  /** Override the method's default medium temperatures, e.g. an ice bath standing in a walk-in. */
  mediumC?: Partial<Record<Medium, number>>;
};

export type FaceBreakdown = {
  convection: number;
  radiation: number;
  evaporation: number;
  /** Series resistance of the pan or lid wall, t/k (m²K/W). */
  wallResistance: number;
  /** Lid on: conductance of the enclosed air layer under the lid. */
  lidGap?: number;
};

export type SurfaceCoefficients = {
  topH: number;
  bottomH: number;
  wallH: number;
  range: { top: Range; bottom: Range; wall: Range };
  /** Temperature each face sees (°C). */
  mediumC: { top: number; bottom: number; wall: number };
  /** Whether a lid is on in this calculation (false where the method does not allow one). */
  lid: boolean;
  stirsFood: boolean;
  /** A cold insert in the food (an ice paddle): h on its wetted area, at the ice temperature. */
  insert: { h: number; range: Range; areaM2: number; areaRange: Range; tempC: number; iceMassKg: number; latentHeatKJPerKg: number } | null;
  breakdown: Record<Face, FaceBreakdown>;
};

const series = (...resistances: number[]) => 1 / resistances.reduce((a, b) => a + b, 0);

function resolveMaterial(material: PanMaterial | string): PanMaterial {
  if (typeof material !== "string") return material;
  const found = getPanMaterial(material);
  if (!found) throw new RangeError(`Unknown pan material "${material}"`);
  return found;
}

/**
 * Effective coefficient of each face under a method: convection, plus radiation where the face sees air,
 * plus evaporation from an open top; then the pan wall in series, 1/h_eff = 1/h + t/k. With a lid the top
 * is the air layer, the lid wall and the lid's outside in series, without evaporation (basis in
 * reference/cooling-methods.json, "lid"). Ranges combine the low (high) ends of every part.
 */
export function surfaceCoefficients(method: CoolingMethod | string, options: SurfaceOptions): SurfaceCoefficients {
  const m = resolveMethod(method);
  const material = resolveMaterial(options.panMaterial);
  const surfaceC = options.surfaceC ?? REFERENCE_SURFACE_C;
  const lid = options.lid && m.lidApplies;
  const wallResistance = m.container === "bag" ? 0 : material.wallMm / 1000 / material.k;
  const mediumOf = (f: Face) => {
    const medium = m.faces[f].medium;
    return options.mediumC?.[medium] ?? m.media[medium]!.tempC;
  };

  function sideFace(f: "bottom" | "walls") {
    const exposure = m.faces[f];
    const radiation = exposure.radiation ? computeRadiationCoefficient(surfaceC, mediumOf(f), material.emissivity) : 0;
    const at = (convection: number) => series(1 / (convection + radiation), wallResistance);
    const c = exposure.convection;
    return {
      h: at(c.h),
      range: [at(c.range[0]), at(c.range[1])] as Range,
      breakdown: { convection: c.h, radiation, evaporation: 0, wallResistance },
    };
  }

  function topFace() {
    const exposure = m.faces.top;
    const c = exposure.convection;
    const airC = mediumOf("top");
    if (!lid) {
      const radiation = exposure.radiation ? computeRadiationCoefficient(surfaceC, airC, FOOD_EMISSIVITY) : 0;
      const evaporation = exposure.evaporation;
      const at = (convection: number, evap: number) => convection + radiation + evap;
      return {
        h: at(c.h, evaporation?.h ?? 0),
        range: [at(c.range[0], evaporation?.range[0] ?? 0), at(c.range[1], evaporation?.range[1] ?? 0)] as Range,
        breakdown: { convection: c.h, radiation, evaporation: evaporation?.h ?? 0, wallResistance: 0 },
      };
    }
    const lidC = (surfaceC + airC) / 2;
    const gapRadiation = computeRadiationCoefficient(surfaceC, lidC, parallelPlateEmissivity(FOOD_EMISSIVITY, material.emissivity));
    const outsideRadiation = exposure.radiation ? computeRadiationCoefficient(lidC, airC, material.emissivity) : 0;
    const lidResistance = material.wallMm / 1000 / material.k;
    const gap = lidModel.gapConvection;
    const at = (gapConvection: number, convection: number) =>
      series(1 / (gapConvection + gapRadiation), lidResistance, 1 / (convection + outsideRadiation));
    return {
      h: at(gap.h, c.h),
      range: [at(gap.range[0], c.range[0]), at(gap.range[1], c.range[1])] as Range,
      breakdown: {
        convection: c.h,
        radiation: outsideRadiation,
        evaporation: 0,
        wallResistance: lidResistance,
        lidGap: gap.h + gapRadiation,
      },
    };
  }

  const top = topFace();
  const bottom = sideFace("bottom");
  const walls = sideFace("walls");
  const insert = m.insert && {
    h: m.insert.h,
    range: m.insert.range,
    areaM2: m.insert.areaM2,
    areaRange: m.insert.areaRange,
    tempC: options.mediumC?.[m.insert.medium] ?? m.media[m.insert.medium]?.tempC ?? 0,
    iceMassKg: m.insert.iceMassKg,
    latentHeatKJPerKg: m.insert.latentHeatKJPerKg,
  };
  return {
    topH: top.h,
    bottomH: bottom.h,
    wallH: walls.h,
    range: { top: top.range, bottom: bottom.range, wall: walls.range },
    mediumC: { top: mediumOf("top"), bottom: mediumOf("bottom"), wall: mediumOf("walls") },
    lid,
    stirsFood: m.stirsFood,
    insert,
    breakdown: { top: top.breakdown, bottom: bottom.breakdown, walls: walls.breakdown },
  };
}
