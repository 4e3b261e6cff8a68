CREATE TABLE "pan_types" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"name" text NOT NULL,
	"length_mm" integer NOT NULL,
	"width_mm" integer NOT NULL,
	"depth_mm" integer NOT NULL,
	"material" text DEFAULT 'stainless-steel' NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "batches" ADD COLUMN "pan_length_mm" integer;--> statement-breakpoint
ALTER TABLE "batches" ADD COLUMN "pan_width_mm" integer;--> statement-breakpoint
ALTER TABLE "pan_types" ADD CONSTRAINT "pan_types_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "pan_types_site_id_index" ON "pan_types" USING btree ("site_id");