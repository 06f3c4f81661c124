CREATE TABLE "catalogue_generations" (
	"group_id" uuid PRIMARY KEY NOT NULL,
	"generation" bigint DEFAULT 0 NOT NULL
);
