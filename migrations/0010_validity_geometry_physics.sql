ALTER TABLE "model_versions" ADD COLUMN "physics" text DEFAULT 'electrons' NOT NULL;--> statement-breakpoint
ALTER TABLE "model_versions" ADD COLUMN "rx_nm" double precision;--> statement-breakpoint
ALTER TABLE "model_versions" ADD COLUMN "ry_nm" double precision;--> statement-breakpoint
ALTER TABLE "model_versions" ADD COLUMN "inner_nm" double precision;--> statement-breakpoint
ALTER TABLE "model_versions" ADD COLUMN "outer_nm" double precision;--> statement-breakpoint
ALTER TABLE "model_versions" ADD COLUMN "area_nm2" double precision;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "validity_limit" double precision;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "wavelength_spacings" double precision;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "above_validity" boolean;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "physics" text DEFAULT 'electrons' NOT NULL;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "frequency_ghz" double precision;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "rx_nm" double precision;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "ry_nm" double precision;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "inner_nm" double precision;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "outer_nm" double precision;--> statement-breakpoint
ALTER TABLE "resonances" ADD COLUMN "area_nm2" double precision;