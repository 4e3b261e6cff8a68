import { and, asc, eq } from "drizzle-orm";
import { batches, products, readings, sites, users } from "~db/schema";
import { bandSeries, predictedSeries, sampleDepthTime, spreadByTemperature } from "~/lib/chart-data";
import { getRuleSet } from "~/lib/rule-sets";
import type { Assessment } from "~/lib/engine/assess";
import { toCelsius } from "~/lib/temperature";
import { assess } from "./batches.server";
import { db } from "./db.server";

export type BatchView = NonNullable<Awaited<ReturnType<typeof loadBatchView>>>;

/**
 * The cooling chart's series from an assessment: the readings are the record, the curve and band the
 * model's. Shared by the batch page and the pictures in the records export.
 */
export function chartSeries(a: Assessment, record: { t: number; c: number }[], now: number) {
  const sol = a.solution;
  const from = record.at(-1)?.t ?? a.originAt;
  // Far enough to show every deadline (provisional ones too) and when the model reaches the last limit, at most 12 h.
  const horizon = Math.max(...a.prediction.stages.map((s) => Math.max(s.deadlineS ?? 0, s.highS ?? s.reachS ?? 0)));
  const until = Math.min(a.originAt + 12 * 3600_000, Math.max(a.originAt + horizon * 1000, now, from + 3600_000));
  const predicted = predictedSeries(sol, a.originAt, from, until, 100);
  // Only the readings the model was fitted on (after a reheat or a move) bound its band.
  const band = bandSeries(sol, a.originAt, predicted, spreadByTemperature(a.prediction.stages), { readings: record.filter((r) => r.t >= a.originAt) });
  const stages = a.evaluation.stages.map((s, i) => ({
    label: `${s.stage}`,
    c: toCelsius(s.limit.value, s.limit.unit),
    deadline: s.deadline,
    status: s.status,
    predictedAt: a.prediction.stages[i]?.reachS == null ? null : a.originAt + a.prediction.stages[i].reachS! * 1000,
  }));
  return { predicted, band, stages };
}

/**
 * Everything a batch page shows, as plain data: the batch, the rule's record, the model's prediction,
 * the series of the pictures and every entry with who made it. Scoped by the site, so a batch of
 * another site is null. Shared by the station tablet, the manager's page and read-only views.
 */
export async function loadBatchView(siteId: string, batchId: string, now = Date.now()) {
  const [row] = await db
    .select({ batch: batches, product: products.name, site: sites })
    .from(batches)
    .innerJoin(products, eq(products.id, batches.productId))
    .innerJoin(sites, eq(sites.id, batches.siteId))
    .where(and(eq(batches.id, batchId), eq(batches.siteId, siteId)));
  if (!row) return null;
  const [a, rows] = await Promise.all([
    assess(row.site, row.batch.id, now),
    db
      .select({ r: readings, who: users.name })
      .from(readings)
      .leftJoin(users, eq(users.id, readings.enteredBy))
      .where(eq(readings.batchId, row.batch.id))
      .orderBy(asc(readings.takenAt)),
  ]);
  const record = rows.filter(({ r }) => !r.correctsReadingId).map(({ r }) => ({ t: r.takenAt.getTime(), c: r.valueC, late: r.late }));
  const { predicted, band, stages: chartStages } = chartSeries(a!, record, now);
  const sol = a!.solution;
  const from = record.at(-1)?.t ?? a!.originAt;
  const grid = sampleDepthTime(sol, a!.originAt, Math.max(now, from, a!.originAt + 600_000), 40, 20);
  const rule = getRuleSet(row.batch.ruleSetCode)!;
  return {
    now,
    unit: row.site.temperatureUnit,
    timeZone: row.site.timeZone,
    chart: { record, predicted, band, grid, stages: chartStages, dangerZone: { lowC: rule.stages.at(-1)!.to.c, highC: rule.stages[0].from.c } },
    batch: {
      id: row.batch.id,
      product: row.product,
      lotCode: row.batch.lotCode,
      state: row.batch.state,
      startedAt: row.batch.startedAt.getTime(),
      endedAt: row.batch.endedAt?.getTime() ?? null,
      startNotCaptured: row.batch.startNotCaptured,
    },
    record: {
      outcome: a!.evaluation.outcome,
      nextStep: a!.evaluation.nextStep,
      stages: a!.evaluation.stages.map((s) => ({ stage: s.stage, limit: s.limit, deadline: s.deadline, status: s.status })),
    },
    prediction: {
      verdict: a!.prediction.verdict,
      originAt: a!.originAt,
      stages: a!.prediction.stages.map((s) => ({ reachS: s.reachS, lowS: s.lowS, highS: s.highS, probability: s.probability })),
      whatIfs: a!.prediction.alternatives.map((w) => ({ id: w.id, label: a!.alternativeLabels[w.id], verdict: w.verdict, finishS: w.finishS })),
    },
    readings: rows.map(({ r, who }) => ({
      id: r.id,
      value: r.valueEntered,
      unit: r.unitEntered,
      takenAt: r.takenAt.getTime(),
      receivedAt: r.receivedAt.getTime(),
      late: r.late,
      kind: r.kind,
      who: who ?? (r.apiTokenId ? "API" : "—"),
      corrects: r.correctsReadingId,
      reason: r.correctionReason,
      photoId: r.photoId,
    })),
  };
}
