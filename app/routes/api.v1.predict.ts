import { data } from "react-router";
import { runPredictRequest } from "~/lib/engine/request";
import { readJson } from "~/server/api-batches.server";
import { requireApiCaller } from "~/server/api-tokens.server";
import type { Route } from "./+types/api.v1.predict";

// POST /api/v1/predict: the same request and response as `npm run predict` (README, "Predictor API").
export async function action({ request }: Route.ActionArgs) {
  await requireApiCaller(request);
  if (request.method !== "POST") return data({ error: "Use POST" }, { status: 405 });
  const body = await readJson(request);
  const result = runPredictRequest(body);
  if (!result.ok) return data({ errors: result.errors }, { status: 400 });
  return data(result.response);
}

export const loader = () => data({ error: "Use POST with a JSON body" }, { status: 405 });
