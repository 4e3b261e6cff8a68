import { sql } from "drizzle-orm";
import {
  bigint,
  bigserial,
  date,
  doublePrecision,
  boolean,
  index,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  text,
  timestamp,
  uniqueIndex,
  uuid,
  varchar,
} from "drizzle-orm/pg-core";

// Shared column helpers. SQL names are snake_case through the `casing` option.
const id = () => uuid().primaryKey().defaultRandom();
const createdAt = () => timestamp({ withTimezone: true }).notNull().defaultNow();
const at = () => timestamp({ withTimezone: true });

export const roleEnum = pgEnum("role", ["cook", "manager", "qa", "admin"]);
export const temperatureUnitEnum = pgEnum("temperature_unit", ["F", "C"]);
export const languageEnum = pgEnum("language", ["en", "es"]);
export const actorKindEnum = pgEnum("actor_kind", ["user", "station", "api_token", "share_link", "system"]);

export const organisations = pgTable("organisations", {
  id: id(),
  name: text().notNull(),
  slug: varchar({ length: 80 }).notNull().unique(),
  createdAt: createdAt(),
});

export const sites = pgTable(
  "sites",
  {
    id: id(),
    organisationId: uuid()
      .notNull()
      .references(() => organisations.id),
    name: text().notNull(),
    timeZone: text().notNull(),
    temperatureUnit: temperatureUnitEnum().notNull().default("F"),
    // Code of a versioned rule set in app/lib/rule-sets.ts (e.g. "fda-3-501.14-a").
    ruleSetCode: text().notNull(),
    readingIntervalMinutes: integer().notNull().default(30),
    overdueGraceMinutes: integer().notNull().default(10),
    retentionDays: integer().notNull().default(730),
    allowSelfVerification: boolean().notNull().default(false),
    // An alert nobody acknowledges goes to the next recipient after this long.
    escalateAfterMinutes: integer().notNull().default(15),
    // Local hour (site time zone) of the daily digest of records waiting for verification.
    digestHour: integer().notNull().default(21),
    // The week's records e-mailed to QA: ISO weekday (1 = Monday) and local hour, for the week before.
    weeklyRecordsWeekday: integer().notNull().default(1),
    weeklyRecordsHour: integer().notNull().default(6),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.organisationId)],
);

export const users = pgTable(
  "users",
  {
    id: id(),
    organisationId: uuid()
      .notNull()
      .references(() => organisations.id),
    name: text().notNull(),
    // Stored lower-case; unique across the product so sign-in needs no organisation.
    email: text().notNull(),
    emailVerified: at(),
    passwordHash: text(),
    language: languageEnum().notNull().default("en"),
    pinHash: text(),
    pinFailedAttempts: integer().notNull().default(0),
    pinLockedAt: at(),
    // Raised by a password reset or change and by signing out: every older session stops working.
    sessionVersion: integer().notNull().default(0),
    active: boolean().notNull().default(true),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.email), index().on(t.organisationId)],
);

export const memberships = pgTable(
  "memberships",
  {
    id: id(),
    userId: uuid()
      .notNull()
      .references(() => users.id),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    role: roleEnum().notNull(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.userId, t.siteId), index().on(t.siteId)],
);

export const invitations = pgTable(
  "invitations",
  {
    id: id(),
    organisationId: uuid()
      .notNull()
      .references(() => organisations.id),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    email: text().notNull(),
    name: text().notNull(),
    role: roleEnum().notNull(),
    tokenHash: text().notNull().unique(),
    invitedBy: uuid()
      .notNull()
      .references(() => users.id),
    expiresAt: at().notNull(),
    acceptedAt: at(),
    revokedAt: at(),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.siteId)],
);

export const passwordResetTokens = pgTable("password_reset_tokens", {
  id: id(),
  userId: uuid()
    .notNull()
    .references(() => users.id),
  tokenHash: text().notNull().unique(),
  expiresAt: at().notNull(),
  usedAt: at(),
  createdAt: createdAt(),
});

// Tokens for probe gateways and scripts; only the hash is kept, the prefix helps people tell them apart.
export const siteApiTokens = pgTable(
  "site_api_tokens",
  {
    id: id(),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    name: text().notNull(),
    prefix: varchar({ length: 12 }).notNull(),
    tokenHash: text().notNull().unique(),
    createdBy: uuid()
      .notNull()
      .references(() => users.id),
    lastUsedAt: at(),
    revokedAt: at(),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.siteId)],
);

