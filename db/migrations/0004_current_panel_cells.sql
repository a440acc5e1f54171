CREATE TABLE "panel_cells" (
	"measure_id" integer NOT NULL,
	"jurisdiction_id" integer NOT NULL,
	"period" text NOT NULL,
	"value" double precision NOT NULL,
	"release_id" integer NOT NULL,
	CONSTRAINT "panel_cells_measure_id_jurisdiction_id_period_pk" PRIMARY KEY("measure_id","jurisdiction_id","period")
);
--> statement-breakpoint
-- Fill the current panel from what is already imported: the newest release per cell.
INSERT INTO "panel_cells" ("measure_id", "jurisdiction_id", "period", "value", "release_id")
SELECT DISTINCT ON (o.measure_id, o.jurisdiction_id, o.period) o.measure_id, o.jurisdiction_id, o.period, o.value, o.release_id
FROM "observations" o
ORDER BY o.measure_id, o.jurisdiction_id, o.period, o.release_id DESC;
