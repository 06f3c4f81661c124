CREATE TABLE "cavity_models" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"name" text NOT NULL,
	"latest_version" integer DEFAULT 1 NOT NULL,
	"reference_key" text,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "cavity_models_group_reference" UNIQUE("group_id","reference_key")
);
--> statement-breakpoint
CREATE TABLE "model_versions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"model_id" uuid NOT NULL,
	"group_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"document" jsonb NOT NULL,
	"family" text NOT NULL,
	"material" text NOT NULL,
	"effective_mass" double precision NOT NULL,
	"spacing_nm" double precision NOT NULL,
	"field_t" double precision NOT NULL,
	"site_count" integer NOT NULL,
	"lead_count" integer NOT NULL,
	"hopping_mev" double precision NOT NULL,
	"width_nm" double precision,
	"height_nm" double precision,
	"radius_nm" double precision,
	"length_nm" double precision,
	"key_dimensions" jsonb NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "model_versions_model_version" UNIQUE("model_id","version")
);
--> statement-breakpoint
CREATE TABLE "runs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"model_version_id" uuid NOT NULL,
	"kind" text NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"window" jsonb NOT NULL,
	"note" text DEFAULT '' NOT NULL,
	"progress_stage" text,
	"progress_fraction" double precision,
	"job_id" text,
	"attempt" integer DEFAULT 0 NOT NULL,
	"cancel_requested" boolean DEFAULT false NOT NULL,
	"heartbeat_at" timestamp with time zone,
	"error" text,
	"engine_version" text,
	"thresholds" jsonb,
	"certificate" jsonb,
	"stats" jsonb,
	"estimate" jsonb,
	"resonance_count" integer,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	CONSTRAINT "runs_status_known" CHECK ("runs"."status" in ('queued','running','completed','failed','cancelled'))
);
--> statement-breakpoint
CREATE TABLE "spectra" (
	"run_id" uuid PRIMARY KEY NOT NULL,
	"group_id" uuid NOT NULL,
	"energies" jsonb NOT NULL,
	"pairs" jsonb NOT NULL,
	"transmission" jsonb NOT NULL,
	"residual" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "mode_images" (
	"resonance_id" uuid NOT NULL,
	"size" text NOT NULL,
	"width" integer NOT NULL,
	"height" integer NOT NULL,
	"etag" text NOT NULL,
	"png" "bytea" NOT NULL,
	CONSTRAINT "mode_images_resonance_id_size_pk" PRIMARY KEY("resonance_id","size")
);
--> statement-breakpoint
CREATE TABLE "resonance_modes" (
	"resonance_id" uuid PRIMARY KEY NOT NULL,
	"sites" integer NOT NULL,
	"vector" "bytea" NOT NULL
);
--> statement-breakpoint
CREATE TABLE "resonances" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"run_id" uuid NOT NULL,
	"model_id" uuid NOT NULL,
	"model_version_id" uuid NOT NULL,
	"idx" integer NOT NULL,
	"energy" double precision NOT NULL,
	"width" double precision NOT NULL,
	"lifetime_ps" double precision,
	"quality" double precision,
	"partial_widths" jsonb NOT NULL,
	"petermann" double precision NOT NULL,
	"residual" double precision NOT NULL,
	"bound" boolean NOT NULL,
	"near_threshold" boolean NOT NULL,
	"overlapping" boolean NOT NULL,
	"details" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"tags" text[] DEFAULT '{}'::text[] NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"model_name" text NOT NULL,
	"model_version" integer NOT NULL,
	"family" text NOT NULL,
	"material" text NOT NULL,
	"field_t" double precision NOT NULL,
	"spacing_nm" double precision NOT NULL,
	"width_nm" double precision,
	"height_nm" double precision,
	"radius_nm" double precision,
	"length_nm" double precision,
	"search_text" "tsvector" GENERATED ALWAYS AS (to_tsvector('simple', "resonances"."model_name" || ' ' || "resonances"."notes")) STORED,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "resonances_run_idx" UNIQUE("run_id","idx")
);
--> statement-breakpoint
ALTER TABLE "cavity_models" ADD CONSTRAINT "cavity_models_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "cavity_models" ADD CONSTRAINT "cavity_models_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "model_versions" ADD CONSTRAINT "model_versions_model_id_cavity_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."cavity_models"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "model_versions" ADD CONSTRAINT "model_versions_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "model_versions" ADD CONSTRAINT "model_versions_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "runs" ADD CONSTRAINT "runs_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "runs" ADD CONSTRAINT "runs_model_version_id_model_versions_id_fk" FOREIGN KEY ("model_version_id") REFERENCES "public"."model_versions"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "runs" ADD CONSTRAINT "runs_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "spectra" ADD CONSTRAINT "spectra_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "spectra" ADD CONSTRAINT "spectra_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "mode_images" ADD CONSTRAINT "mode_images_resonance_id_resonances_id_fk" FOREIGN KEY ("resonance_id") REFERENCES "public"."resonances"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_modes" ADD CONSTRAINT "resonance_modes_resonance_id_resonances_id_fk" FOREIGN KEY ("resonance_id") REFERENCES "public"."resonances"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonances" ADD CONSTRAINT "resonances_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonances" ADD CONSTRAINT "resonances_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonances" ADD CONSTRAINT "resonances_model_id_cavity_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."cavity_models"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonances" ADD CONSTRAINT "resonances_model_version_id_model_versions_id_fk" FOREIGN KEY ("model_version_id") REFERENCES "public"."model_versions"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "cavity_models_group_updated" ON "cavity_models" USING btree ("group_id","updated_at" DESC NULLS LAST);--> statement-breakpoint
CREATE INDEX "model_versions_group" ON "model_versions" USING btree ("group_id");--> statement-breakpoint
CREATE INDEX "runs_group_created" ON "runs" USING btree ("group_id","created_at" DESC NULLS LAST);--> statement-breakpoint
CREATE INDEX "runs_status_heartbeat" ON "runs" USING btree ("status","heartbeat_at");--> statement-breakpoint
CREATE INDEX "resonances_group_energy" ON "resonances" USING btree ("group_id","energy");--> statement-breakpoint
CREATE INDEX "resonances_group_width" ON "resonances" USING btree ("group_id","width");--> statement-breakpoint
CREATE INDEX "resonances_group_quality" ON "resonances" USING btree ("group_id","quality");--> statement-breakpoint
CREATE INDEX "resonances_group_lifetime" ON "resonances" USING btree ("group_id","lifetime_ps");--> statement-breakpoint
CREATE INDEX "resonances_group_created" ON "resonances" USING btree ("group_id","created_at" DESC NULLS LAST);--> statement-breakpoint
CREATE INDEX "resonances_group_family_energy" ON "resonances" USING btree ("group_id","family","energy");--> statement-breakpoint
CREATE INDEX "resonances_tags" ON "resonances" USING gin ("tags");--> statement-breakpoint
CREATE INDEX "resonances_search_text" ON "resonances" USING gin ("search_text");