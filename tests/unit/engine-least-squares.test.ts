import { describe, expect, it } from "vitest";
import { fitLeastSquares, invertSmall, solveSmall } from "~/lib/engine/least-squares";

describe("least squares", () => {
  it("a straight line matches the closed-form ordinary least squares, and JᵀJ gives its covariance", () => {
    // Normal equations for y = a·x + b (any statistics text): a = Sxy/Sxx, b = ȳ − a·x̄.
    const xs = [0, 1, 2, 3, 4, 5];
    const ys = [1.1, 2.9, 5.2, 7.1, 8.8, 11.2];
    const n = xs.length;
    const mx = xs.reduce((s, v) => s + v, 0) / n;
    const my = ys.reduce((s, v) => s + v, 0) / n;
    const sxx = xs.reduce((s, v) => s + (v - mx) ** 2, 0);
    const a = xs.reduce((s, v, i) => s + (v - mx) * (ys[i] - my), 0) / sxx;
    const b = my - a * mx;
    const fit = fitLeastSquares(([p, q]) => xs.map((x, i) => ys[i] - (p * x + q)), [0, 0], { lo: [-100, -100], hi: [100, 100], step: [1e-6, 1e-6], tol: 1e-10 });
    expect(fit.p[0]).toBeCloseTo(a, 6);
    expect(fit.p[1]).toBeCloseTo(b, 6);
    // Var(a) = σ²/Sxx with unit σ.
    expect(invertSmall(fit.jtj)[0][0]).toBeCloseTo(1 / sxx, 5);
  });

  it("an exponential decay is recovered in a handful of iterations", () => {
    const ts = [0, 1, 2, 3, 4, 6, 8];
    const ys = ts.map((t) => 40 * Math.exp(-0.35 * t));
    const fit = fitLeastSquares(([k]) => ts.map((t, i) => ys[i] - 40 * Math.exp(-k * t)), [0.05], { lo: [0], hi: [5], step: [1e-6] });
    expect(fit.p[0]).toBeCloseTo(0.35, 6);
    expect(fit.iterations).toBeLessThan(15);
  });

  it("respects its bounds", () => {
    const fit = fitLeastSquares(([p]) => [p - 10], [0], { lo: [-1], hi: [2], step: [1e-6] });
    expect(fit.p[0]).toBe(2);
  });

  it("solves small linear systems with pivoting", () => {
    expect(solveSmall([[0, 1], [1, 0]], [2, 3])).toEqual([3, 2]);
    const x = solveSmall([[2, 1, 1], [1, 3, 2], [1, 0, 0]], [4, 5, 6]);
    expect(x[0]).toBeCloseTo(6, 12);
    expect(2 * x[0] + x[1] + x[2]).toBeCloseTo(4, 12);
  });
});
