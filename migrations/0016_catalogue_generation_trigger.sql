-- Custom migration (drizzle-kit generate --custom): the trigger drizzle's schema cannot declare.
-- Raises catalogue_generations.generation of every group whose resonances a statement
-- inserted, updated or deleted, in the statement's own transaction, once per statement
-- (statement-level triggers with transition tables), so a bulk insert of a run's poles costs
-- one upsert. Updates never move a row to another group, so the new rows name the groups.
CREATE FUNCTION catalogue_generation_raise() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  INSERT INTO catalogue_generations AS g (group_id, generation)
  SELECT DISTINCT group_id, 1 FROM changed_rows
  ON CONFLICT (group_id) DO UPDATE SET generation = g.generation + 1;
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE FUNCTION catalogue_generation_raise_all() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  UPDATE catalogue_generations SET generation = generation + 1;
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE TRIGGER resonances_generation_insert AFTER INSERT ON resonances
  REFERENCING NEW TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION catalogue_generation_raise();
--> statement-breakpoint
CREATE TRIGGER resonances_generation_update AFTER UPDATE ON resonances
  REFERENCING NEW TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION catalogue_generation_raise();
--> statement-breakpoint
CREATE TRIGGER resonances_generation_delete AFTER DELETE ON resonances
  REFERENCING OLD TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION catalogue_generation_raise();
--> statement-breakpoint
CREATE TRIGGER resonances_generation_truncate AFTER TRUNCATE ON resonances
  FOR EACH STATEMENT EXECUTE FUNCTION catalogue_generation_raise_all();
