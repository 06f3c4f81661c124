CREATE TABLE "measured_traces" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"device_name" text NOT NULL,
	"file_name" text NOT NULL,
	"temperature_mk" double precision NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"model_id" uuid,
	"content" text NOT NULL,
	"columns" jsonb NOT NULL,
	"selection" jsonb NOT NULL,
	"energies" jsonb NOT NULL,
	"transmission" jsonb NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "peak_fits" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"run_id" uuid,
	"trace_id" uuid,
	"model_id" uuid,
	"model_version_id" uuid,
	"request" jsonb NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"progress_fraction" double precision,
	"attempt" integer DEFAULT 0 NOT NULL,
	"job_id" text,
	"error" text,
	"result" jsonb,
	"comparison" jsonb,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"finished_at" timestamp with time zone,
	CONSTRAINT "peak_fits_status_known" CHECK ("peak_fits"."status" in ('queued','running','completed','failed')),
	CONSTRAINT "peak_fits_one_source" CHECK (("peak_fits"."run_id" is null) <> ("peak_fits"."trace_id" is null))
);
--> statement-breakpoint
ALTER TABLE "resonances" ALTER COLUMN "run_id" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "resonances" ALTER COLUMN "idx" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "resonances" ALTER COLUMN "petermann" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "resonances" ALTER COLUMN "residual" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "source" text DEFAULT 'computed' NOT NULL;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "fit_id" uuid;--> statement-breakpoint
ALTER TABLE "measured_traces" ADD CONSTRAINT "measured_traces_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "measured_traces" ADD CONSTRAINT "measured_traces_model_id_cavity_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."cavity_models"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "measured_traces" ADD CONSTRAINT "measured_traces_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "peak_fits" ADD CONSTRAINT "peak_fits_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "peak_fits" ADD CONSTRAINT "peak_fits_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "peak_fits" ADD CONSTRAINT "peak_fits_trace_id_measured_traces_id_fk" FOREIGN KEY ("trace_id") REFERENCES "public"."measured_traces"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "peak_fits" ADD CONSTRAINT "peak_fits_model_id_cavity_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."cavity_models"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "peak_fits" ADD CONSTRAINT "peak_fits_model_version_id_model_versions_id_fk" FOREIGN KEY ("model_version_id") REFERENCES "public"."model_versions"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "peak_fits" ADD CONSTRAINT "peak_fits_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "measured_traces_group_created" ON "measured_traces" USING btree ("group_id","created_at" DESC NULLS LAST);--> statement-breakpoint
CREATE INDEX "peak_fits_group_created" ON "peak_fits" USING btree ("group_id","created_at" DESC NULLS LAST);--> statement-breakpoint
ALTER TABLE "resonances" ADD CONSTRAINT "resonances_fit_id_peak_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."peak_fits"("id") ON DELETE cascade ON UPDATE no action;