ALTER TABLE "workshops" ADD COLUMN "vat_registered" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "workshops" ADD COLUMN "vat_number" text DEFAULT '' NOT NULL;--> statement-breakpoint
ALTER TABLE "workshops" ADD COLUMN "vat_rate_basis_points" integer DEFAULT 2000 NOT NULL;