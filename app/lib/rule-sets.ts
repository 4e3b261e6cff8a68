// Cooling rule sets: the critical limits of each stage, as data. Each cites its source.
// Temperatures in °C; the °F figures are the rule's own wording where it is written in °F.

export type Stage = {
  /** Upper temperature at which this stage's clock starts (°C). */
  fromC: number;
  /** Temperature the food must reach (°C), at or below. */
  toC: number;
  /** Minutes allowed. */
  withinMinutes: number;
  /** Where the clock starts: when the food passes the rule's first upper limit, or when the previous stage ends. */
  clockFrom: "start" | "previous-stage";
};

export type RuleSet = {
  code: string;
  name: string;
  version: string;
  source: string;
  stages: Stage[];
};

export const ruleSets: RuleSet[] = [
  {
    code: "fda-3-501.14-a",
    name: "US FDA Food Code — cooked TCS food",
    version: "2022",
    source: "FDA Food Code 2022 §3-501.14(A): 57 °C (135 °F) to 21 °C (70 °F) within 2 h, and to 5 °C (41 °F) or less within a total of 6 h",
    stages: [
      { fromC: 57, toC: 21, withinMinutes: 120, clockFrom: "start" },
      { fromC: 57, toC: 5, withinMinutes: 360, clockFrom: "start" },
    ],
  },
  {
    code: "fda-3-501.14-a-additional",
    name: "US FDA Food Code — two stages, second clock from the end of the first",
    version: "2022",
    source: "Wording of many local cooling logs under FDA Food Code §3-501.14(A): 135 °F to 70 °F within 2 h, then 70 °F to 41 °F within an additional 4 h",
    stages: [
      { fromC: 57, toC: 21, withinMinutes: 120, clockFrom: "start" },
      { fromC: 21, toC: 5, withinMinutes: 240, clockFrom: "previous-stage" },
    ],
  },
  {
    code: "fda-3-501.14-b",
    name: "US FDA Food Code — prepared from ambient-temperature ingredients",
    version: "2022",
    source: "FDA Food Code 2022 §3-501.14(B): to 5 °C (41 °F) within 4 h",
    stages: [{ fromC: 21, toC: 5, withinMinutes: 240, clockFrom: "start" }],
  },
  {
    code: "fsis-appendix-b-1",
    name: "USDA FSIS Appendix B — option 1",
    version: "FSIS-GD-2021-13",
    source: "USDA FSIS Appendix B stabilization guideline, option 1: 130 °F (54.4 °C) to 80 °F (26.7 °C) within 1.5 h, then to 40 °F (4.4 °C) within 5 h more",
    stages: [
      { fromC: 54.4, toC: 26.7, withinMinutes: 90, clockFrom: "start" },
      { fromC: 26.7, toC: 4.4, withinMinutes: 300, clockFrom: "previous-stage" },
    ],
  },
  {
    code: "fsis-appendix-b-2",
    name: "USDA FSIS Appendix B — option 2",
    version: "FSIS-GD-2021-13",
    source: "USDA FSIS Appendix B stabilization guideline, option 2: 120 °F (48 °C) to 55 °F (12.7 °C) within 6 h, then continue to 40 °F (4.4 °C)",
    stages: [{ fromC: 48, toC: 12.7, withinMinutes: 360, clockFrom: "start" }],
  },
  {
    code: "fsanz-3.2.2-7",
    name: "Australia / New Zealand — FSANZ Standard 3.2.2",
    version: "3.2.2 cl. 7(3)",
    source: "FSANZ Food Standards Code, Standard 3.2.2 clause 7(3): 60 °C to 21 °C within 2 h, then to 5 °C within a further 4 h",
    stages: [
      { fromC: 60, toC: 21, withinMinutes: 120, clockFrom: "start" },
      { fromC: 21, toC: 5, withinMinutes: 240, clockFrom: "previous-stage" },
    ],
  },
];

export const ruleSetCodes = ruleSets.map((r) => r.code) as [string, ...string[]];

export function getRuleSet(code: string): RuleSet | undefined {
  return ruleSets.find((r) => r.code === code);
}
