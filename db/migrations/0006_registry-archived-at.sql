ALTER TABLE "jurisdictions" ADD COLUMN "archived_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "measures" ADD COLUMN "archived_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "sources" ADD COLUMN "archived_at" timestamp with time zone;