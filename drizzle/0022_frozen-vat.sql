-- The VAT terms in force are kept on each quote, order and payment (and each payment's VAT in its amount), so a document made
-- again says what it said when it was issued. Rows made before this know no terms of their own: they take the workshop's
-- settings as they stand now, the only terms on record (the terms their documents were made with until now), and a payment's
-- VAT is that of its own amount, as its receipt stated it. The columns are added empty, filled, then required.
ALTER TABLE "orders" ADD COLUMN "vat_registered" boolean;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "vat_number" text;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "vat_rate_basis_points" integer;--> statement-breakpoint
ALTER TABLE "payments" ADD COLUMN "vat_registered" boolean;--> statement-breakpoint
ALTER TABLE "payments" ADD COLUMN "vat_number" text;--> statement-breakpoint
ALTER TABLE "payments" ADD COLUMN "vat_rate_basis_points" integer;--> statement-breakpoint
ALTER TABLE "payments" ADD COLUMN "vat_minor" integer;--> statement-breakpoint
ALTER TABLE "quotes" ADD COLUMN "vat_registered" boolean;--> statement-breakpoint
ALTER TABLE "quotes" ADD COLUMN "vat_number" text;--> statement-breakpoint
ALTER TABLE "quotes" ADD COLUMN "vat_rate_basis_points" integer;--> statement-breakpoint
UPDATE "orders" AS o SET "vat_registered" = w."vat_registered", "vat_number" = w."vat_number", "vat_rate_basis_points" = w."vat_rate_basis_points"
FROM "workshops" AS w WHERE w."id" = o."workshop_id";--> statement-breakpoint
UPDATE "quotes" AS q SET "vat_registered" = w."vat_registered", "vat_number" = w."vat_number", "vat_rate_basis_points" = w."vat_rate_basis_points"
FROM "workshops" AS w WHERE w."id" = q."workshop_id";--> statement-breakpoint
-- amount × rate / (10,000 + rate) in basis points, to the minor unit, halves away from zero (vatInAmount in shared/domain/vat.ts),
-- in bigint so a large amount times the rate cannot overflow.
UPDATE "payments" AS p SET "vat_registered" = w."vat_registered", "vat_number" = w."vat_number", "vat_rate_basis_points" = w."vat_rate_basis_points",
  "vat_minor" = CASE WHEN NOT w."vat_registered" OR w."vat_rate_basis_points" <= 0 THEN 0
    ELSE (CASE WHEN p."amount_minor" < 0 THEN -1 ELSE 1 END)
      * ((2 * abs(p."amount_minor")::bigint * w."vat_rate_basis_points" + 10000 + w."vat_rate_basis_points") / (2 * (10000 + w."vat_rate_basis_points"::bigint)))::integer
    END
FROM "workshops" AS w WHERE w."id" = p."workshop_id";--> statement-breakpoint
ALTER TABLE "orders" ALTER COLUMN "vat_registered" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "orders" ALTER COLUMN "vat_number" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "orders" ALTER COLUMN "vat_rate_basis_points" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "payments" ALTER COLUMN "vat_registered" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "payments" ALTER COLUMN "vat_number" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "payments" ALTER COLUMN "vat_rate_basis_points" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "payments" ALTER COLUMN "vat_minor" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "quotes" ALTER COLUMN "vat_registered" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "quotes" ALTER COLUMN "vat_number" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "quotes" ALTER COLUMN "vat_rate_basis_points" SET NOT NULL;
