DROP INDEX "resonances_group_energy";--> statement-breakpoint
DROP INDEX "resonances_group_width";--> statement-breakpoint
DROP INDEX "resonances_group_quality";--> statement-breakpoint
DROP INDEX "resonances_group_lifetime";--> statement-breakpoint
DROP INDEX "resonances_group_created";--> statement-breakpoint
DROP INDEX "resonances_group_family_energy";--> statement-breakpoint
CREATE INDEX "resonances_group_energy_key" ON "resonances" USING btree ("group_id","energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_width_key" ON "resonances" USING btree ("group_id","width","energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_quality_key" ON "resonances" USING btree ("group_id",coalesce("quality", 'Infinity'::float8),"energy","id","bound");--> statement-breakpoint
CREATE INDEX "resonances_group_lifetime_key" ON "resonances" USING btree ("group_id",coalesce("lifetime_ps", 'Infinity'::float8),"energy","id","bound");--> statement-breakpoint
CREATE INDEX "resonances_group_created_key" ON "resonances" USING btree ("group_id","created_at","energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_model_key" ON "resonances" USING btree ("group_id","model_name","model_version","energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_geometry_key" ON "resonances" USING btree ("group_id","family",coalesce("width_nm", 'Infinity'::float8),coalesce("height_nm", 'Infinity'::float8),coalesce("radius_nm", 'Infinity'::float8),coalesce("length_nm", 'Infinity'::float8),"energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_tags_key" ON "resonances" USING btree ("group_id","tags","energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_family_energy_key" ON "resonances" USING btree ("group_id","family","energy","id");