// Thermal properties of unfrozen food, from composition or given directly.
// SI throughout: k W/m·K, rho kg/m³, cp J/kg·K, alpha m²/s, temperatures °C.
import { z } from "zod";
import choiOkos from "../../../reference/choi-okos-1986.json";

export const components = ["water", "protein", "fat", "carbohydrate", "fibre", "ash"] as const;
export type Component = (typeof components)[number];

type Polynomial = readonly number[];
type ComponentModel = { k: Polynomial; rho: Polynomial; cp: Polynomial };
const model: Record<Component, ComponentModel> = choiOkos.components;

/** Foods start to freeze a little below 0 °C; freezing (latent heat, ice fraction) is outside this model. */
export const MIN_TEMPERATURE_C = -1;
/** Upper end of the Choi & Okos water polynomials (0–150 °C). */
export const MAX_TEMPERATURE_C = 150;

/** Mass percentages summing to 100, carbohydrate net of fibre. */
export type Composition = Record<Component, number>;

/** What the cooling engine needs: conductivity, diffusivity and volumetric heat capacity rho·cp (J/m³·K). */
export type FoodProperties = { k: number; alpha: number; rhoCp: number; rho?: number; cp?: number };
export type ThermalProperties = Required<FoodProperties>;

export type TemperatureRange = { fromC: number; toC: number };

const percent = (label: string) =>
  z
    .number({ error: `${label} must be a number (percent by mass)` })
    .min(0, `${label} cannot be negative`)
    .max(100, `${label} cannot be more than 100 %`);

const componentLabels: Record<Component, string> = {
  water: "Water",
  protein: "Protein",
  fat: "Fat",
  carbohydrate: "Carbohydrate",
  fibre: "Fibre",
  ash: "Ash",
};

/**
 * Composition in percent by mass. Missing components other than water count as 0. The total must lie
 * within 95–105 % (tables round, and some omit minor components) and is normalised to 100 %.
 * Composition tables and US labels give total carbohydrate including fibre; EU labels and some tables
 * give it without. Set `carbohydrateIncludesFibre` when the figure includes fibre, so fibre is not counted twice.
 */
export const CompositionSchema = z
  .object({
    water: percent(componentLabels.water),
    protein: percent(componentLabels.protein).default(0),
    fat: percent(componentLabels.fat).default(0),
    carbohydrate: percent(componentLabels.carbohydrate).default(0),
    fibre: percent(componentLabels.fibre).default(0),
    ash: percent(componentLabels.ash).default(0),
    carbohydrateIncludesFibre: z.boolean().default(false),
  })
  .superRefine((c, ctx) => {
    const inRange = components.every((name) => c[name] >= 0 && c[name] <= 100);
    if (!inRange) return;
    if (c.carbohydrateIncludesFibre && c.fibre > c.carbohydrate) {
      ctx.addIssue({
        code: "custom",
        path: ["fibre"],
        message: `Fibre (${c.fibre} %) cannot exceed total carbohydrate (${c.carbohydrate} %) when carbohydrate includes fibre`,
      });
      return;
    }
    const total = sumComponents(netOfFibre(c));
    if (total < 95 || total > 105) {
      ctx.addIssue({
        code: "custom",
        path: [],
        message: `Components add up to ${round(total, 1)} %; they must add up to between 95 and 105 %`,
      });
    }
  })
  .transform((c): Composition => normalise(netOfFibre(c)));

export type CompositionInput = z.input<typeof CompositionSchema>;

function netOfFibre(c: Composition & { carbohydrateIncludesFibre: boolean }): Composition {
  const { carbohydrateIncludesFibre, ...rest } = c;
  return carbohydrateIncludesFibre ? { ...rest, carbohydrate: rest.carbohydrate - rest.fibre } : rest;
}

function sumComponents(c: Composition) {
  return components.reduce((sum, name) => sum + c[name], 0);
}

function normalise(c: Composition): Composition {
  const total = sumComponents(c);
  return Object.fromEntries(components.map((name) => [name, (100 * c[name]) / total])) as Composition;
}

function round(x: number, digits: number) {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
}

