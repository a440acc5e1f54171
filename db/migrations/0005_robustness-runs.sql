CREATE TABLE "robustness_runs" (
	"id" serial PRIMARY KEY NOT NULL,
	"study_id" integer NOT NULL,
	"run_id" integer,
	"kind" text NOT NULL,
	"spec" jsonb NOT NULL,
	"fingerprint" text,
	"status" text DEFAULT 'queued' NOT NULL,
	"progress" double precision DEFAULT 0 NOT NULL,
	"message" text,
	"result" jsonb,
	"job_id" uuid,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "robustness_runs" ADD CONSTRAINT "robustness_runs_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "robustness_runs" ADD CONSTRAINT "robustness_runs_run_id_study_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."study_runs"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "robustness_runs" ADD CONSTRAINT "robustness_runs_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "robustness_runs_study" ON "robustness_runs" USING btree ("study_id");