CREATE TABLE "notification_opt_outs" (
	"user_id" uuid NOT NULL,
	"kind" text NOT NULL,
	CONSTRAINT "notification_opt_outs_user_id_kind_pk" PRIMARY KEY("user_id","kind")
);
--> statement-breakpoint
CREATE TABLE "notifications" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid,
	"user_id" uuid,
	"kind" text NOT NULL,
	"to_address" text NOT NULL,
	"subject" text NOT NULL,
	"text_body" text NOT NULL,
	"html_body" text NOT NULL,
	"link" text NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"attempts" integer DEFAULT 0 NOT NULL,
	"error" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"sent_at" timestamp with time zone,
	CONSTRAINT "notifications_status_known" CHECK ("notifications"."status" in ('queued','sent','failed'))
);
--> statement-breakpoint
CREATE TABLE "resonance_comments" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"resonance_id" uuid NOT NULL,
	"author_id" uuid,
	"body" text NOT NULL,
	"mentions" uuid[] DEFAULT '{}'::uuid[] NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "resonance_fabrication" (
	"resonance_id" uuid PRIMARY KEY NOT NULL,
	"group_id" uuid NOT NULL,
	"state" text NOT NULL,
	"reason" text NOT NULL,
	"tolerance_energy_mev" double precision,
	"tolerance_min_quality" double precision,
	"proposed_by" uuid,
	"proposed_at" timestamp with time zone NOT NULL,
	"reviewed_by" uuid,
	"reviewed_at" timestamp with time zone,
	"review_reason" text,
	"batch" text,
	"sent_at" timestamp with time zone,
	"measured_energy" double precision,
	"measured_width" double precision,
	"measured_energy_sigma" double precision,
	"measured_width_sigma" double precision,
	"measured_source" text,
	"measured_fit_id" uuid,
	"measured_by" uuid,
	"measured_at" timestamp with time zone,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "resonance_fabrication_state_known" CHECK ("resonance_fabrication"."state" in ('candidate','under_review','approved','rejected','sent','measured'))
);
--> statement-breakpoint
ALTER TABLE "notification_opt_outs" ADD CONSTRAINT "notification_opt_outs_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "notifications" ADD CONSTRAINT "notifications_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "notifications" ADD CONSTRAINT "notifications_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_comments" ADD CONSTRAINT "resonance_comments_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_comments" ADD CONSTRAINT "resonance_comments_resonance_id_resonances_id_fk" FOREIGN KEY ("resonance_id") REFERENCES "public"."resonances"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_comments" ADD CONSTRAINT "resonance_comments_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_fabrication" ADD CONSTRAINT "resonance_fabrication_resonance_id_resonances_id_fk" FOREIGN KEY ("resonance_id") REFERENCES "public"."resonances"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_fabrication" ADD CONSTRAINT "resonance_fabrication_group_id_research_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."research_groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_fabrication" ADD CONSTRAINT "resonance_fabrication_proposed_by_users_id_fk" FOREIGN KEY ("proposed_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_fabrication" ADD CONSTRAINT "resonance_fabrication_reviewed_by_users_id_fk" FOREIGN KEY ("reviewed_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_fabrication" ADD CONSTRAINT "resonance_fabrication_measured_fit_id_peak_fits_id_fk" FOREIGN KEY ("measured_fit_id") REFERENCES "public"."peak_fits"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resonance_fabrication" ADD CONSTRAINT "resonance_fabrication_measured_by_users_id_fk" FOREIGN KEY ("measured_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "notifications_group_status" ON "notifications" USING btree ("group_id","status","created_at" DESC NULLS LAST);--> statement-breakpoint
CREATE INDEX "resonance_comments_resonance" ON "resonance_comments" USING btree ("group_id","resonance_id","created_at");--> statement-breakpoint
CREATE INDEX "resonance_fabrication_group_state" ON "resonance_fabrication" USING btree ("group_id","state","updated_at" DESC NULLS LAST);