import { data } from "react-router";
import { apiErrors, readJson } from "~/server/api-batches.server";
import { ReadingSchema, recordReading } from "~/server/batches.server";
import { isUuid } from "~/server/guards.server";
import { requireStationEntrant } from "~/server/station-entry.server";
import type { Route } from "./+types/station.batches.readings";

// POST /station/batches/:batchId/readings: the tablet's outbox sends each reading here, in order, as
// soon as it can; the same client id sent again is answered with the stored reading.
export async function action({ request, params }: Route.ActionArgs) {
  const raw = await readJson(request);
  if (!raw || typeof raw !== "object" || Array.isArray(raw)) return data({ errors: { request: "The body must be one JSON object." } }, { status: 400 });
  const body = raw as Record<string, unknown>;
  // The attribution is checked against the moment the cook saved the entry (a reading may be taken
  // earlier and entered late; its own time is checked by the record's rules).
  const enteredAt = typeof body.enteredAt === "string" ? Date.parse(body.enteredAt) : typeof body.takenAt === "string" ? Date.parse(body.takenAt) : NaN;
  const { site, entrant } = await requireStationEntrant(request, body.attribution, enteredAt);
  if (!isUuid(params.batchId)) return data({ errors: { batch: "not found" } }, { status: 404 });
  const { attribution: _a, enteredAt: _e, ...reading } = body;
  // The unit the cook saw when the entry was made travels with it (a site may switch while it waits).
  const parsed = ReadingSchema.safeParse({ unit: site.temperatureUnit, ...reading });
  if (!parsed.success) return data({ errors: apiErrors(parsed.error) }, { status: 400 });
  const result = await recordReading(site, entrant, params.batchId, parsed.data);
  if (!result.ok) return data({ errors: result.errors }, { status: result.status });
  return data({ id: result.value.id, duplicate: !result.created, warnings: result.warnings }, { status: result.created ? 201 : 200 });
}

// Entries are posted; a GET is a mistake, said plainly.
export const loader = () => data({ error: "Use POST" }, { status: 405 });
