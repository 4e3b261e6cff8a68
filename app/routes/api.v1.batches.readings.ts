import { data } from "react-router";
import { apiErrors, assessmentJson, entrantOf, readJson, siteOfBatch } from "~/server/api-batches.server";
import { requireApiCaller } from "~/server/api-tokens.server";
import { assess, ReadingSchema, recordReading } from "~/server/batches.server";
import { isUuid } from "~/server/guards.server";
import type { Route } from "./+types/api.v1.batches.readings";

// POST /api/v1/batches/:id/readings: one reading (idempotent on clientId); a correction names the reading it corrects.
export async function action({ request, params }: Route.ActionArgs) {
  const caller = await requireApiCaller(request);
  if (request.method !== "POST") return data({ error: "Use POST" }, { status: 405 });
  if (!isUuid(params.id)) return data({ errors: { batch: "not found" } }, { status: 404 });
  const site = await siteOfBatch(caller, params.id, true);
  const parsed = ReadingSchema.safeParse(await readJson(request));
  if (!parsed.success) return data({ errors: apiErrors(parsed.error) }, { status: 400 });
  const result = await recordReading(site, entrantOf(caller), params.id, parsed.data);
  if (!result.ok) return data({ errors: result.errors }, { status: result.status });
  const r = result.value;
  // A new reading was assessed as it settled the batch's state; a repeated one is assessed now.
  const a = result.assessment ?? (await assess(site, params.id));
  return data(
    {
      reading: { id: r.id, clientId: r.clientId, value: r.valueEntered, unit: r.unitEntered, valueC: r.valueC, takenAt: r.takenAt.toISOString(), receivedAt: r.receivedAt.toISOString(), late: r.late, corrects: r.correctsReadingId },
      duplicate: !result.created,
      warnings: result.warnings,
      ...assessmentJson(a!),
    },
    { status: result.created ? 201 : 200 },
  );
}

export const loader = () => data({ error: "Use POST" }, { status: 405 });
