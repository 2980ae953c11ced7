ALTER TABLE "workshops" ADD COLUMN "public_url" text DEFAULT '' NOT NULL;--> statement-breakpoint
ALTER TABLE "routing_templates" ADD COLUMN "learning_rate" real;--> statement-breakpoint
ALTER TABLE "template_steps" ADD COLUMN "per_mm_minutes" real DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "template_steps" ADD COLUMN "size_band_factors" jsonb DEFAULT '{}'::jsonb NOT NULL;