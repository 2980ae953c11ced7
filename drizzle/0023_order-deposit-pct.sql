-- Each order keeps the deposit % it was taken with, so changing the workshop's default later never changes what an order
-- already taken asks. Orders taken before this asked the workshop's default as it stands now (that is what their money said
-- until now), so they keep that.
ALTER TABLE "orders" ADD COLUMN "deposit_pct" integer;--> statement-breakpoint
UPDATE "orders" SET "deposit_pct" = "workshops"."deposit_pct" FROM "workshops" WHERE "workshops"."id" = "orders"."workshop_id";
