-- The placebo gap paths of a run, apart from its result JSON (server/services/studies/gapPaths.ts).
-- Doubles hardly compress: stored out of line without trying (EXTERNAL), so a run costs no compression.
ALTER TABLE "study_runs" ADD COLUMN "gap_paths" "bytea";--> statement-breakpoint
ALTER TABLE "study_runs" ALTER COLUMN "gap_paths" SET STORAGE EXTERNAL;
