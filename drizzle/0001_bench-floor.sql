CREATE TABLE "bench_requests" (
	"request_id" text PRIMARY KEY NOT NULL,
	"workshop_id" integer NOT NULL,
	"user_id" integer NOT NULL,
	"action" text NOT NULL,
	"operation_id" integer,
	"status" integer DEFAULT 0 NOT NULL,
	"response" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "estimate_changes" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "estimate_changes_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"operation_id" integer NOT NULL,
	"from_minutes" real NOT NULL,
	"to_minutes" real NOT NULL,
	"from_source" text NOT NULL,
	"reason" text NOT NULL,
	"changed_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "time_record_corrections" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "time_record_corrections_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"time_record_id" integer NOT NULL,
	"kind" text NOT NULL,
	"started_at" timestamp with time zone,
	"ended_at" timestamp with time zone,
	"previous_started_at" timestamp with time zone,
	"previous_ended_at" timestamp with time zone,
	"reason" text NOT NULL,
	"corrected_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "bench_requests" ADD CONSTRAINT "bench_requests_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_requests" ADD CONSTRAINT "bench_requests_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_requests" ADD CONSTRAINT "bench_requests_operation_id_operations_id_fk" FOREIGN KEY ("operation_id") REFERENCES "public"."operations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "estimate_changes" ADD CONSTRAINT "estimate_changes_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "estimate_changes" ADD CONSTRAINT "estimate_changes_operation_id_operations_id_fk" FOREIGN KEY ("operation_id") REFERENCES "public"."operations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "estimate_changes" ADD CONSTRAINT "estimate_changes_changed_by_users_id_fk" FOREIGN KEY ("changed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "time_record_corrections" ADD CONSTRAINT "time_record_corrections_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "time_record_corrections" ADD CONSTRAINT "time_record_corrections_time_record_id_time_records_id_fk" FOREIGN KEY ("time_record_id") REFERENCES "public"."time_records"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "time_record_corrections" ADD CONSTRAINT "time_record_corrections_corrected_by_users_id_fk" FOREIGN KEY ("corrected_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "bench_requests_workshop_id_created_at_index" ON "bench_requests" USING btree ("workshop_id","created_at");--> statement-breakpoint
CREATE INDEX "estimate_changes_operation_id_index" ON "estimate_changes" USING btree ("operation_id");--> statement-breakpoint
CREATE INDEX "time_record_corrections_time_record_id_index" ON "time_record_corrections" USING btree ("time_record_id");