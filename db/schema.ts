import { sql } from "drizzle-orm";
import {
  bigint,
  bigserial,
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
