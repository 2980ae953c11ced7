ALTER TABLE "payments" ADD COLUMN "refund_of" integer;--> statement-breakpoint
ALTER TABLE "payments" ADD CONSTRAINT "payments_refund_of_payments_id_fk" FOREIGN KEY ("refund_of") REFERENCES "public"."payments"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "payments_refund_of_index" ON "payments" USING btree ("refund_of");