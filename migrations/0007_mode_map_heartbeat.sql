ALTER TABLE "mode_maps" ADD COLUMN "heartbeat_at" timestamp with time zone;--> statement-breakpoint
CREATE INDEX "mode_maps_status_heartbeat" ON "mode_maps" USING btree ("status","heartbeat_at");