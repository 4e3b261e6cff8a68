import { z } from "zod";
import { getRuleSet } from "../rule-sets";
import { calibrate, defaultPrior, type BatchModel } from "./calibrate";
import { solveConduction, type Geometry, type SurfaceH } from "./conduction";
import { HORIZON_S, predictBatch } from "./predict";
import { averageProperties, CompositionSchema, DirectPropertiesSchema } from "./properties";
import { evaluateRuleSet, type RuleEvaluation } from "./rules";

// The one request format of `npm run predict` and POST /api/v1/predict (documented in the README).

const H = z.union([z.number().min(0, "h must be 0 (insulated), a positive number in W/m²K, or \"inf\""), z.literal("inf")], {
  error: 'h must be 0 (insulated), a positive number in W/m²K, or "inf"',
});
const Face = z.object({ h: H });
const mm = (what: string, max = 2000) => z.number({ error: `${what} must be a number in mm` }).positive(`${what} must be more than 0 mm`).max(max, `${what} must be at most ${max} mm`);
const celsius = (what: string) => z.number({ error: `${what} must be a number in °C` }).min(-60, `${what} must be at least −60 °C`).max(150, `${what} must be at most 150 °C`);

const FoodSchema = z.union([z.object({ composition: CompositionSchema }), DirectPropertiesSchema.transform((p) => ({ direct: p }))], {
  error: "food must give k with rho and cp (or alpha), or a composition in percent",
});

const Reading = z.object({ tS: z.number().min(0, "tS must be ≥ 0 s"), c: celsius("c") });
const RuleReading = z.object({
  id: z.string().optional(),
  takenAt: z.union([z.number(), z.iso.datetime({ offset: true })]),
  value: z.number(),
  unit: z.enum(["F", "C"]),
  kind: z.enum(["reading", "reheat"]).optional(),
});

const Common = {
  food: FoodSchema,
  initialC: z.union([celsius("initialC"), z.array(celsius("initialC")).min(2, "an initial profile needs at least 2 samples").max(2000)]),
  ambientC: celsius("ambientC"),
  timesS: z.array(z.number().min(0, "times must be ≥ 0 s").max(30 * 24 * 3600, "times must be within 30 days")).min(1, "give at least one time").max(5000),
  targetsC: z.array(celsius("target")).max(20).default([]),
  deadlinesS: z.array(z.number().positive().nullable()).optional(),
  profilePoints: z.number().int().min(2).max(400).optional(),
  readings: z.array(Reading).max(500).optional(),
  ruleSet: z
    .object({
      code: z.string().refine((c) => !!getRuleSet(c), "unknown rule set code"),
      batchStartedAt: z.union([z.number(), z.iso.datetime({ offset: true })]),
      now: z.union([z.number(), z.iso.datetime({ offset: true })]).optional(),
      siteUnit: z.enum(["F", "C"]).default("C"),
      readings: z.array(RuleReading).max(500),
    })
    .optional(),
};

export const PredictRequestSchema = z
  .discriminatedUnion(
    "shape",
    [
      z.object({ shape: z.literal("slab"), depthMm: mm("depthMm"), faces: z.object({ top: Face, bottom: Face }), ...Common }),
      z.object({
        shape: z.literal("block"),
        lengthMm: mm("lengthMm"),
        widthMm: mm("widthMm"),
        depthMm: mm("depthMm"),
        faces: z.object({ top: Face, bottom: Face, walls: Face }),
        ...Common,
      }),
      z.object({ shape: z.literal("cylinder"), radiusMm: mm("radiusMm", 1000), surface: Face, ...Common }),
      z.object({ shape: z.literal("sphere"), radiusMm: mm("radiusMm", 1000), surface: Face, ...Common }),
    ],
    { error: 'shape must be "slab", "block", "cylinder" or "sphere"' },
  )
  .superRefine((r, ctx) => {
    if (Array.isArray(r.initialC) && r.shape !== "slab") ctx.addIssue({ code: "custom", path: ["initialC"], message: "an initial profile is for slabs only" });
    if (r.deadlinesS && r.deadlinesS.length !== r.targetsC.length) ctx.addIssue({ code: "custom", path: ["deadlinesS"], message: "give one deadline (or null) per target" });
    // One request answers at most 20 000 temperatures: enough for any picture, and bounded work.
    if (r.timesS.length * (r.profilePoints ?? 3) > 20_000) ctx.addIssue({ code: "custom", path: ["profilePoints"], message: "timesS × profilePoints must be at most 20 000" });
  });

export type PredictRequest = z.input<typeof PredictRequestSchema>;

export type PredictResponse = {
  centerC: number[];
  warmestC: number[];
  meanC: number[];
  reachS: Record<string, { center: number | null; warmest: number | null; mean: number | null }>;
  profile?: { depthMm: number[]; c: number[][] };
  properties: { k: number; alpha: number };
  calibration?: { surfaceFactor: number; diffusivityFactor: number; sdLnSurface: number; sdLnDiffusivity: number; fittedDiffusivity: boolean; residualSdK: number; readingsUsed: number };
  stages?: { targetC: number; deadlineS: number | null; reachS: number | null; lowS: number | null; highS: number | null; probability: number | null }[];
  verdict?: "ahead" | "tight" | "behind";
  evaluation?: RuleEvaluation;
  caution: string;
};