function evaluate(p: Polynomial, t: number) {
  return p.reduce((sum, c, i) => sum + c * t ** i, 0);
}

export function assertUnfrozen(tempC: number) {
  if (!Number.isFinite(tempC)) throw new RangeError("Temperature must be a number in °C");
  if (tempC < MIN_TEMPERATURE_C)
    throw new RangeError(
      `Food at ${tempC} °C may be freezing: properties are computed only above ${MIN_TEMPERATURE_C} °C (freezing is out of scope)`,
    );
  if (tempC > MAX_TEMPERATURE_C)
    throw new RangeError(`Properties are computed only up to ${MAX_TEMPERATURE_C} °C, the range of the Choi & Okos polynomials`);
}

/**
 * Choi & Okos (1986) at one temperature, mixing rules as in ASHRAE Handbook—Refrigeration, "Thermal
 * Properties of Foods": rho = 1/Σ(xᵢ/ρᵢ), cp = Σ xᵢcpᵢ, k = Σ vᵢkᵢ with vᵢ = (xᵢ/ρᵢ)·rho (parallel model).
 * Accepts any composition object; it is normalised again so a hand-built one is safe.
 */
export function evaluateProperties(composition: Composition, tempC: number): ThermalProperties {
  assertUnfrozen(tempC);
  const total = sumComponents(composition);
  if (!(total > 0)) throw new RangeError("Composition is empty");
  let specificVolume = 0;
  let cpKJ = 0;
  for (const name of components) {
    const x = composition[name] / total;
    specificVolume += x / evaluate(model[name].rho, tempC);
    cpKJ += x * evaluate(model[name].cp, tempC);
  }
  const rho = 1 / specificVolume;
  let k = 0;
  for (const name of components) {
    const x = composition[name] / total;
    k += (x / evaluate(model[name].rho, tempC)) * rho * evaluate(model[name].k, tempC);
  }
  const cp = cpKJ * 1000; // the polynomials give kJ/kg·K
  return { k, rho, cp, alpha: k / (rho * cp), rhoCp: rho * cp };
}

const SIMPSON_INTERVALS = 24;

/** Composite Simpson's rule for the mean of f over [a, b]. */
function meanBySimpson(f: (t: number) => number, a: number, b: number, n = SIMPSON_INTERVALS) {
  const h = (b - a) / n;
  let sum = f(a) + f(b);
  for (let i = 1; i < n; i++) sum += (i % 2 ? 4 : 2) * f(a + i * h);
  return (sum * h) / 3 / (b - a);
}

/**
 * Effective constant properties for a cooling run over [toC, fromC]. A constant-property conduction
 * model needs one value per property; this engine takes the mean of k, rho and cp over the range
 * (Simpson's rule), which is common practice, and derives alpha = k̄/(ρ̄·c̄p) so the three stay consistent.
 */
export function averageProperties(composition: Composition, range: TemperatureRange): ThermalProperties {
  const { fromC, toC } = range;
  assertUnfrozen(fromC);
  assertUnfrozen(toC);
  if (fromC === toC) return evaluateProperties(composition, fromC);
  const mean = (key: "k" | "rho" | "cp") =>
    meanBySimpson((t) => evaluateProperties(composition, t)[key], Math.min(fromC, toC), Math.max(fromC, toC));
  const k = mean("k");
  const rho = mean("rho");
  const cp = mean("cp");
  return { k, rho, cp, alpha: k / (rho * cp), rhoCp: rho * cp };
}

// Plausible bounds for unfrozen foods, from dry porous (bread) to water and brines; values outside are
// almost always a unit slip (kJ for J, ×10⁻⁷ dropped) rather than a real food.
export const PLAUSIBLE = {
  k: { low: 0.05, high: 0.8 },
  rho: { low: 200, high: 1600 },
  cp: { low: 1000, high: 4500 },
  alpha: { low: 0.3e-7, high: 3e-7 },
  rhoCp: { low: 0.3e6, high: 5e6 },
} as const;

