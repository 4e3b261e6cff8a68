// Cooling rule sets: the critical limits of each stage, as versioned data. Each cites its source.
// reference/rule-sets.json holds the same data; a unit test keeps the two equal.
import { z } from "zod";
import { text } from "~/lib/forms";
import { fromCelsius, toCelsius, type TemperatureUnit } from "~/lib/temperature";

/**
 * A temperature limit in both units. `published` lists the units the source prints, in its order;
 * a unit it does not print is derived (see `deriveLimit`). An empty list means the source states no
 * figure and the value is the rule set's own assumption, explained in its `source`.
 */
export type Limit = { c: number; f: number; published: TemperatureUnit[] };

export type Stage = {
  /** Upper temperature of the stage: the rule's first limit, or the previous stage's target. */
  from: Limit;
  /** Temperature the food must reach, at or below. */
  to: Limit;
  withinMinutes: number;
  /** Where the clock starts: when the food passes the rule's first upper limit, or when the previous stage is met. */
  clockFrom: "start" | "previous-stage";
  /** °C figures of `from` and `to`, for code that works in °C. Compare readings with `limitIn`. */
  fromC: number;
  toC: number;
};

/** A caution that does not fail the batch: the food stayed above `above` for longer than `forMinutes`. */
export type Advisory = { code: string; above: Limit; forMinutes: number; note: string };

export type RuleSet = {
  code: string;
  /** Revision of this data under its code; bump it when a limit or a stage changes. */
  version: number;
  /** Edition of the source document. */
  edition: string;
  name: string;
  /** Document and clause, e.g. "FDA Food Code 2022 §3-501.14(A)". */
  citation: string;
  /** The limits as the source states them. */
  source: string;
  origin: "published" | "site";
  /**
   * What starts the first clock: the food passing the first stage's upper limit, or the batch itself
   * (food made from ambient-temperature ingredients has no upper limit to pass).
   */
  clockStartsAt: "upper-limit" | "batch-start";
  stages: Stage[];
  /** Where cooling carries on to after the last timed stage, with no deadline of its own. */
  continueTo: Limit | null;
  advisories: Advisory[];
};

export const limitIn = (limit: Limit, unit: TemperatureUnit) => (unit === "C" ? limit.c : limit.f);

/**
 * Completes a limit published in one unit. The other figure is the exact conversion rounded to 0.1°
 * towards the strict side: "down" for a target (a lower target is harder to meet), "up" for the upper
 * limit that starts the clock (a higher one starts it earlier, so deadlines come no later).
 */
export function deriveLimit(value: number, unit: TemperatureUnit, round: "down" | "up"): Limit {
  const other = unit === "C" ? fromCelsius(value, "F") : toCelsius(value, "F");
  // The 1e-9 absorbs binary noise such as 69.80000000000001 before rounding.
  const tenths = round === "down" ? Math.floor(other * 10 + 1e-9) : Math.ceil(other * 10 - 1e-9);
  const derived = tenths / 10;
  return unit === "C" ? { c: value, f: derived, published: ["C"] } : { c: derived, f: value, published: ["F"] };
}

const stage = (from: Limit, to: Limit, withinMinutes: number, clockFrom: Stage["clockFrom"]): Stage => ({
  from,
  to,
  withinMinutes,
  clockFrom,
  fromC: from.c,
  toC: to.c,
});

// FDA Food Code 2022 §3-501.14(A) prints °C first with °F in parentheses.
const fda57: Limit = { c: 57, f: 135, published: ["C", "F"] };
const fda21: Limit = { c: 21, f: 70, published: ["C", "F"] };
const fda5: Limit = { c: 5, f: 41, published: ["C", "F"] };
// §3-501.14(B) states no upper figure; ambient is shown as the Food Code's own 21 °C (70 °F).
const fdaAmbient: Limit = { c: 21, f: 70, published: [] };
// USDA FSIS Appendix B prints °F first with °C in parentheses, as below (48 °C beside 120 °F is its own rounding).
const fsis130: Limit = { c: 54.4, f: 130, published: ["F", "C"] };
const fsis120: Limit = { c: 48, f: 120, published: ["F", "C"] };
const fsis80: Limit = { c: 26.7, f: 80, published: ["F", "C"] };
const fsis55: Limit = { c: 12.7, f: 55, published: ["F", "C"] };
const fsis40: Limit = { c: 4.4, f: 40, published: ["F", "C"] };
// FSANZ Standard 3.2.2 prints °C only; °F derived as in deriveLimit.
const fsanz60: Limit = { c: 60, f: 140, published: ["C"] };
const fsanz21: Limit = { c: 21, f: 69.8, published: ["C"] };
const fsanz5: Limit = { c: 5, f: 41, published: ["C"] };