// A shared tablet set up by a manager as a station of one site; cooks attribute entries with their PIN.
export const stationDevices = pgTable(
  "station_devices",
  {
    id: id(),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    name: text().notNull(),
    tokenHash: text().notNull().unique(),
    createdBy: uuid()
      .notNull()
      .references(() => users.id),
    lastSeenAt: at(),
    revokedAt: at(),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.siteId)],
);

// Append-only: a trigger in the migrations refuses UPDATE and DELETE.
export const auditEvents = pgTable(
  "audit_events",
  {
    id: bigserial({ mode: "number" }).primaryKey(),
    organisationId: uuid().references(() => organisations.id),
    siteId: uuid().references(() => sites.id),
    actorKind: actorKindEnum().notNull(),
    actorUserId: uuid().references(() => users.id),
    actorLabel: text(),
    action: text().notNull(),
    entity: text().notNull(),
    entityId: text(),
    data: jsonb().notNull().default(sql`'{}'::jsonb`),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.organisationId, t.createdAt), index().on(t.entity, t.entityId)],
);

// Counters of rate-limiter-flexible's PostgreSQL store (its own column layout).
export const rateLimits = pgTable("rate_limits", {
  key: varchar({ length: 255 }).primaryKey(),
  points: integer().notNull().default(0),
  expire: bigint({ mode: "number" }),
});

// ---------------------------------------------------------------------------------------------
// The cooling records. Everything hangs off a site; readings and corrective actions are append-only.

export const batchStateEnum = pgEnum("batch_state", ["cooling", "cooled", "cooled_after_reheat", "discarded"]);
export const readingKindEnum = pgEnum("reading_kind", ["reading", "reheat"]);
export const entrySourceEnum = pgEnum("entry_source", ["station", "web", "api"]);

/** A recipe of the site's library: what the engine needs to know about the food, and its usual pan and method. */
export const products = pgTable(
  "products",
  {
    id: id(),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    name: text().notNull(),
    // Mass percent: water, protein, fat, carbohydrate, fibre, ash (Choi & Okos inputs).
    composition: jsonb().$type<Record<string, number>>().notNull(),
    defaultPanSize: text().notNull().default("gn-1/1"),
    defaultPanDepthMm: integer().notNull().default(65),
    defaultFillDepthMm: integer().notNull().default(50),
    defaultMethod: text().notNull().default("walk-in"),
    active: boolean().notNull().default(true),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.siteId)],
);

/** A pan a site uses that is not in the standard catalogue: its inside dimensions. */
export const panTypes = pgTable(
  "pan_types",
  {
    id: id(),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    name: text().notNull(),
    lengthMm: integer().notNull(),
    widthMm: integer().notNull(),
    depthMm: integer().notNull(),
    material: text().notNull().default("stainless-steel"),
    active: boolean().notNull().default(true),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.siteId)],
);

/** A walk-in, reach-in, blast chiller or ice-bath station, with what the engine has learned of it. */
export const equipment = pgTable(
  "equipment",
  {
    id: id(),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    name: text().notNull(),
    method: text().notNull(),
    // The learned surface factor: mean and sd of ln s over the batches it rests on.
    learnedLnS: doublePrecision(),
    learnedSd: doublePrecision(),
    learnedBatches: integer().notNull().default(0),
    active: boolean().notNull().default(true),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.siteId)],
);

