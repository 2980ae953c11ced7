CREATE TABLE "operation_costs" (
	"operation_id" integer PRIMARY KEY NOT NULL,
	"outside_cost" real,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "template_step_changes" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "template_step_changes_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"template_id" integer NOT NULL,
	"step_key" text NOT NULL,
	"kind_id" integer NOT NULL,
	"from_base_minutes" real NOT NULL,
	"from_per_stone_minutes" real NOT NULL,
	"to_base_minutes" real NOT NULL,
	"to_per_stone_minutes" real NOT NULL,
	"template_version" integer NOT NULL,
	"basis" jsonb NOT NULL,
	"reason" text DEFAULT '' NOT NULL,
	"accepted_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "template_step_costs" (
	"template_id" integer NOT NULL,
	"step_key" text NOT NULL,
	"outside_cost" real,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "template_step_costs_template_id_step_key_pk" PRIMARY KEY("template_id","step_key")
);
--> statement-breakpoint
ALTER TABLE "operation_costs" ADD CONSTRAINT "operation_costs_operation_id_operations_id_fk" FOREIGN KEY ("operation_id") REFERENCES "public"."operations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_step_changes" ADD CONSTRAINT "template_step_changes_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_step_changes" ADD CONSTRAINT "template_step_changes_template_id_routing_templates_id_fk" FOREIGN KEY ("template_id") REFERENCES "public"."routing_templates"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_step_changes" ADD CONSTRAINT "template_step_changes_kind_id_operation_kinds_id_fk" FOREIGN KEY ("kind_id") REFERENCES "public"."operation_kinds"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_step_changes" ADD CONSTRAINT "template_step_changes_accepted_by_users_id_fk" FOREIGN KEY ("accepted_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_step_costs" ADD CONSTRAINT "template_step_costs_template_id_routing_templates_id_fk" FOREIGN KEY ("template_id") REFERENCES "public"."routing_templates"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "template_step_changes_workshop_id_template_id_index" ON "template_step_changes" USING btree ("workshop_id","template_id");