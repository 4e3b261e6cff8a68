CREATE TYPE "public"."batch_state" AS ENUM('cooling', 'cooled', 'cooled_after_reheat', 'discarded');--> statement-breakpoint
CREATE TYPE "public"."entry_source" AS ENUM('station', 'web', 'api');--> statement-breakpoint
CREATE TYPE "public"."reading_kind" AS ENUM('reading', 'reheat');--> statement-breakpoint
CREATE TABLE "batches" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"client_id" varchar(64) NOT NULL,
	"product_id" uuid NOT NULL,
	"lot_code" text NOT NULL,
	"quantity_kg" double precision,
	"pan_size" text NOT NULL,
	"pan_depth_mm" integer NOT NULL,
	"pan_count" integer DEFAULT 1 NOT NULL,
	"fill_depth_mm" integer NOT NULL,
	"pan_material" text DEFAULT 'stainless-steel' NOT NULL,
	"lid" boolean DEFAULT false NOT NULL,
	"method" text NOT NULL,
	"equipment_id" uuid,
	"rule_set_code" text NOT NULL,
	"started_at" timestamp with time zone NOT NULL,
	"started_by" uuid,
	"start_not_captured" boolean DEFAULT false NOT NULL,
	"state" "batch_state" DEFAULT 'cooling' NOT NULL,
	"ended_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "corrective_actions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"batch_id" uuid NOT NULL,
	"site_id" uuid NOT NULL,
	"client_id" varchar(64) NOT NULL,
	"kind" text NOT NULL,
	"detail" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"taken_by" uuid,
	"taken_at" timestamp with time zone NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "equipment" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"name" text NOT NULL,
	"method" text NOT NULL,
	"learned_ln_s" double precision,
	"learned_sd" double precision,
	"learned_batches" integer DEFAULT 0 NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "products" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"name" text NOT NULL,
	"composition" jsonb NOT NULL,
	"default_pan_size" text DEFAULT 'gn-1/1' NOT NULL,
	"default_pan_depth_mm" integer DEFAULT 65 NOT NULL,
	"default_fill_depth_mm" integer DEFAULT 50 NOT NULL,
	"default_method" text DEFAULT 'walk-in' NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "readings" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"batch_id" uuid NOT NULL,
	"site_id" uuid NOT NULL,
	"client_id" varchar(64) NOT NULL,
	"kind" "reading_kind" DEFAULT 'reading' NOT NULL,
	"value_entered" double precision NOT NULL,
	"unit_entered" "temperature_unit" NOT NULL,
	"value_c" double precision NOT NULL,
	"taken_at" timestamp with time zone NOT NULL,
	"received_at" timestamp with time zone DEFAULT now() NOT NULL,
	"late" boolean NOT NULL,
	"taken_at_edited" boolean DEFAULT false NOT NULL,
	"probe" text,
	"photo_id" uuid,
	"entered_by" uuid,
	"source" "entry_source" NOT NULL,
	"station_device_id" uuid,
	"api_token_id" uuid,
	"corrects_reading_id" uuid,
	"correction_reason" text
);
--> statement-breakpoint
ALTER TABLE "batches" ADD CONSTRAINT "batches_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "batches" ADD CONSTRAINT "batches_product_id_products_id_fk" FOREIGN KEY ("product_id") REFERENCES "public"."products"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "batches" ADD CONSTRAINT "batches_equipment_id_equipment_id_fk" FOREIGN KEY ("equipment_id") REFERENCES "public"."equipment"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "batches" ADD CONSTRAINT "batches_started_by_users_id_fk" FOREIGN KEY ("started_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "corrective_actions" ADD CONSTRAINT "corrective_actions_batch_id_batches_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batches"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "corrective_actions" ADD CONSTRAINT "corrective_actions_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "corrective_actions" ADD CONSTRAINT "corrective_actions_taken_by_users_id_fk" FOREIGN KEY ("taken_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "equipment" ADD CONSTRAINT "equipment_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "products" ADD CONSTRAINT "products_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "readings" ADD CONSTRAINT "readings_batch_id_batches_id_fk" FOREIGN KEY ("batch_id") REFERENCES "public"."batches"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "readings" ADD CONSTRAINT "readings_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "readings" ADD CONSTRAINT "readings_entered_by_users_id_fk" FOREIGN KEY ("entered_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "readings" ADD CONSTRAINT "readings_station_device_id_station_devices_id_fk" FOREIGN KEY ("station_device_id") REFERENCES "public"."station_devices"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "readings" ADD CONSTRAINT "readings_api_token_id_site_api_tokens_id_fk" FOREIGN KEY ("api_token_id") REFERENCES "public"."site_api_tokens"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "batches_site_id_client_id_index" ON "batches" USING btree ("site_id","client_id");--> statement-breakpoint
CREATE INDEX "batches_site_id_state_index" ON "batches" USING btree ("site_id","state");--> statement-breakpoint
CREATE UNIQUE INDEX "corrective_actions_batch_id_client_id_index" ON "corrective_actions" USING btree ("batch_id","client_id");--> statement-breakpoint
CREATE INDEX "equipment_site_id_index" ON "equipment" USING btree ("site_id");--> statement-breakpoint
CREATE INDEX "products_site_id_index" ON "products" USING btree ("site_id");--> statement-breakpoint
CREATE UNIQUE INDEX "readings_batch_id_client_id_index" ON "readings" USING btree ("batch_id","client_id");--> statement-breakpoint
CREATE INDEX "readings_batch_id_taken_at_index" ON "readings" USING btree ("batch_id","taken_at");