CREATE TYPE "public"."alert_kind" AS ENUM('off_track', 'stage_missed', 'reading_overdue', 'verification_digest');--> statement-breakpoint
CREATE TYPE "public"."delivery_status" AS ENUM('queued', 'sending', 'retrying', 'sent', 'failed');--> statement-breakpoint
CREATE TABLE "action_confirmations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"corrective_action_id" uuid NOT NULL,
	"batch_id" uuid NOT NULL,
	"site_id" uuid NOT NULL,
	"confirmed_by" uuid NOT NULL,
	"confirmed_at" timestamp with time zone DEFAULT now() NOT NULL,
	"note" text
);
--> statement-breakpoint
CREATE TABLE "alert_deliveries" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"event_id" uuid NOT NULL,
	"level" integer NOT NULL,
	"user_id" uuid NOT NULL,
	"email" text NOT NULL,
	"status" "delivery_status" DEFAULT 'queued' NOT NULL,
	"attempts" integer DEFAULT 0 NOT NULL,
	"last_error" text,
	"claimed_at" timestamp with time zone,
	"sent_at" timestamp with time zone,
	"sent_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "alert_events" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"batch_id" uuid,
	"kind" "alert_kind" NOT NULL,
	"dedupe_key" text NOT NULL,
	"detail" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"deadline_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"acknowledged_at" timestamp with time zone,
	"acknowledged_by" uuid,
	"resolved_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "alert_recipients" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"kind" "alert_kind" NOT NULL,
	"user_id" uuid NOT NULL,
	"position" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "verifications" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"batch_id" uuid NOT NULL,
	"site_id" uuid NOT NULL,
	"signed_by" uuid NOT NULL,
	"signed_at" timestamp with time zone DEFAULT now() NOT NULL,
	"statement" text NOT NULL,
	"statement_version" integer NOT NULL,
	"comment" text,
	"readings_covered" integer NOT NULL,
	"actions_covered" integer NOT NULL
);
--> statement-breakpoint
ALTER TABLE "batches" ADD COLUMN "verdict" text;--> statement-breakpoint
ALTER TABLE "batches" ADD COLUMN "assessed_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "batches" ADD COLUMN "missed_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "batches" ADD COLUMN "next_reading_due_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "batches" ADD COLUMN "fitted_ln_s" double precision;--> statement-breakpoint
ALTER TABLE "sites" ADD COLUMN "escalate_after_minutes" integer DEFAULT 15 NOT NULL;--> statement-breakpoint
ALTER TABLE "sites" ADD COLUMN "digest_hour" integer DEFAULT 21 NOT NULL;--> statement-breakpoint
ALTER TABLE "action_confirmations" ADD CONSTRAINT "action_confirmations_corrective_action_id_corrective_actions_id_fk" FOREIGN KEY ("corrective_action_id") REFERENCES "public"."corrective_actions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "action_confirmations" ADD CONSTRAINT "action_confirmations_batch_id_batches_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batches"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "action_confirmations" ADD CONSTRAINT "action_confirmations_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "action_confirmations" ADD CONSTRAINT "action_confirmations_confirmed_by_users_id_fk" FOREIGN KEY ("confirmed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_deliveries" ADD CONSTRAINT "alert_deliveries_event_id_alert_events_id_fk" FOREIGN KEY ("event_id") REFERENCES "public"."alert_events"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_deliveries" ADD CONSTRAINT "alert_deliveries_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_events" ADD CONSTRAINT "alert_events_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_events" ADD CONSTRAINT "alert_events_batch_id_batches_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batches"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_events" ADD CONSTRAINT "alert_events_acknowledged_by_users_id_fk" FOREIGN KEY ("acknowledged_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_recipients" ADD CONSTRAINT "alert_recipients_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_recipients" ADD CONSTRAINT "alert_recipients_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "verifications" ADD CONSTRAINT "verifications_batch_id_batches_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batches"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "verifications" ADD CONSTRAINT "verifications_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "verifications" ADD CONSTRAINT "verifications_signed_by_users_id_fk" FOREIGN KEY ("signed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "action_confirmations_corrective_action_id_index" ON "action_confirmations" USING btree ("corrective_action_id");--> statement-breakpoint
CREATE INDEX "action_confirmations_batch_id_index" ON "action_confirmations" USING btree ("batch_id");--> statement-breakpoint
CREATE UNIQUE INDEX "alert_deliveries_event_id_level_user_id_index" ON "alert_deliveries" USING btree ("event_id","level","user_id");--> statement-breakpoint
CREATE INDEX "alert_deliveries_status_index" ON "alert_deliveries" USING btree ("status");--> statement-breakpoint
CREATE UNIQUE INDEX "alert_events_site_id_kind_dedupe_key_index" ON "alert_events" USING btree ("site_id","kind","dedupe_key");--> statement-breakpoint
CREATE INDEX "alert_events_site_id_created_at_index" ON "alert_events" USING btree ("site_id","created_at");--> statement-breakpoint
CREATE INDEX "alert_events_batch_id_index" ON "alert_events" USING btree ("batch_id");--> statement-breakpoint
CREATE UNIQUE INDEX "alert_recipients_site_id_kind_user_id_index" ON "alert_recipients" USING btree ("site_id","kind","user_id");--> statement-breakpoint
CREATE INDEX "alert_recipients_site_id_kind_position_index" ON "alert_recipients" USING btree ("site_id","kind","position");--> statement-breakpoint
CREATE INDEX "verifications_batch_id_index" ON "verifications" USING btree ("batch_id");--> statement-breakpoint
CREATE INDEX "verifications_site_id_signed_at_index" ON "verifications" USING btree ("site_id","signed_at");--> statement-breakpoint
CREATE INDEX "batches_equipment_id_ended_at_index" ON "batches" USING btree ("equipment_id","ended_at");