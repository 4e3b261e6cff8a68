ALTER TYPE "public"."alert_kind" ADD VALUE 'weekly_records';--> statement-breakpoint
CREATE TABLE "share_link_uses" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"link_id" uuid NOT NULL,
	"at" timestamp with time zone DEFAULT now() NOT NULL,
	"method" text NOT NULL,
	"target" text NOT NULL,
	"path" text NOT NULL,
	"outcome" text NOT NULL,
	"status" integer NOT NULL,
	"address" text,
	"user_agent" text
);
--> statement-breakpoint
CREATE TABLE "share_links" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"organisation_id" uuid NOT NULL,
	"site_id" uuid NOT NULL,
	"token_hash" text NOT NULL,
	"label" text NOT NULL,
	"from_date" date NOT NULL,
	"to_date" date NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	"created_by" uuid NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"revoked_at" timestamp with time zone,
	"revoked_by" uuid,
	CONSTRAINT "share_links_tokenHash_unique" UNIQUE("token_hash")
);
--> statement-breakpoint
ALTER TABLE "sites" ADD COLUMN "weekly_records_weekday" integer DEFAULT 1 NOT NULL;--> statement-breakpoint
ALTER TABLE "sites" ADD COLUMN "weekly_records_hour" integer DEFAULT 6 NOT NULL;--> statement-breakpoint
ALTER TABLE "share_link_uses" ADD CONSTRAINT "share_link_uses_link_id_share_links_id_fk" FOREIGN KEY ("link_id") REFERENCES "public"."share_links"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "share_links" ADD CONSTRAINT "share_links_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "share_links" ADD CONSTRAINT "share_links_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "share_links" ADD CONSTRAINT "share_links_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "share_links" ADD CONSTRAINT "share_links_revoked_by_users_id_fk" FOREIGN KEY ("revoked_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "share_link_uses_link_id_at_index" ON "share_link_uses" USING btree ("link_id","at");--> statement-breakpoint
CREATE INDEX "share_links_site_id_created_at_index" ON "share_links" USING btree ("site_id","created_at");--> statement-breakpoint
CREATE INDEX "batches_site_id_started_at_index" ON "batches" USING btree ("site_id","started_at");--> statement-breakpoint
-- The log of a share link's uses is evidence for QA: never edited, never deleted.
CREATE TRIGGER share_link_uses_append_only BEFORE UPDATE OR DELETE ON share_link_uses
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER share_link_uses_no_truncate BEFORE TRUNCATE ON share_link_uses
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
