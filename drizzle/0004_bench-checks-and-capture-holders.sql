ALTER TABLE "capture" ADD COLUMN "held_by" text;--> statement-breakpoint
ALTER TABLE "capture" ADD COLUMN "alive_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "run" ADD COLUMN "checks" jsonb DEFAULT '{}'::jsonb NOT NULL;