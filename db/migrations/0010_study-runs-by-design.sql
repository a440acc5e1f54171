DROP INDEX "study_runs_study";--> statement-breakpoint
CREATE INDEX "study_runs_study" ON "study_runs" USING btree ("study_id","design","id");