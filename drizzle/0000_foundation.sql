CREATE TABLE "audit_log" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "audit_log_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"user_id" integer,
	"at" timestamp with time zone DEFAULT now() NOT NULL,
	"action" text NOT NULL,
	"entity" text NOT NULL,
	"entity_id" integer,
	"details" jsonb DEFAULT '{}'::jsonb NOT NULL
);
--> statement-breakpoint
CREATE TABLE "closures" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "closures_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"name" text NOT NULL,
	"starts_on" date NOT NULL,
	"ends_on" date NOT NULL
);
--> statement-breakpoint
CREATE TABLE "users" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "users_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"email" text NOT NULL,
	"name" text NOT NULL,
	"role" text NOT NULL,
	"password_hash" text NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"version" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "workshops" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "workshops_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"name" text NOT NULL,
	"time_zone" text DEFAULT 'Europe/London' NOT NULL,
	"week_pattern" jsonb NOT NULL,
	"planning_load" real DEFAULT 0.85 NOT NULL,
	"version" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "bench_capabilities" (
	"bench_id" integer NOT NULL,
	"kind_id" integer NOT NULL,
	CONSTRAINT "bench_capabilities_bench_id_kind_id_pk" PRIMARY KEY("bench_id","kind_id")
);
--> statement-breakpoint
CREATE TABLE "bench_downtime" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "bench_downtime_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"bench_id" integer NOT NULL,
	"starts_at" timestamp with time zone NOT NULL,
	"ends_at" timestamp with time zone NOT NULL,
	"reason" text NOT NULL
);
--> statement-breakpoint
CREATE TABLE "benches" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "benches_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"name" text NOT NULL,
	"kind" text NOT NULL,
	"capacity" integer DEFAULT 1 NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"version" integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
CREATE TABLE "leave" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "leave_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"person_id" integer NOT NULL,
	"starts_on" date NOT NULL,
	"ends_on" date NOT NULL,
	"reason" text DEFAULT 'leave' NOT NULL
);
--> statement-breakpoint
CREATE TABLE "operation_kinds" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "operation_kinds_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"code" text NOT NULL,
	"name" text NOT NULL,
	"outside" boolean DEFAULT false NOT NULL,
	"hazards" text[] DEFAULT '{}' NOT NULL,
	"color" text DEFAULT '#7a8ca3' NOT NULL,
	"version" integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
CREATE TABLE "people" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "people_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"user_id" integer,
	"name" text NOT NULL,
	"week_pattern" jsonb,
	"hourly_rate" real DEFAULT 0 NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"version" integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
CREATE TABLE "person_skills" (
	"person_id" integer NOT NULL,
	"kind_id" integer NOT NULL,
	"level" integer NOT NULL,
	"speed" real DEFAULT 1 NOT NULL,
	CONSTRAINT "person_skills_person_id_kind_id_pk" PRIMARY KEY("person_id","kind_id")
);
--> statement-breakpoint
CREATE TABLE "customers" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "customers_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"reference" text NOT NULL,
	"name" text NOT NULL,
	"email" text DEFAULT '' NOT NULL,
	"phone" text DEFAULT '' NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"version" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "job_bags" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "job_bags_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"order_id" integer NOT NULL,
	"number" text NOT NULL,
	"piece" text NOT NULL,
	"template_id" integer,
	"params" jsonb NOT NULL,
	"status" text DEFAULT 'waiting' NOT NULL,
	"release_at" timestamp with time zone,
	"version" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "operations" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "operations_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"job_bag_id" integer NOT NULL,
	"seq" integer NOT NULL,
	"key" text NOT NULL,
	"kind_id" integer NOT NULL,
	"name" text NOT NULL,
	"status" text DEFAULT 'pending' NOT NULL,
	"estimate_minutes" real NOT NULL,
	"estimate_source" text DEFAULT 'template' NOT NULL,
	"required_level" integer DEFAULT 1 NOT NULL,
	"wait_after_minutes" integer DEFAULT 0 NOT NULL,
	"lead_days" integer DEFAULT 0 NOT NULL,
	"after" text[] DEFAULT '{}' NOT NULL,
	"planned_bench_id" integer,
	"planned_person_id" integer,
	"planned_start" timestamp with time zone,
	"planned_end" timestamp with time zone,
	"pinned" boolean DEFAULT false NOT NULL,
	"claimed_by" integer,
	"finished_at" timestamp with time zone,
	"version" integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
