-- An open order goes in work once one of its job bags is (until now nothing moved it): orders already in that state follow.
UPDATE "orders" SET "status" = 'in-work', "version" = "version" + 1
WHERE "status" = 'open' AND EXISTS (SELECT 1 FROM "job_bags" AS b WHERE b."order_id" = "orders"."id" AND b."status" IN ('in-work', 'complete'));
