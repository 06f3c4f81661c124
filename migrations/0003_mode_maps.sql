CREATE TABLE "mode_maps" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"model_version_id" uuid NOT NULL,
	"resonance_id" uuid,
	"params" jsonb NOT NULL,
	"cache_key" text NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"progress_stage" text,
	"progress_fraction" double precision,
	"attempt" integer DEFAULT 0 NOT NULL,
	"job_id" text,
	"error" text,
	"engine_version" text,
	"result" jsonb,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"finished_at" timestamp with time zone,
	CONSTRAINT "mode_maps_group_key" UNIQUE("group_id","cache_key"),
	CONSTRAINT "mode_maps_status_known" CHECK ("mode_maps"."status" in ('queued','running','completed','failed'))
);
--> statement-breakpoint
CREATE TABLE "resonance_currents" (
	"resonance_id" uuid PRIMARY KEY NOT NULL,
	"nx" integer NOT NULL,
	"ny" integer NOT NULL,
	"mask" "bytea" NOT NULL,
	"vectors" "bytea" NOT NULL,
	"lead_currents" jsonb NOT NULL
);
--> statement-breakpoint
ALTER TABLE "mode_maps" ADD CONSTRAINT "mode_maps_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "mode_maps" ADD CONSTRAINT "mode_maps_model_version_id_model_versions_id_fk" FOREIGN KEY ("model_version_id") REFERENCES "public"."model_versions"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "mode_maps" ADD CONSTRAINT "mode_maps_resonance_id_resonances_id_fk" FOREIGN KEY ("resonance_id") REFERENCES "public"."resonances"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "mode_maps" ADD CONSTRAINT "mode_maps_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_currents" ADD CONSTRAINT "resonance_currents_resonance_id_resonances_id_fk" FOREIGN KEY ("resonance_id") REFERENCES "public"."resonances"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "mode_maps_resonance" ON "mode_maps" USING btree ("resonance_id");