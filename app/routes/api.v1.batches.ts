import { data } from "react-router";
import { inArray } from "drizzle-orm";
import { sites } from "~db/schema";
import { apiErrors, assessmentJson, entrantOf, readJson, siteForStart } from "~/server/api-batches.server";
import { requireApiCaller } from "~/server/api-tokens.server";
import { assess, listActive, StartBatchSchema, startBatch } from "~/server/batches.server";
import { db } from "~/server/db.server";
import type { Route } from "./+types/api.v1.batches";

// GET /api/v1/batches?status=active: the caller's active batches, each with its current prediction.
export async function loader({ request }: Route.LoaderArgs) {
  const caller = await requireApiCaller(request);
  const url = new URL(request.url);
  if (url.searchParams.get("status") !== "active") return data({ errors: { status: 'only status=active is supported' } }, { status: 400 });
  const siteRows = caller.siteIds.length ? await db.select().from(sites).where(inArray(sites.id, caller.siteIds)) : [];
  const list = await listActive(siteRows);
  return data({
    batches: list.map(({ batch, product, readings, assessment }) => ({
      id: batch.id,
      siteId: batch.siteId,
      product: product.name,
      lotCode: batch.lotCode,
      startedAt: batch.startedAt.toISOString(),
      state: batch.state,
      lastReading: readings.length ? { value: readings.at(-1)!.valueEntered, unit: readings.at(-1)!.unitEntered, takenAt: readings.at(-1)!.takenAt.toISOString() } : null,
      ...assessmentJson(assessment),
    })),
  });
}

// POST /api/v1/batches: start a batch (idempotent on clientId).
export async function action({ request }: Route.ActionArgs) {
  const caller = await requireApiCaller(request);
  if (request.method !== "POST") return data({ error: "Use POST" }, { status: 405 });
  const body = await readJson(request);
  const site = await siteForStart(caller, (body as { siteId?: unknown })?.siteId);
  const parsed = StartBatchSchema.safeParse(body);
  if (!parsed.success) return data({ errors: apiErrors(parsed.error) }, { status: 400 });
  const result = await startBatch(site, entrantOf(caller), parsed.data);
  if (!result.ok) return data({ errors: result.errors }, { status: result.status });
  const a = result.assessment ?? (await assess(site, result.value.id));
  return data(
    { batch: { id: result.value.id, siteId: site.id, lotCode: result.value.lotCode, state: result.value.state, startedAt: result.value.startedAt.toISOString(), startNotCaptured: result.value.startNotCaptured }, warnings: result.warnings, ...assessmentJson(a!) },
    { status: result.created ? 201 : 200 },
  );
}
