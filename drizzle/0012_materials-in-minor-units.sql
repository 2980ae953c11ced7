DROP INDEX "metal_movements_client_id_index";--> statement-breakpoint
ALTER TABLE "people" ADD COLUMN "hourly_rate_minor" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "price_quoted_minor" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "template_steps" ADD COLUMN "role_factors" jsonb DEFAULT '{}'::jsonb NOT NULL;--> statement-breakpoint
ALTER TABLE "operation_costs" ADD COLUMN "outside_cost_minor" integer;--> statement-breakpoint
ALTER TABLE "template_step_costs" ADD COLUMN "outside_cost_minor" integer;--> statement-breakpoint
ALTER TABLE "job_bag_stones" ADD COLUMN "depth_mm" real;--> statement-breakpoint
ALTER TABLE "loss_tolerances" ADD COLUMN "version" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
CREATE UNIQUE INDEX "metal_movements_workshop_id_client_id_index" ON "metal_movements" USING btree ("workshop_id","client_id");--> statement-breakpoint
-- Stored amounts were reals in major units: each becomes integer minor units of its workshop's currency (ISO 4217 minor unit,
-- the same table as shared/domain/currency.ts), read exactly from the stored float and rounded half away from zero.
UPDATE "orders" o SET "price_quoted_minor" = round((o."price_quoted")::float8::numeric * power(10::numeric, (CASE upper(trim(w.currency))
    WHEN 'BIF' THEN 0 WHEN 'CLP' THEN 0 WHEN 'DJF' THEN 0 WHEN 'GNF' THEN 0 WHEN 'ISK' THEN 0 WHEN 'JPY' THEN 0 WHEN 'KMF' THEN 0 WHEN 'KRW' THEN 0
    WHEN 'PYG' THEN 0 WHEN 'RWF' THEN 0 WHEN 'UGX' THEN 0 WHEN 'UYI' THEN 0 WHEN 'VND' THEN 0 WHEN 'VUV' THEN 0 WHEN 'XAF' THEN 0 WHEN 'XOF' THEN 0 WHEN 'XPF' THEN 0
    WHEN 'BHD' THEN 3 WHEN 'IQD' THEN 3 WHEN 'JOD' THEN 3 WHEN 'KWD' THEN 3 WHEN 'LYD' THEN 3 WHEN 'OMR' THEN 3 WHEN 'TND' THEN 3
    WHEN 'CLF' THEN 4 WHEN 'UYW' THEN 4
    ELSE 2 END)))::integer
  FROM "workshops" w WHERE w."id" = o."workshop_id";--> statement-breakpoint
UPDATE "people" p SET "hourly_rate_minor" = round((p."hourly_rate")::float8::numeric * power(10::numeric, (CASE upper(trim(w.currency))
    WHEN 'BIF' THEN 0 WHEN 'CLP' THEN 0 WHEN 'DJF' THEN 0 WHEN 'GNF' THEN 0 WHEN 'ISK' THEN 0 WHEN 'JPY' THEN 0 WHEN 'KMF' THEN 0 WHEN 'KRW' THEN 0
    WHEN 'PYG' THEN 0 WHEN 'RWF' THEN 0 WHEN 'UGX' THEN 0 WHEN 'UYI' THEN 0 WHEN 'VND' THEN 0 WHEN 'VUV' THEN 0 WHEN 'XAF' THEN 0 WHEN 'XOF' THEN 0 WHEN 'XPF' THEN 0
    WHEN 'BHD' THEN 3 WHEN 'IQD' THEN 3 WHEN 'JOD' THEN 3 WHEN 'KWD' THEN 3 WHEN 'LYD' THEN 3 WHEN 'OMR' THEN 3 WHEN 'TND' THEN 3
    WHEN 'CLF' THEN 4 WHEN 'UYW' THEN 4
    ELSE 2 END)))::integer
  FROM "workshops" w WHERE w."id" = p."workshop_id";--> statement-breakpoint
UPDATE "template_step_costs" c SET "outside_cost_minor" = round((c."outside_cost")::float8::numeric * power(10::numeric, (CASE upper(trim(w.currency))
    WHEN 'BIF' THEN 0 WHEN 'CLP' THEN 0 WHEN 'DJF' THEN 0 WHEN 'GNF' THEN 0 WHEN 'ISK' THEN 0 WHEN 'JPY' THEN 0 WHEN 'KMF' THEN 0 WHEN 'KRW' THEN 0
    WHEN 'PYG' THEN 0 WHEN 'RWF' THEN 0 WHEN 'UGX' THEN 0 WHEN 'UYI' THEN 0 WHEN 'VND' THEN 0 WHEN 'VUV' THEN 0 WHEN 'XAF' THEN 0 WHEN 'XOF' THEN 0 WHEN 'XPF' THEN 0
    WHEN 'BHD' THEN 3 WHEN 'IQD' THEN 3 WHEN 'JOD' THEN 3 WHEN 'KWD' THEN 3 WHEN 'LYD' THEN 3 WHEN 'OMR' THEN 3 WHEN 'TND' THEN 3
    WHEN 'CLF' THEN 4 WHEN 'UYW' THEN 4
    ELSE 2 END)))::integer
  FROM "routing_templates" t, "workshops" w WHERE t."id" = c."template_id" AND w."id" = t."workshop_id" AND c."outside_cost" IS NOT NULL;--> statement-breakpoint
UPDATE "operation_costs" c SET "outside_cost_minor" = round((c."outside_cost")::float8::numeric * power(10::numeric, (CASE upper(trim(w.currency))
    WHEN 'BIF' THEN 0 WHEN 'CLP' THEN 0 WHEN 'DJF' THEN 0 WHEN 'GNF' THEN 0 WHEN 'ISK' THEN 0 WHEN 'JPY' THEN 0 WHEN 'KMF' THEN 0 WHEN 'KRW' THEN 0
    WHEN 'PYG' THEN 0 WHEN 'RWF' THEN 0 WHEN 'UGX' THEN 0 WHEN 'UYI' THEN 0 WHEN 'VND' THEN 0 WHEN 'VUV' THEN 0 WHEN 'XAF' THEN 0 WHEN 'XOF' THEN 0 WHEN 'XPF' THEN 0
    WHEN 'BHD' THEN 3 WHEN 'IQD' THEN 3 WHEN 'JOD' THEN 3 WHEN 'KWD' THEN 3 WHEN 'LYD' THEN 3 WHEN 'OMR' THEN 3 WHEN 'TND' THEN 3
    WHEN 'CLF' THEN 4 WHEN 'UYW' THEN 4
    ELSE 2 END)))::integer
  FROM "operations" op, "job_bags" b, "workshops" w WHERE op."id" = c."operation_id" AND b."id" = op."job_bag_id" AND w."id" = b."workshop_id" AND c."outside_cost" IS NOT NULL;--> statement-breakpoint
ALTER TABLE "people" DROP COLUMN "hourly_rate";--> statement-breakpoint
ALTER TABLE "orders" DROP COLUMN "price_quoted";--> statement-breakpoint
ALTER TABLE "operation_costs" DROP COLUMN "outside_cost";--> statement-breakpoint
ALTER TABLE "template_step_costs" DROP COLUMN "outside_cost";
