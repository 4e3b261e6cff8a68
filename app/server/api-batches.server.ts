import { and, eq, inArray, sql } from "drizzle-orm";
import { data } from "react-router";
import type { z } from "zod";
import { batches, sites } from "~db/schema";
import { CAUTION } from "~/lib/engine/request";
import type { Assessment } from "~/lib/engine/assess";
import type { ApiCaller } from "./api-tokens.server";
import type { Entrant } from "./batches.server";
import { db, inUuids } from "./db.server";
import { readBody } from "./photos.server";

/** zod issues as `{ "field.path": message }`, the API's error shape. */
export function apiErrors(error: z.ZodError) {
  const out: Record<string, string> = {};
  for (const i of error.issues) out[i.path.join(".") || "request"] ??= i.message;
  return out;
}

/** A JSON body of at most 1 MB (the API's requests are a few kilobytes), counted as it arrives. */
export async function readJson(request: Request): Promise<unknown> {
  const bytes = await readBody(request, 1_000_000);
  try {
    return JSON.parse(bytes.toString("utf8"));
  } catch {
    throw data({ errors: { request: "The body must be one JSON object (Content-Type: application/json)." } }, { status: 400 });
  }
}

const ENTRY_ROLES = ["cook", "manager", "admin"];

/** The sites a caller may make entries at (QA reads but does not log). */
export function entrySiteIds(caller: ApiCaller) {
  if (caller.kind === "api_token") return caller.siteIds;
  return caller.user.memberships.filter((m) => ENTRY_ROLES.includes(m.role)).map((m) => m.siteId);
}

export function entrantOf(caller: ApiCaller): Entrant {
  return caller.kind === "api_token"
    ? { actor: { kind: "api_token", tokenId: caller.tokenId }, userId: null, source: "api", apiTokenId: caller.tokenId }
    : { actor: { kind: "user", userId: caller.user.id }, userId: caller.user.id, source: "web" };
}

/** The site a batch start goes to: the token's own, or the one named (and allowed) for a user. */
export async function siteForStart(caller: ApiCaller, siteId: unknown) {
  const allowed = entrySiteIds(caller);
  const wanted = typeof siteId === "string" ? siteId : allowed.length === 1 ? allowed[0] : caller.siteIds.length === 1 ? caller.siteIds[0] : null;
  if (!wanted) throw data({ errors: { siteId: "Name the site (siteId): you work at more than one" } }, { status: 400 });
  if (!caller.siteIds.includes(wanted)) throw data({ errors: { siteId: "not found" } }, { status: 404 });
  if (!allowed.includes(wanted)) throw data({ error: "Your role at this site does not make entries" }, { status: 403 });
  const [site] = await db.select().from(sites).where(and(eq(sites.id, wanted), eq(sites.organisationId, caller.organisationId)));
  if (!site) throw data({ errors: { siteId: "not found" } }, { status: 404 });
  return site;
}

// Asked on every entry through the API: built once, prepared once per connection.
const siteOfBatchStatement = db
  .select({ site: sites })
  .from(batches)
  .innerJoin(sites, eq(sites.id, batches.siteId))
  .where(and(eq(batches.id, sql.placeholder("batchId")), inUuids(batches.siteId, "siteIds")))
  .prepare("cw_site_of_batch");

/** The site of a batch the caller may see; 404 for anything else. */
export async function siteOfBatch(caller: ApiCaller, batchId: string, forEntry: boolean) {
  const visible = forEntry ? entrySiteIds(caller) : caller.siteIds;
  const [row] = await siteOfBatchStatement.execute({ batchId, siteIds: visible });
  if (!row) {
    if (forEntry && caller.siteIds.length) {
      const [seen] = await db.select({ id: batches.id }).from(batches).where(and(eq(batches.id, batchId), inArray(batches.siteId, caller.siteIds)));
      if (seen) throw data({ error: "Your role at this site does not make entries" }, { status: 403 });
    }
    throw data({ errors: { batch: "not found" } }, { status: 404 });
  }
  return row.site;
}

const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());

/** The JSON view of an assessment: the record first, the guidance beside it. */
export function assessmentJson(a: Assessment) {
  const at = (s: number | null) => (s == null ? null : iso(a.originAt + s * 1000));
  return {
    record: {
      outcome: a.evaluation.outcome,
      nextStep: a.evaluation.nextStep,
      clockStart: a.evaluation.clockStart && { at: iso(a.evaluation.clockStart.at), basis: a.evaluation.clockStart.basis },
      stages: a.evaluation.stages.map((s) => ({ stage: s.stage, limit: s.limit, deadline: iso(s.deadline), status: s.status, metBy: s.metBy })),
      flags: a.evaluation.flags.map((f) => f.kind),
    },
    prediction: {
      verdict: a.prediction.verdict,
      provisionalDeadlines: a.provisionalDeadlines,
      stages: a.prediction.stages.map((s) => ({ targetC: s.targetC, reachAt: at(s.reachS), low: at(s.lowS), high: at(s.highS), probability: s.probability })),
      now: a.prediction.now,
      whatIfs: a.prediction.alternatives.map((w) => ({ id: w.id, label: a.alternativeLabels[w.id], verdict: w.verdict, finishAt: at(w.finishS) })),
      caution: CAUTION,
    },
  };
}