/** Reheating for hot holding: all parts of the food to 74 °C (165 °F) for 15 s. */
export const reheat: { limit: Limit; citation: string; source: string } = {
  limit: { c: 74, f: 165, published: ["C", "F"] },
  citation: "FDA Food Code 2022 §3-403.11",
  source: "FDA Food Code 2022 §3-403.11: reheated so that all parts of the food reach at least 74 °C (165 °F) for 15 seconds",
};

export const ruleSets: RuleSet[] = [
  {
    code: "fda-3-501.14-a",
    version: 1,
    edition: "2022",
    name: "US FDA Food Code — cooked TCS food",
    citation: "FDA Food Code 2022 §3-501.14(A)",
    source: "FDA Food Code 2022 §3-501.14(A): 57 °C (135 °F) to 21 °C (70 °F) within 2 h, and to 5 °C (41 °F) or less within a total of 6 h",
    origin: "published",
    clockStartsAt: "upper-limit",
    stages: [stage(fda57, fda21, 120, "start"), stage(fda57, fda5, 360, "start")],
    continueTo: null,
    advisories: [],
  },
  {
    code: "fda-3-501.14-a-additional",
    version: 1,
    edition: "2022",
    name: "US FDA Food Code — two stages, second clock from the end of the first",
    citation: "FDA Food Code 2022 §3-501.14(A), as worded on many local cooling logs",
    source: "Wording of many local cooling logs under FDA Food Code §3-501.14(A): 135 °F to 70 °F within 2 h, then 70 °F to 41 °F within an additional 4 h",
    origin: "published",
    clockStartsAt: "upper-limit",
    stages: [stage(fda57, fda21, 120, "start"), stage(fda21, fda5, 240, "previous-stage")],
    continueTo: null,
    advisories: [],
  },
  {
    code: "fda-3-501.14-b",
    version: 1,
    edition: "2022",
    name: "US FDA Food Code — prepared from ambient-temperature ingredients",
    citation: "FDA Food Code 2022 §3-501.14(B)",
    source: "FDA Food Code 2022 §3-501.14(B): within 4 h to 5 °C (41 °F) or less if prepared from ingredients at ambient temperature. It states no upper figure: the clock starts when the batch starts, and ambient is shown as 21 °C (70 °F)",
    origin: "published",
    clockStartsAt: "batch-start",
    stages: [stage(fdaAmbient, fda5, 240, "start")],
    continueTo: null,
    advisories: [],
  },
  {
    code: "fsis-appendix-b-1",
    version: 1,
    edition: "FSIS-GD-2021-13",
    name: "USDA FSIS Appendix B — option 1",
    citation: "USDA FSIS Appendix B, option 1",
    source: "USDA FSIS Appendix B stabilization guideline, option 1: 130 °F (54.4 °C) to 80 °F (26.7 °C) within 1.5 h, then to 40 °F (4.4 °C) within 5 h more",
    origin: "published",
    clockStartsAt: "upper-limit",
    stages: [stage(fsis130, fsis80, 90, "start"), stage(fsis80, fsis40, 300, "previous-stage")],
    continueTo: null,
    advisories: [],
  },
  {
    code: "fsis-appendix-b-2",
    version: 1,
    edition: "FSIS-GD-2021-13",
    name: "USDA FSIS Appendix B — option 2",
    citation: "USDA FSIS Appendix B, option 2",
    source: "USDA FSIS Appendix B stabilization guideline, option 2: 120 °F (48 °C) to 55 °F (12.7 °C) within 6 h, then continue to 40 °F (4.4 °C); above 80 °F (26.7 °C) for more than 1 h makes compliance less certain",
    origin: "published",
    clockStartsAt: "upper-limit",
    stages: [stage(fsis120, fsis55, 360, "start")],
    continueTo: fsis40,
    advisories: [
      {
        code: "fsis-b2-above-80f-over-1h",
        above: fsis80,
        forMinutes: 60,
        note: "Above 80 °F (26.7 °C) for more than 1 h: compliance with option 2 is less certain (USDA FSIS Appendix B)",
      },
    ],
  },
  {
    code: "fsanz-3.2.2-7",
    version: 1,
    edition: "Standard 3.2.2",
    name: "Australia / New Zealand — FSANZ Standard 3.2.2",
    citation: "FSANZ Standard 3.2.2 clause 7(3)",
    source: "FSANZ Food Standards Code, Standard 3.2.2 clause 7(3): 60 °C to 21 °C within 2 h, then to 5 °C within a further 4 h",
    origin: "published",
    clockStartsAt: "upper-limit",
    stages: [stage(fsanz60, fsanz21, 120, "start"), stage(fsanz21, fsanz5, 240, "previous-stage")],
    continueTo: null,
    advisories: [],
  },
];

