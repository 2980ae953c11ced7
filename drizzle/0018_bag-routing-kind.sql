-- A job bag keeps its routing's kind as it was when the bag was made (a repair works on the customer's own piece), so a routing's
-- kind changed later, or the routing removed, no longer changes what existing bags' metal is counted as.
ALTER TABLE "job_bags" ADD COLUMN "routing_kind" text DEFAULT 'piece' NOT NULL;--> statement-breakpoint
-- Bags made before: the kind their routing has now (what they were read as until now); a bag whose routing is gone stays a new piece.
UPDATE "job_bags" AS b SET "routing_kind" = r."kind" FROM "routings" AS r WHERE r."id" = b."routing_id";
