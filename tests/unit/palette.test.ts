import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";

// WCAG 2.1 §1.4.3 contrast (minimum): 4.5:1 for body text, 3:1 for large text and UI parts.
// Relative luminance and contrast ratio as defined in WCAG 2.1, "relative luminance" and "contrast ratio".
const css = readFileSync("app/app.css", "utf8");
const colour = (name: string) => {
  const m = new RegExp(`--color-${name}:\\s*(#[0-9a-f]{6})`, "i").exec(css);
  if (!m) throw new Error(`no --color-${name} in app.css`);
  return m[1];
};
const luminance = (hex: string) => {
  const [r, g, b] = [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16) / 255).map((c) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4));
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
};
const contrast = (a: string, b: string) => {
  const [x, y] = [luminance(a), luminance(b)].sort((p, q) => q - p);
  return (x + 0.05) / (y + 0.05);
};

describe("palette contrast (WCAG AA)", () => {
  it("the WCAG formula gives the known extremes: black on white is 21:1", () => {
    expect(contrast("#000000", "#ffffff")).toBeCloseTo(21, 5);
    expect(contrast("#777777", "#ffffff")).toBeCloseTo(4.48, 2); // the often-quoted just-failing grey
  });

  const text: [string, string][] = [
    ["ink", "frost"],
    ["ink-soft", "frost"],
    ["ink-soft", "white"],
    ["glacier", "white"],
    ["glacier-dark", "glacier-light"],
    ["ember", "white"],
    ["ember", "ember-light"],
    ["pine", "pine-light"],
    ["amber", "amber-light"],
    ["ink", "frost-deep"],
    ["ink-soft", "frost-deep"],
  ];
  for (const [fg, bg] of text) {
    it(`${fg} text on ${bg} reaches 4.5:1`, () => {
      const hex = (n: string) => (n === "white" ? "#ffffff" : colour(n));
      expect(contrast(hex(fg), hex(bg))).toBeGreaterThanOrEqual(4.5);
    });
  }

  it("white text on the primary button reaches 4.5:1", () => {
    expect(contrast("#ffffff", colour("glacier"))).toBeGreaterThanOrEqual(4.5);
    expect(contrast("#ffffff", colour("ember"))).toBeGreaterThanOrEqual(4.5);
  });
});
