-- Routings get a kind: a new piece (the default), a repair of the customer's own piece, or a production run.
ALTER TABLE "routings" ADD COLUMN "kind" text DEFAULT 'piece' NOT NULL;--> statement-breakpoint
-- Until now a repair was recognised by its routing's code or name (a word starting repair, resiz or retip, in any case): those
-- routings become repairs. Their version moves on, so an edit opened before the kind existed cannot save over it unseen.
UPDATE "routings" SET "kind" = 'repair', "version" = "version" + 1 WHERE ("code" || ' ' || "name") ~* '\m(repair|resiz|retip)';
