CREATE TABLE "realtime_events" (
	"seq" bigserial PRIMARY KEY NOT NULL,
	"workshop_id" integer NOT NULL,
	"event" text NOT NULL,
	"payload" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "socket_io_attachments" (
	"id" bigserial NOT NULL,
	"created_at" timestamp with time zone DEFAULT now(),
	"payload" "bytea",
	CONSTRAINT "socket_io_attachments_id_unique" UNIQUE("id")
);
--> statement-breakpoint
ALTER TABLE "realtime_events" ADD CONSTRAINT "realtime_events_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "realtime_events_workshop_id_seq_index" ON "realtime_events" USING btree ("workshop_id","seq");