-- A routing says whether it resizes a ring (an order on it then asks for the size the ring is and the size it is to be).
ALTER TABLE "routings" ADD COLUMN "resizes_ring" boolean DEFAULT false NOT NULL;--> statement-breakpoint
-- Until now the order form asked for the sizes when the routing's code said "resize": those routings resize a ring. Their
-- version moves on, so an edit opened before the flag existed cannot save over it unseen.
UPDATE "routings" SET "resizes_ring" = true, "version" = "version" + 1 WHERE "code" LIKE '%resize%';
