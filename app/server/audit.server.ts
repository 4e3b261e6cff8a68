import { auditEvents } from "~db/schema";
import type { Db, Tx } from "./db.server";

export type Actor =
  | { kind: "user"; userId: string; label?: string }
  | { kind: "station"; userId: string; deviceId: string; label?: string }
  | { kind: "api_token"; tokenId: string; label?: string }
  | { kind: "share_link"; linkId: string; label?: string }
  | { kind: "system"; label: string };

/** Every mutation writes one of these in the same transaction as the change. */
export async function recordAudit(
  db: Db | Tx,
  event: {
    actor: Actor;
    organisationId: string | null;
    siteId?: string | null;
    action: string;
    entity: string;
    entityId?: string | null;
    data?: Record<string, unknown>;
  },
) {
  const { actor } = event;
  const extra: Record<string, unknown> = {};
  if (actor.kind === "station") extra.deviceId = actor.deviceId;
  if (actor.kind === "api_token") extra.tokenId = actor.tokenId;
  if (actor.kind === "share_link") extra.linkId = actor.linkId;
  await db.insert(auditEvents).values({
    organisationId: event.organisationId,
    siteId: event.siteId ?? null,
    actorKind: actor.kind,
    actorUserId: actor.kind === "user" || actor.kind === "station" ? actor.userId : null,
    actorLabel: actor.label ?? null,
    action: event.action,
    entity: event.entity,
    entityId: event.entityId ?? null,
    data: { ...extra, ...(event.data ?? {}) },
  });
}
