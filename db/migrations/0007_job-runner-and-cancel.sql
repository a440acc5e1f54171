ALTER TABLE "jobs" ADD COLUMN "runner" text;--> statement-breakpoint
ALTER TABLE "jobs" ADD COLUMN "cancel_requested_at" timestamp with time zone;