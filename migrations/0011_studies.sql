CREATE TABLE "studies" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"model_version_id" uuid NOT NULL,
	"kind" text NOT NULL,
	"name" text DEFAULT '' NOT NULL,
	"definition" jsonb NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"step_count" integer NOT NULL,
	"cancel_requested" boolean DEFAULT false NOT NULL,
	"estimate_seconds" double precision,
	"outcome" jsonb,
	"error" text,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"finished_at" timestamp with time zone,
	CONSTRAINT "studies_kind_known" CHECK ("studies"."kind" in ('sweep','ensemble')),
	CONSTRAINT "studies_status_known" CHECK ("studies"."status" in ('queued','running','completed','failed','cancelled'))
);
--> statement-breakpoint
CREATE TABLE "study_step_results" (
	"key" text PRIMARY KEY NOT NULL,
	"engine_version" text NOT NULL,
	"search" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "study_steps" (
	"study_id" uuid NOT NULL,
	"index" integer NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"attempt" integer DEFAULT 0 NOT NULL,
	"job_id" text,
	"result_key" text,
	"reused" boolean DEFAULT false NOT NULL,
	"continuation" jsonb,
	"record" jsonb,
	"error" text,
	"seconds" double precision,
	"worker" text,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	CONSTRAINT "study_steps_study_id_index_pk" PRIMARY KEY("study_id","index"),
	CONSTRAINT "study_steps_status_known" CHECK ("study_steps"."status" in ('queued','running','completed','failed','cancelled'))
);
--> statement-breakpoint
ALTER TABLE "studies" ADD CONSTRAINT "studies_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "studies" ADD CONSTRAINT "studies_model_version_id_model_versions_id_fk" FOREIGN KEY ("model_version_id") REFERENCES "public"."model_versions"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "studies" ADD CONSTRAINT "studies_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "study_steps" ADD CONSTRAINT "study_steps_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "studies_group_created" ON "studies" USING btree ("group_id","created_at" DESC NULLS LAST);--> statement-breakpoint
CREATE INDEX "study_steps_status" ON "study_steps" USING btree ("study_id","status");