const bounded = (name: string, unit: string, b: { low: number; high: number }, hint: string) =>
  z
    .number({ error: `${name} must be a number in ${unit}` })
    .refine((v) => v >= b.low && v <= b.high, {
      error: (issue) => `${name} = ${String(issue.input)} ${unit} is outside ${b.low}–${b.high} ${unit} for foods${hint}`,
    });

/** Properties measured or taken from a table: k with alpha, or rho and cp with k or alpha. */
export const DirectPropertiesSchema = z
  .object({
    k: bounded("k", "W/m·K", PLAUSIBLE.k, "").optional(),
    rho: bounded("rho", "kg/m³", PLAUSIBLE.rho, "").optional(),
    cp: bounded("cp", "J/kg·K", PLAUSIBLE.cp, " (cp is in J/kg·K: 3.6 kJ/kg·K is 3600)").optional(),
    alpha: bounded("alpha", "m²/s", PLAUSIBLE.alpha, " (alpha is in m²/s: 1.4 × 10⁻⁷ m²/s is 1.4e-7)").optional(),
  })
  .superRefine((p, ctx) => {
    const has = (v: number | undefined): v is number => v !== undefined;
    const keys = ["k", "rho", "cp", "alpha"] as const;
    const outOfBounds = keys.some((key) => has(p[key]) && (p[key]! < PLAUSIBLE[key].low || p[key]! > PLAUSIBLE[key].high));
    if (outOfBounds) return;
    const enough = (has(p.k) && has(p.alpha)) || (has(p.rho) && has(p.cp) && (has(p.k) || has(p.alpha)));
    if (!enough) {
      ctx.addIssue({ code: "custom", path: [], message: "Give k and alpha, or rho and cp with k or alpha" });
      return;
    }
    const derived = derive(p);
    if (derived.rhoCp < PLAUSIBLE.rhoCp.low || derived.rhoCp > PLAUSIBLE.rhoCp.high) {
      ctx.addIssue({
        code: "custom",
        path: has(p.alpha) ? ["alpha"] : ["cp"],
        message: `These values give rho·cp = ${derived.rhoCp.toPrecision(3)} J/m³·K, outside ${PLAUSIBLE.rhoCp.low}–${PLAUSIBLE.rhoCp.high} for foods`,
      });
    }
    if (has(p.k) && has(p.alpha) && has(p.rho) && has(p.cp)) {
      const implied = p.k / (p.rho * p.cp);
      if (Math.abs(implied / p.alpha - 1) > 0.1)
        ctx.addIssue({
          code: "custom",
          path: ["alpha"],
          message: `alpha = ${p.alpha} m²/s disagrees with k/(rho·cp) = ${implied.toPrecision(3)} m²/s by more than 10 %`,
        });
    }
  })
  .transform((p) => derive(p));

export type DirectPropertiesInput = z.input<typeof DirectPropertiesSchema>;

function derive(p: { k?: number; rho?: number; cp?: number; alpha?: number }): FoodProperties {
  const rhoCp = p.rho !== undefined && p.cp !== undefined ? p.rho * p.cp : p.k! / p.alpha!;
  const k = p.k ?? p.alpha! * rhoCp;
  const alpha = p.alpha ?? k / rhoCp;
  const out: FoodProperties = { k, alpha, rhoCp };
  if (p.rho !== undefined) out.rho = p.rho;
  else if (p.cp !== undefined) out.rho = rhoCp / p.cp;
  if (p.cp !== undefined) out.cp = p.cp;
  else if (p.rho !== undefined) out.cp = rhoCp / p.rho;
  return out;
}

/** Either a composition or direct properties; what a batch's food record holds. */
export const FoodThermalInputSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("composition"), composition: CompositionSchema }),
  z.object({ kind: z.literal("direct"), properties: DirectPropertiesSchema }),
]);

export type FoodThermalInput = z.output<typeof FoodThermalInputSchema>;

/** Constant properties for the engine: the range mean from composition, or the given values as they are. */
export function resolveProperties(input: FoodThermalInput, range: TemperatureRange): FoodProperties {
  assertUnfrozen(range.fromC);
  assertUnfrozen(range.toC);
  return input.kind === "composition" ? averageProperties(input.composition, range) : input.properties;
}