CREATE TABLE "orders" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "orders_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"number" text NOT NULL,
	"customer_id" integer NOT NULL,
	"title" text NOT NULL,
	"due_date" date NOT NULL,
	"promised_date" date,
	"priority" integer DEFAULT 3 NOT NULL,
	"status" text DEFAULT 'open' NOT NULL,
	"price_quoted" real DEFAULT 0 NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"version" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "plan_versions" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "plan_versions_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"number" integer NOT NULL,
	"status" text DEFAULT 'draft' NOT NULL,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"published_by" integer,
	"published_at" timestamp with time zone,
	"score" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"assignments" jsonb DEFAULT '{}'::jsonb NOT NULL
);
--> statement-breakpoint
CREATE TABLE "routing_templates" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "routing_templates_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"code" text NOT NULL,
	"name" text NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"version" integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
CREATE TABLE "template_steps" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "template_steps_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"template_id" integer NOT NULL,
	"seq" integer NOT NULL,
	"key" text NOT NULL,
	"kind_id" integer NOT NULL,
	"name" text NOT NULL,
	"base_minutes" real NOT NULL,
	"per_stone_minutes" real DEFAULT 0 NOT NULL,
	"required_level" integer DEFAULT 1 NOT NULL,
	"wait_after_minutes" integer DEFAULT 0 NOT NULL,
	"lead_days" integer DEFAULT 0 NOT NULL,
	"after" text[] DEFAULT '{}' NOT NULL
);
--> statement-breakpoint
CREATE TABLE "time_records" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "time_records_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"operation_id" integer NOT NULL,
	"person_id" integer NOT NULL,
	"bench_id" integer,
	"started_at" timestamp with time zone NOT NULL,
	"ended_at" timestamp with time zone,
	"end_reason" text,
	"note" text DEFAULT '' NOT NULL,
	"client_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "audit_log" ADD CONSTRAINT "audit_log_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "audit_log" ADD CONSTRAINT "audit_log_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "closures" ADD CONSTRAINT "closures_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "users" ADD CONSTRAINT "users_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_capabilities" ADD CONSTRAINT "bench_capabilities_bench_id_benches_id_fk" FOREIGN KEY ("bench_id") REFERENCES "public"."benches"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_capabilities" ADD CONSTRAINT "bench_capabilities_kind_id_operation_kinds_id_fk" FOREIGN KEY ("kind_id") REFERENCES "public"."operation_kinds"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_downtime" ADD CONSTRAINT "bench_downtime_bench_id_benches_id_fk" FOREIGN KEY ("bench_id") REFERENCES "public"."benches"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "benches" ADD CONSTRAINT "benches_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "leave" ADD CONSTRAINT "leave_person_id_people_id_fk" FOREIGN KEY ("person_id") REFERENCES "public"."people"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "operation_kinds" ADD CONSTRAINT "operation_kinds_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "people" ADD CONSTRAINT "people_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "people" ADD CONSTRAINT "people_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "person_skills" ADD CONSTRAINT "person_skills_person_id_people_id_fk" FOREIGN KEY ("person_id") REFERENCES "public"."people"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "person_skills" ADD CONSTRAINT "person_skills_kind_id_operation_kinds_id_fk" FOREIGN KEY ("kind_id") REFERENCES "public"."operation_kinds"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "customers" ADD CONSTRAINT "customers_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "job_bags" ADD CONSTRAINT "job_bags_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "job_bags" ADD CONSTRAINT "job_bags_order_id_orders_id_fk" FOREIGN KEY ("order_id") REFERENCES "public"."orders"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "job_bags" ADD CONSTRAINT "job_bags_template_id_routing_templates_id_fk" FOREIGN KEY ("template_id") REFERENCES "public"."routing_templates"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "operations" ADD CONSTRAINT "operations_job_bag_id_job_bags_id_fk" FOREIGN KEY ("job_bag_id") REFERENCES "public"."job_bags"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "operations" ADD CONSTRAINT "operations_kind_id_operation_kinds_id_fk" FOREIGN KEY ("kind_id") REFERENCES "public"."operation_kinds"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "operations" ADD CONSTRAINT "operations_planned_bench_id_benches_id_fk" FOREIGN KEY ("planned_bench_id") REFERENCES "public"."benches"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "operations" ADD CONSTRAINT "operations_planned_person_id_people_id_fk" FOREIGN KEY ("planned_person_id") REFERENCES "public"."people"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "operations" ADD CONSTRAINT "operations_claimed_by_people_id_fk" FOREIGN KEY ("claimed_by") REFERENCES "public"."people"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "orders" ADD CONSTRAINT "orders_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "orders" ADD CONSTRAINT "orders_customer_id_customers_id_fk" FOREIGN KEY ("customer_id") REFERENCES "public"."customers"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "plan_versions" ADD CONSTRAINT "plan_versions_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "plan_versions" ADD CONSTRAINT "plan_versions_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "plan_versions" ADD CONSTRAINT "plan_versions_published_by_users_id_fk" FOREIGN KEY ("published_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "routing_templates" ADD CONSTRAINT "routing_templates_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_steps" ADD CONSTRAINT "template_steps_template_id_routing_templates_id_fk" FOREIGN KEY ("template_id") REFERENCES "public"."routing_templates"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_steps" ADD CONSTRAINT "template_steps_kind_id_operation_kinds_id_fk" FOREIGN KEY ("kind_id") REFERENCES "public"."operation_kinds"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "time_records" ADD CONSTRAINT "time_records_operation_id_operations_id_fk" FOREIGN KEY ("operation_id") REFERENCES "public"."operations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "time_records" ADD CONSTRAINT "time_records_person_id_people_id_fk" FOREIGN KEY ("person_id") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "time_records" ADD CONSTRAINT "time_records_bench_id_benches_id_fk" FOREIGN KEY ("bench_id") REFERENCES "public"."benches"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "audit_log_workshop_id_at_index" ON "audit_log" USING btree ("workshop_id","at");--> statement-breakpoint
