ALTER TABLE "payments" ADD COLUMN "refund_of" integer;--> statement-breakpoint
ALTER TABLE "payments" ADD CONSTRAINT "payments_refund_of_payments_id_fk" FOREIGN KEY ("refund_of") REFERENCES "public"."payments"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "payments_refund_of_index" ON "payments" USING btree ("refund_of");--> statement-breakpoint
-- Refunds made before this column named their payment at the start of the note ("refund of #12"): carry that over.
UPDATE "payments" AS r SET "refund_of" = (substring(r."note" from '^refund of #([0-9]+)'))::integer
WHERE r."amount_minor" < 0 AND r."note" ~ '^refund of #[0-9]+' AND EXISTS (SELECT 1 FROM "payments" p WHERE p."id" = (substring(r."note" from '^refund of #([0-9]+)'))::integer);