export const batches = pgTable(
  "batches",
  {
    id: id(),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    // Made on the client so a retried start creates one batch.
    clientId: varchar({ length: 64 }).notNull(),
    productId: uuid()
      .notNull()
      .references(() => products.id),
    lotCode: text().notNull(),
    // The product's composition when the batch started: a later edit of the recipe does not rewrite it.
    composition: jsonb().$type<Record<string, number>>(),
    quantityKg: doublePrecision(),
    // A catalogue size ("gn-1/1") or "custom:<pan type id>"; the dimensions are kept for the record.
    panSize: text().notNull(),
    panLengthMm: integer(),
    panWidthMm: integer(),
    panDepthMm: integer().notNull(),
    panCount: integer().notNull().default(1),
    fillDepthMm: integer().notNull(),
    panMaterial: text().notNull().default("stainless-steel"),
    lid: boolean().notNull().default(false),
    method: text().notNull(),
    equipmentId: uuid().references(() => equipment.id),
    // The rule set in force when the batch started: a later change of site setting does not rewrite it.
    ruleSetCode: text().notNull(),
    startedAt: timestamp({ withTimezone: true }).notNull(),
    startedBy: uuid().references(() => users.id),
    startNotCaptured: boolean().notNull().default(false),
    state: batchStateEnum().notNull().default("cooling"),
    endedAt: at(),
    // The latest assessment, kept for the review queue and the manager's home (derived, refreshed on
    // every entry and by the alert sweep; the readings remain the record).
    verdict: text().$type<"ahead" | "tight" | "behind">(),
    assessedAt: at(),
    // The earliest deadline passed without a reading at or below its limit (current attempt).
    missedAt: at(),
    // When the next reading is due (last reading + the site's interval); null once ended.
    nextReadingDueAt: at(),
    // ln of the surface factor fitted on this batch's readings when it ended (what it taught its equipment).
    fittedLnS: doublePrecision(),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex().on(t.siteId, t.clientId),
    index().on(t.siteId, t.state),
    index().on(t.equipmentId, t.endedAt),
    // The records view and the exports read a site's batches by start time.
    index().on(t.siteId, t.startedAt),
  ],
);

// Append-only: a trigger refuses UPDATE and DELETE. A correction is a new row naming the one it corrects.
export const readings = pgTable(
  "readings",
  {
    id: id(),
    batchId: uuid()
      .notNull()
      .references(() => batches.id),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    clientId: varchar({ length: 64 }).notNull(),
    kind: readingKindEnum().notNull().default("reading"),
    valueEntered: doublePrecision().notNull(),
    unitEntered: temperatureUnitEnum().notNull(),
    valueC: doublePrecision().notNull(),
    takenAt: timestamp({ withTimezone: true }).notNull(),
    receivedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    // Entered more than 15 minutes after it was taken.
    late: boolean().notNull(),
    takenAtEdited: boolean().notNull().default(false),
    probe: text(),
    photoId: uuid(),
    enteredBy: uuid().references(() => users.id),
    source: entrySourceEnum().notNull(),
    stationDeviceId: uuid().references(() => stationDevices.id),
    apiTokenId: uuid().references(() => siteApiTokens.id),
    correctsReadingId: uuid(),
    correctionReason: text(),
  },
  (t) => [uniqueIndex().on(t.batchId, t.clientId), index().on(t.batchId, t.takenAt)],
);

// Append-only too: what was done about a batch, by whom and when.
export const correctiveActions = pgTable(
  "corrective_actions",
  {
    id: id(),
    batchId: uuid()
      .notNull()
      .references(() => batches.id),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    clientId: varchar({ length: 64 }).notNull(),
    kind: text().notNull(),
    detail: jsonb().$type<Record<string, unknown>>().notNull().default(sql`'{}'::jsonb`),
    takenBy: uuid().references(() => users.id),
    takenAt: timestamp({ withTimezone: true }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.batchId, t.clientId)],
);

// A photo of a probe reading, re-encoded to WebP without metadata; the bytes live in the photo storage.
export const photos = pgTable(
  "photos",
  {
    id: id(),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    storageKey: text().notNull(),
    thumbKey: text().notNull(),
    width: integer().notNull(),
    height: integer().notNull(),
    bytes: integer().notNull(),
    contentType: text().notNull().default("image/webp"),
    uploadedBy: uuid().references(() => users.id),
    apiTokenId: uuid().references(() => siteApiTokens.id),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.siteId, t.createdAt)],
);

// HACCP verification: a manager's signature on a finished batch. Append-only; a later correction of the
// record shows as a correction after the signature, and the batch may be signed again.
export const verifications = pgTable(
  "verifications",
  {
    id: id(),
    batchId: uuid()
      .notNull()
      .references(() => batches.id),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    signedBy: uuid()
      .notNull()
      .references(() => users.id),
    signedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    // The exact words the signer agreed to, and their version.
    statement: text().notNull(),
    statementVersion: integer().notNull(),
    comment: text(),
    // What the signature covers: the number of entries of the record when it was signed.
    readingsCovered: integer().notNull(),
    actionsCovered: integer().notNull(),
  },
  (t) => [index().on(t.batchId), index().on(t.siteId, t.signedAt)],
);

