import type { BatchModel, Prior } from "./calibrate";
import type { Geometry } from "./conduction";
import { getCoolingMethod, panGeometry, surfaceCoefficients, type PanSelection, type SurfaceCoefficients } from "./equipment";
import type { Alternative } from "./predict";
import type { FoodProperties } from "./properties";

export type CustomPan = { lengthMm: number; widthMm: number; depthMm: number };

/** Dimensions and face areas of the food in a pan, for a catalogue size or a site's own pan. */
function fillOf(pan: PanSelection | CustomPan, fillDepthMm: number, method: string) {
  if ("size" in pan) {
    const g = panGeometry(pan, fillDepthMm, method);
    return { lengthM: g.lengthM, widthM: g.widthM, fillDepthM: g.fillDepthM, areas: { top: g.faces.top.areaM2, bottom: g.faces.bottom.areaM2, walls: g.faces.walls.areaM2 } };
  }
  if (fillDepthMm > pan.depthMm) throw new RangeError(`Fill depth ${fillDepthMm} mm is more than the pan's depth of ${pan.depthMm} mm`);
  const [l, w, d] = [pan.lengthMm / 1000, pan.widthMm / 1000, fillDepthMm / 1000];
  return { lengthM: l, widthM: w, fillDepthM: d, areas: { top: l * w, bottom: l * w, walls: 2 * (l + w) * d } };
}

/** What a cook enters when starting a batch, as far as the physics is concerned. */
export type BatchSetup = {
  food: FoodProperties;
  /** A catalogue pan, or a site's own pan by its inside dimensions. */
  pan: PanSelection | CustomPan;
  fillDepthMm: number;
  panMaterial: string;
  lid: boolean;
  method: string;
  startC: number;
  /** The equipment's learned surface factor from earlier batches (ln-scale mean and sd), if any. */
  learned?: { lnS: number; sd: number; batches: number };
};

/**
 * One ambient temperature for the whole body: the faces' media weighted by h·A (a face in a 0 °C bath
 * counts far more than a top in 21 °C air). An exact result for the lumped limit and the engine's
 * stated approximation otherwise.
 */
export function effectiveAmbient(sc: SurfaceCoefficients, areas: { top: number; bottom: number; walls: number }) {
  const w = [sc.topH * areas.top, sc.bottomH * areas.bottom, sc.wallH * areas.walls];
  const t = [sc.mediumC.top, sc.mediumC.bottom, sc.mediumC.wall];
  const sum = w.reduce((a, b) => a + b, 0);
  return sum > 0 ? w.reduce((a, wi, i) => a + wi * t[i], 0) / sum : sc.mediumC.top;
}

function bodyFor(setup: Pick<BatchSetup, "pan" | "fillDepthMm" | "panMaterial" | "lid" | "method">) {
  const g = fillOf(setup.pan, setup.fillDepthMm, setup.method);
  const sc = surfaceCoefficients(setup.method, { lid: setup.lid, panMaterial: setup.panMaterial });
  const geometry: Geometry = {
    shape: "block",
    lengthM: g.lengthM,
    widthM: g.widthM,
    depthM: g.fillDepthM,
    wallH: sc.wallH,
    bottomH: sc.bottomH,
    topH: sc.topH,
  };
  const ambientC = effectiveAmbient(sc, g.areas);
  return { geometry, ambientC, sc };
}

/** The method's plausible range read as ±2 sd of ln s around its default. */
function methodSpread(sc: SurfaceCoefficients) {
  const [lo, hi] = [sc.range.top[0] + sc.range.bottom[0], sc.range.top[1] + sc.range.bottom[1]];
  return Math.max(0.15, Math.log(Math.max(hi, 1e-6) / Math.max(lo, 1e-6)) / 4);
}

export function buildBatchModel(setup: BatchSetup): { model: BatchModel; prior: Prior; surfaces: SurfaceCoefficients } {
  const { geometry, ambientC, sc } = bodyFor(setup);
  const model: BatchModel = { geometry, k: setup.food.k, alpha: setup.food.alpha, ambientC, initialC: setup.startC };
  // The prior on the surface factor: the equipment's own history when it has one, else the method's
  // plausible range read as ±2 sd around its default.
  const methodSd = methodSpread(sc);
  const prior: Prior = {
    lnS: setup.learned && setup.learned.batches > 0 ? { mean: setup.learned.lnS, sd: Math.max(0.08, setup.learned.sd) } : { mean: 0, sd: methodSd },
    lnF: { mean: 0, sd: 0.15 },
  };
  return { model, prior, surfaces: sc };
}

/** The what-ifs a kitchen can actually do now: lid off, ice bath, blast chiller, shallower pans. */
export function standardAlternatives(setup: BatchSetup): (Alternative & { label: string })[] {
  const out: (Alternative & { label: string })[] = [];
  if (setup.lid) {
    const body = bodyFor({ ...setup, lid: false });
    out.push({ id: "lid-off", label: "Take the lid off", geometry: body.geometry, ambientC: body.ambientC, transfer: "continue", keepsSurfaceFactor: true });
  }
  for (const method of ["ice-bath-stirred", "ice-bath-still", "blast-chiller"]) {
    if (method === setup.method || !getCoolingMethod(method)) continue;
    const body = bodyFor({ ...setup, method, lid: false });
    const surfaceSd = methodSpread(body.sc);
    out.push({ id: method, label: getCoolingMethod(method)!.name, geometry: body.geometry, ambientC: body.ambientC, transfer: "continue", keepsSurfaceFactor: false, surfaceSd });
  }
  // Same food in twice the pans at half the depth, down to a 25 mm layer (common practice: 2 in or less).
  const shallower = Math.max(25, Math.round(setup.fillDepthMm / 2));
  if (shallower < setup.fillDepthMm) {
    const body = bodyFor({ ...setup, fillDepthMm: shallower });
    out.push({
      id: "shallower-pans",
      label: `Split into pans ${shallower} mm deep`,
      geometry: body.geometry,
      ambientC: body.ambientC,
      transfer: "remix",
      keepsSurfaceFactor: true,
    });
  }
  return out;
}
