-- A piece made from a quote keeps the quote's stone rows (count in one piece, cost of one stone), so the order's estimated cost
-- counts the stones at the costs the quote was written with until the piece has a stone list of its own.
ALTER TABLE "job_bags" ADD COLUMN "quoted_stones" jsonb;--> statement-breakpoint
-- Orders made from a quote before this (an accepted quote naming a routing makes one piece, the order's first job bag): that
-- piece takes the quote's rows with a count, in their order, a cost not given as null. Quotes written for an order already
-- name no routing and made no piece.
UPDATE "job_bags" AS b
SET "quoted_stones" = x."stones"
FROM (
  SELECT DISTINCT ON (q."order_id")
    q."order_id",
    (
      SELECT jsonb_agg(
        jsonb_build_object(
          'description', st->>'description',
          'count', (st->>'count')::int,
          'costEachMinor', CASE WHEN jsonb_typeof(st->'costEachMinor') = 'number' THEN (st->>'costEachMinor')::int END
        )
        ORDER BY e."n"
      )
      FROM jsonb_array_elements(q."details"->'stones') WITH ORDINALITY AS e("st", "n")
      WHERE jsonb_typeof(st->'count') = 'number' AND (st->>'count')::int > 0
    ) AS "stones"
  FROM "quotes" AS q
  WHERE q."status" = 'accepted'
    AND q."order_id" IS NOT NULL
    AND q."details" ? 'routingId'
    AND jsonb_typeof(q."details"->'stones') = 'array'
  ORDER BY q."order_id", q."accepted_at" DESC NULLS LAST, q."id" DESC
) AS x
WHERE x."stones" IS NOT NULL
  AND b."order_id" = x."order_id"
  AND b."id" = (SELECT min(f."id") FROM "job_bags" AS f WHERE f."order_id" = x."order_id");