export const ruleSetCodes = ruleSets.map((r) => r.code) as [string, ...string[]];

export function getRuleSet(code: string): RuleSet | undefined {
  return ruleSets.find((r) => r.code === code);
}

// ——— A site's own validated schedule ———

// Both figures given: they must agree within 1 °C, which admits a source's own rounding (120 °F is
// printed beside 48 °C in USDA FSIS Appendix B) and refuses a mistyped figure.
const AGREE_WITHIN_C = 1;

const LimitInputSchema = z
  .object({ c: z.number().min(-40).max(100).optional(), f: z.number().min(-40).max(212).optional() })
  .refine((l) => l.c !== undefined || l.f !== undefined, { message: "rules.limitNeedsUnit" })
  .refine((l) => l.c === undefined || l.f === undefined || Math.abs(toCelsius(l.f, "F") - l.c) <= AGREE_WITHIN_C, {
    message: "rules.limitUnitsDisagree",
  });

type LimitInput = z.infer<typeof LimitInputSchema>;

function resolveLimit(l: LimitInput, round: "down" | "up"): Limit {
  if (l.c !== undefined && l.f !== undefined) return { c: l.c, f: l.f, published: ["C", "F"] };
  return l.c !== undefined ? deriveLimit(l.c, "C", round) : deriveLimit(l.f!, "F", round);
}

export const CustomRuleSetSchema = z
  .object({
    code: z
      .string()
      .regex(/^[a-z0-9]+(?:[-.][a-z0-9]+)*$/, { message: "rules.codeFormat" })
      .max(60)
      .refine((code) => !ruleSetCodes.includes(code), { message: "rules.codeTaken" }),
    version: z.number().int().positive(),
    name: text().min(1).max(120),
    /** Who validated the schedule and where it is written down (HACCP plan, variance). */
    citation: text().min(1).max(200),
    source: text().min(1).max(1000),
    clockStartsAt: z.enum(["upper-limit", "batch-start"]).default("upper-limit"),
    /** The temperature that starts the clock. */
    upper: LimitInputSchema,
    stages: z
      .array(
        z.object({
          to: LimitInputSchema,
          withinMinutes: z.number().int().positive().max(24 * 60),
          clockFrom: z.enum(["start", "previous-stage"]),
        }),
      )
      .min(1)
      .max(4),
    continueTo: LimitInputSchema.optional(),
  })
  .superRefine((s, ctx) => {
    // Zod runs this after field issues too; those are reported already.
    const given = [s.upper, ...s.stages.map((st) => st.to), ...(s.continueTo ? [s.continueTo] : [])];
    if (s.stages.length === 0 || given.some((l) => l.c === undefined && l.f === undefined)) return;
    if (s.stages[0].clockFrom !== "start") ctx.addIssue({ code: "custom", path: ["stages", 0, "clockFrom"], message: "rules.firstStageFromStart" });
    const limits = [resolveLimit(s.upper, "up"), ...s.stages.map((st) => resolveLimit(st.to, "down"))];
    if (s.continueTo) limits.push(resolveLimit(s.continueTo, "down"));
    for (let i = 1; i < limits.length; i++) {
      if (limits[i].c >= limits[i - 1].c || limits[i].f >= limits[i - 1].f) {
        const path = i <= s.stages.length ? ["stages", i - 1, "to"] : ["continueTo"];
        ctx.addIssue({ code: "custom", path, message: "rules.stagesDescending" });
      }
    }
    for (let i = 1; i < s.stages.length; i++) {
      const [a, b] = [s.stages[i - 1], s.stages[i]];
      if (a.clockFrom === "start" && b.clockFrom === "start" && b.withinMinutes <= a.withinMinutes)
        ctx.addIssue({ code: "custom", path: ["stages", i, "withinMinutes"], message: "rules.totalTimeGrows" });
    }
  });

export type CustomRuleSetInput = z.input<typeof CustomRuleSetSchema>;

/** Builds a rule set from a site's schedule; throws a ZodError when the schedule is not valid. */
export function buildCustomRuleSet(input: CustomRuleSetInput): RuleSet {
  const s = CustomRuleSetSchema.parse(input);
  const upper = resolveLimit(s.upper, "up");
  const targets = s.stages.map((st) => resolveLimit(st.to, "down"));
  return {
    code: s.code,
    version: s.version,
    edition: `v${s.version}`,
    name: s.name,
    citation: s.citation,
    source: s.source,
    origin: "site",
    clockStartsAt: s.clockStartsAt,
    stages: s.stages.map((st, i) => stage(st.clockFrom === "start" ? upper : targets[i - 1], targets[i], st.withinMinutes, st.clockFrom)),
    continueTo: s.continueTo ? resolveLimit(s.continueTo, "down") : null,
    advisories: [],
  };
}
