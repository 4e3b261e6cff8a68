import { data } from "react-router";
import { apiErrors, readJson } from "~/server/api-batches.server";
import { ReadingSchema, recordReading } from "~/server/batches.server";
import { isUuid } from "~/server/guards.server";
import { requireStationEntrant } from "~/server/station-entry.server";
import type { Route } from "./+types/station.batches.readings";

// POST /station/batches/:batchId/readings: the tablet's outbox sends each reading here, in order, as
// soon as it can; the same client id sent again is answered with the stored reading.
export async function action({ request, params }: Route.ActionArgs) {
  const body = (await readJson(request)) as Record<string, unknown>;
  const takenAt = typeof body.takenAt === "string" ? Date.parse(body.takenAt) : Date.now();
  const { site, entrant } = await requireStationEntrant(request, body.attribution, takenAt);
  if (!isUuid(params.batchId)) return data({ errors: { batch: "not found" } }, { status: 404 });
  const { attribution: _a, ...reading } = body;
  const parsed = ReadingSchema.safeParse({ ...reading, unit: site.temperatureUnit });
  if (!parsed.success) return data({ errors: apiErrors(parsed.error) }, { status: 400 });
  const result = await recordReading(site, entrant, params.batchId, parsed.data);
  if (!result.ok) return data({ errors: result.errors }, { status: result.status });
  return data({ id: result.value.id, duplicate: !result.created, warnings: result.warnings }, { status: result.created ? 201 : 200 });
}
