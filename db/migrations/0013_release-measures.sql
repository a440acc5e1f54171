ALTER TABLE "source_releases" ADD COLUMN "measure_ids" integer[];--> statement-breakpoint
-- releases imported before: their measures, read from their observations once
UPDATE "source_releases" r SET "measure_ids" = ARRAY(SELECT DISTINCT o.measure_id FROM observations o WHERE o.release_id = r.id ORDER BY 1)
WHERE r.status = 'done';
