-- Stored values that still said "template" say "routing": an operation's estimate source (and the default for new ones),
-- the source recorded in estimate changes, the audit entity of routings, and the routing key in quote details.
ALTER TABLE "operations" ALTER COLUMN "estimate_source" SET DEFAULT 'routing';--> statement-breakpoint
UPDATE "operations" SET "estimate_source" = 'routing' WHERE "estimate_source" = 'template';--> statement-breakpoint
UPDATE "estimate_changes" SET "from_source" = 'routing' WHERE "from_source" = 'template';--> statement-breakpoint
UPDATE "audit_log" SET "entity" = 'routing' WHERE "entity" = 'routing-template';--> statement-breakpoint
UPDATE "quotes" SET "details" = ("details" - 'templateId') || jsonb_build_object('routingId', "details" -> 'templateId') WHERE "details" ? 'templateId';--> statement-breakpoint
-- A quote's audited edit keeps the details it was given: the same key is renamed there.
UPDATE "audit_log" SET "details" = jsonb_set("details", '{details}', (("details" -> 'details') - 'templateId') || jsonb_build_object('routingId', ("details" -> 'details') -> 'templateId'))
WHERE "entity" = 'quote' AND jsonb_typeof("details" -> 'details') = 'object' AND ("details" -> 'details') ? 'templateId';
