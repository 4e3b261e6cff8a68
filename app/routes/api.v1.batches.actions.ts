import { data } from "react-router";
import { apiErrors, assessmentJson, entrantOf, readJson, siteOfBatch } from "~/server/api-batches.server";
import { requireApiCaller } from "~/server/api-tokens.server";
import { assess, CorrectiveActionSchema, takeCorrectiveAction } from "~/server/batches.server";
import { isUuid } from "~/server/guards.server";
import type { Route } from "./+types/api.v1.batches.actions";

// POST /api/v1/batches/:id/actions: a corrective action (change_method or discard), idempotent on clientId.
export async function action({ request, params }: Route.ActionArgs) {
  const caller = await requireApiCaller(request);
  if (!isUuid(params.id)) return data({ errors: { batch: "not found" } }, { status: 404 });
  const site = await siteOfBatch(caller, params.id, true);
  const parsed = CorrectiveActionSchema.safeParse(await readJson(request));
  if (!parsed.success) return data({ errors: apiErrors(parsed.error) }, { status: 400 });
  const result = await takeCorrectiveAction(site, entrantOf(caller), params.id, parsed.data);
  if (!result.ok) return data({ errors: result.errors }, { status: result.status });
  const a = await assess(site, params.id);
  return data({ action: { id: result.value.id, kind: result.value.kind, takenAt: result.value.takenAt.toISOString() }, duplicate: !result.created, ...assessmentJson(a!) }, { status: result.created ? 201 : 200 });
}

export const loader = () => data({ error: "Use POST" }, { status: 405 });