CREATE INDEX "closures_workshop_id_index" ON "closures" USING btree ("workshop_id");--> statement-breakpoint
CREATE UNIQUE INDEX "users_email_index" ON "users" USING btree ("email");--> statement-breakpoint
CREATE INDEX "bench_downtime_bench_id_index" ON "bench_downtime" USING btree ("bench_id");--> statement-breakpoint
CREATE UNIQUE INDEX "benches_workshop_id_name_index" ON "benches" USING btree ("workshop_id","name");--> statement-breakpoint
CREATE INDEX "leave_person_id_index" ON "leave" USING btree ("person_id");--> statement-breakpoint
CREATE UNIQUE INDEX "operation_kinds_workshop_id_code_index" ON "operation_kinds" USING btree ("workshop_id","code");--> statement-breakpoint
CREATE UNIQUE INDEX "people_user_id_index" ON "people" USING btree ("user_id");--> statement-breakpoint
CREATE INDEX "people_workshop_id_index" ON "people" USING btree ("workshop_id");--> statement-breakpoint
CREATE UNIQUE INDEX "customers_workshop_id_reference_index" ON "customers" USING btree ("workshop_id","reference");--> statement-breakpoint
CREATE UNIQUE INDEX "job_bags_workshop_id_number_index" ON "job_bags" USING btree ("workshop_id","number");--> statement-breakpoint
CREATE INDEX "job_bags_order_id_index" ON "job_bags" USING btree ("order_id");--> statement-breakpoint
CREATE UNIQUE INDEX "operations_job_bag_id_key_index" ON "operations" USING btree ("job_bag_id","key");--> statement-breakpoint
CREATE INDEX "operations_status_index" ON "operations" USING btree ("status");--> statement-breakpoint
CREATE UNIQUE INDEX "orders_workshop_id_number_index" ON "orders" USING btree ("workshop_id","number");--> statement-breakpoint
CREATE INDEX "orders_customer_id_index" ON "orders" USING btree ("customer_id");--> statement-breakpoint
CREATE UNIQUE INDEX "plan_versions_workshop_id_number_index" ON "plan_versions" USING btree ("workshop_id","number");--> statement-breakpoint
CREATE UNIQUE INDEX "routing_templates_workshop_id_code_index" ON "routing_templates" USING btree ("workshop_id","code");--> statement-breakpoint
CREATE UNIQUE INDEX "template_steps_template_id_key_index" ON "template_steps" USING btree ("template_id","key");--> statement-breakpoint
CREATE INDEX "time_records_operation_id_index" ON "time_records" USING btree ("operation_id");--> statement-breakpoint
CREATE INDEX "time_records_person_id_index" ON "time_records" USING btree ("person_id");--> statement-breakpoint
CREATE UNIQUE INDEX "time_records_client_id_index" ON "time_records" USING btree ("client_id");