export const CAUTION = "Predictions are guidance. The probe reading is the record; local codes and the HACCP plan prevail.";

const round = (x: number | null, d = 3) => (x === null ? null : Math.round(x * 10 ** d) / 10 ** d);
const toMs = (v: number | string) => (typeof v === "number" ? v : Date.parse(v));

/** Field → message, for a CLI's exit code 2 and the API's 400. */
export function requestErrors(error: z.ZodError): Record<string, string> {
  const out: Record<string, string> = {};
  for (const issue of error.issues) {
    const key = issue.path.length ? issue.path.join(".") : "request";
    out[key] ??= issue.message;
  }
  return out;
}

export type PredictResult = { ok: true; response: PredictResponse } | { ok: false; errors: Record<string, string> };

export function runPredictRequest(raw: unknown): PredictResult {
  const parsed = PredictRequestSchema.safeParse(raw);
  if (!parsed.success) return { ok: false, errors: requestErrors(parsed.error) };
  const r = parsed.data;
  const h = (f: { h: number | "inf" }): SurfaceH => f.h;
  const geometry: Geometry =
    r.shape === "slab"
      ? { shape: "slab", depthM: r.depthMm / 1000, bottomH: h(r.faces.bottom), topH: h(r.faces.top) }
      : r.shape === "block"
        ? { shape: "block", lengthM: r.lengthMm / 1000, widthM: r.widthMm / 1000, depthM: r.depthMm / 1000, wallH: h(r.faces.walls), bottomH: h(r.faces.bottom), topH: h(r.faces.top) }
        : { shape: r.shape, radiusM: r.radiusMm / 1000, h: h(r.surface) };

  const startMax = Array.isArray(r.initialC) ? Math.max(...r.initialC) : r.initialC;
  let props: { k: number; alpha: number };
  if ("composition" in r.food) {
    // Constant properties: the mean over the cooling range (the composition model holds down to −1 °C).
    const toC = Math.max(r.ambientC, 0);
    props = averageProperties(r.food.composition, { fromC: Math.max(startMax, toC), toC: Math.min(startMax, toC) });
  } else props = r.food.direct;

  const initial = Array.isArray(r.initialC) ? { samplesC: r.initialC } : r.initialC;
  const model: BatchModel | null = typeof initial === "number" ? { geometry, k: props.k, alpha: props.alpha, ambientC: r.ambientC, initialC: initial } : null;
  const readings = r.readings ?? [];
  const cal = model && readings.length ? calibrate(model, readings, defaultPrior()) : null;
  const sol = cal ? cal.solution : solveConduction(geometry, props, initial, r.ambientC);

  const response: PredictResponse = {
    centerC: r.timesS.map((t) => round(sol.centerC(t))!),
    warmestC: r.timesS.map((t) => round(sol.warmestC(t))!),
    meanC: r.timesS.map((t) => round(sol.meanC(t))!),
    reachS: Object.fromEntries(
      r.targetsC.map((target) => [
        String(target),
        {
          center: round(sol.reachTime(target, "center", HORIZON_S), 1),
          warmest: round(sol.reachTime(target, "warmest", HORIZON_S), 1),
          mean: round(sol.reachTime(target, "mean", HORIZON_S), 1),
        },
      ]),
    ),
    properties: { k: props.k, alpha: props.alpha },
    caution: CAUTION,
  };
  if (r.profilePoints) {
    const grid = r.timesS.map((t) => sol.profile(t, r.profilePoints));
    response.profile = { depthMm: grid[0].xM.map((x) => round(x * 1000, 2)!), c: grid.map((g) => g.c.map((c) => round(c)!)) };
  }
  if (cal) {
    response.calibration = {
      surfaceFactor: cal.s,
      diffusivityFactor: cal.f,
      sdLnSurface: Math.sqrt(cal.cov[0][0]),
      sdLnDiffusivity: Math.sqrt(cal.cov[1][1]),
      fittedDiffusivity: cal.fittedDiffusivity,
      residualSdK: cal.residualSdK,
      readingsUsed: cal.readingsUsed,
    };
  }
  if (model && r.deadlinesS) {
    const nowS = Math.max(0, ...readings.map((x) => x.tS));
    const p = predictBatch({ model, readings, nowS, stages: r.targetsC.map((targetC, i) => ({ targetC, deadlineS: r.deadlinesS![i] })) });
    response.stages = p.stages.map((s) => ({ targetC: s.targetC, deadlineS: s.deadlineS, reachS: round(s.reachS, 1), lowS: round(s.lowS, 1), highS: round(s.highS, 1), probability: round(s.probability, 4) }));
    response.verdict = p.verdict;
  }
  if (r.ruleSet) {
    const rs = getRuleSet(r.ruleSet.code)!;
    response.evaluation = evaluateRuleSet(rs, {
      readings: r.ruleSet.readings.map((x, i) => ({ id: x.id ?? String(i), takenAt: toMs(x.takenAt), value: x.value, unit: x.unit, kind: x.kind })),
      batchStartedAt: toMs(r.ruleSet.batchStartedAt),
      siteUnit: r.ruleSet.siteUnit,
      now: r.ruleSet.now === undefined ? Date.now() : toMs(r.ruleSet.now),
    });
  }
  return { ok: true, response };
}