// A manager's confirmation of a corrective action a cook took. Append-only, one per action.
export const actionConfirmations = pgTable(
  "action_confirmations",
  {
    id: id(),
    correctiveActionId: uuid()
      .notNull()
      .references(() => correctiveActions.id),
    batchId: uuid()
      .notNull()
      .references(() => batches.id),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    confirmedBy: uuid()
      .notNull()
      .references(() => users.id),
    confirmedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    note: text(),
  },
  (t) => [uniqueIndex().on(t.correctiveActionId), index().on(t.batchId)],
);

export const alertKindEnum = pgEnum("alert_kind", ["off_track", "stage_missed", "reading_overdue", "verification_digest", "weekly_records"]);
export const deliveryStatusEnum = pgEnum("delivery_status", ["queued", "sending", "retrying", "sent", "failed", "skipped"]);

// Who gets each kind of alert at a site, in escalation order (position 1 first).
export const alertRecipients = pgTable(
  "alert_recipients",
  {
    id: id(),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    kind: alertKindEnum().notNull(),
    userId: uuid()
      .notNull()
      .references(() => users.id),
    position: integer().notNull(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.siteId, t.kind, t.userId), index().on(t.siteId, t.kind, t.position)],
);

// One row per event (a batch going off track, a missed stage, an overdue reading, a day's digest):
// the unique key makes a second sweep or a second worker find the event already there.
export const alertEvents = pgTable(
  "alert_events",
  {
    id: id(),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    batchId: uuid().references(() => batches.id),
    kind: alertKindEnum().notNull(),
    dedupeKey: text().notNull(),
    // Words and figures for the message: stage, limit, deadline, counts.
    detail: jsonb().$type<Record<string, unknown>>().notNull().default(sql`'{}'::jsonb`),
    deadlineAt: at(),
    createdAt: createdAt(),
    acknowledgedAt: at(),
    acknowledgedBy: uuid().references(() => users.id),
    // The condition cleared (a reading came, the batch is back on track or ended): no more escalation.
    resolvedAt: at(),
  },
  (t) => [uniqueIndex().on(t.siteId, t.kind, t.dedupeKey), index().on(t.siteId, t.createdAt), index().on(t.batchId)],
);

// Each e-mail an event sends: level 0 to the first recipient, one more level per escalation.
export const alertDeliveries = pgTable(
  "alert_deliveries",
  {
    id: id(),
    eventId: uuid()
      .notNull()
      .references(() => alertEvents.id),
    level: integer().notNull(),
    userId: uuid()
      .notNull()
      .references(() => users.id),
    email: text().notNull(),
    status: deliveryStatusEnum().notNull().default("queued"),
    attempts: integer().notNull().default(0),
    lastError: text(),
    claimedAt: at(),
    sentAt: at(),
    // Which worker process sent it (host:pid), for the alerts screen and the two-worker test.
    sentBy: text(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.eventId, t.level, t.userId), index().on(t.status)],
);

// A read-only link to one site's records over a date range, for an inspector or an auditor.
// Only the SHA-256 of the token is kept; the token itself is shown once, to the person who made it.
export const shareLinks = pgTable(
  "share_links",
  {
    id: id(),
    organisationId: uuid()
      .notNull()
      .references(() => organisations.id),
    siteId: uuid()
      .notNull()
      .references(() => sites.id),
    tokenHash: text().notNull().unique(),
    // Who it is for, in the maker's words ("County inspection, March").
    label: text().notNull(),
    // Site-local calendar dates, both included.
    fromDate: date({ mode: "string" }).notNull(),
    toDate: date({ mode: "string" }).notNull(),
    expiresAt: at().notNull(),
    createdBy: uuid()
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
    revokedAt: at(),
    revokedBy: uuid().references(() => users.id),
  },
  (t) => [index().on(t.siteId, t.createdAt)],
);

// Every request made with a share link, allowed or not (append-only: a trigger refuses changes).
export const shareLinkUses = pgTable(
  "share_link_uses",
  {
    id: id(),
    linkId: uuid()
      .notNull()
      .references(() => shareLinks.id),
    at: createdAt(),
    method: text().notNull(),
    // What was asked for: records, batch, photo, export-xlsx, export-csv, print.
    target: text().notNull(),
    path: text().notNull(),
    // ok, expired, revoked, refused (a write, another site's batch, a date outside the range).
    outcome: text().notNull(),
    status: integer().notNull(),
    address: text(),
    userAgent: text(),
  },
  (t) => [index().on(t.linkId, t.at)],
);
