CREATE INDEX "resonances_group_dim_width_key" ON "resonances" USING btree ("group_id",coalesce("width_nm", 'Infinity'::float8),"energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_dim_height_key" ON "resonances" USING btree ("group_id",coalesce("height_nm", 'Infinity'::float8),"energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_dim_radius_key" ON "resonances" USING btree ("group_id",coalesce("radius_nm", 'Infinity'::float8),"energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_dim_length_key" ON "resonances" USING btree ("group_id",coalesce("length_nm", 'Infinity'::float8),"energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_dim_rx_key" ON "resonances" USING btree ("group_id",coalesce("rx_nm", 'Infinity'::float8),"energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_dim_ry_key" ON "resonances" USING btree ("group_id",coalesce("ry_nm", 'Infinity'::float8),"energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_dim_inner_key" ON "resonances" USING btree ("group_id",coalesce("inner_nm", 'Infinity'::float8),"energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_dim_outer_key" ON "resonances" USING btree ("group_id",coalesce("outer_nm", 'Infinity'::float8),"energy","id");--> statement-breakpoint
CREATE INDEX "resonances_group_dim_area_key" ON "resonances" USING btree ("group_id",coalesce("area_nm2", 'Infinity'::float8),"energy","id");