ALTER TABLE "observations" DROP CONSTRAINT "observations_release_id_source_releases_id_fk";
--> statement-breakpoint
ALTER TABLE "observations" DROP CONSTRAINT "observations_measure_id_measures_id_fk";
--> statement-breakpoint
ALTER TABLE "observations" DROP CONSTRAINT "observations_jurisdiction_id_jurisdictions_id_fk";
