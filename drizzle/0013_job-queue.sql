CREATE TABLE "daily_mail_runs" (
	"workshop_id" integer NOT NULL,
	"day" date NOT NULL,
	"done_at" timestamp with time zone DEFAULT now() NOT NULL,
	"reminders" integer DEFAULT 0 NOT NULL,
	"digest_recipients" integer DEFAULT 0 NOT NULL,
	CONSTRAINT "daily_mail_runs_workshop_id_day_pk" PRIMARY KEY("workshop_id","day")
);
--> statement-breakpoint
CREATE TABLE "plan_runs" (
	"id" uuid PRIMARY KEY NOT NULL,
	"workshop_id" integer NOT NULL,
	"created_by" integer,
	"options" jsonb NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"attempt" integer DEFAULT 0 NOT NULL,
	"instance" text,
	"job_id" text,
	"progress" jsonb,
	"plan_id" integer,
	"error" text,
	"note" text,
	"cancel_requested" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	"heartbeat_at" timestamp with time zone
);
--> statement-breakpoint
ALTER TABLE "daily_mail_runs" ADD CONSTRAINT "daily_mail_runs_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "plan_runs" ADD CONSTRAINT "plan_runs_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "plan_runs" ADD CONSTRAINT "plan_runs_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "plan_runs" ADD CONSTRAINT "plan_runs_plan_id_plan_versions_id_fk" FOREIGN KEY ("plan_id") REFERENCES "public"."plan_versions"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "plan_runs_one_active" ON "plan_runs" USING btree ("workshop_id") WHERE "plan_runs"."status" in ('queued', 'running');--> statement-breakpoint
CREATE INDEX "plan_runs_status_heartbeat_at_index" ON "plan_runs" USING btree ("status","heartbeat_at");