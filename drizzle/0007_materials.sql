CREATE TABLE "alloy_prices" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "alloy_prices_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"alloy_id" integer NOT NULL,
	"price_per_gram_minor" integer NOT NULL,
	"effective_on" date NOT NULL,
	"set_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "alloys" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "alloys_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"code" text NOT NULL,
	"name" text NOT NULL,
	"metal" text NOT NULL,
	"fineness" integer NOT NULL,
	"density_g_per_cm3" real NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"version" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "job_bag_stones" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "job_bag_stones_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"job_bag_id" integer NOT NULL,
	"role" text NOT NULL,
	"stone" text DEFAULT 'diamond' NOT NULL,
	"shape" text DEFAULT 'round' NOT NULL,
	"size_mm" real NOT NULL,
	"count" integer NOT NULL,
	"carat_each" real,
	"carat_estimated" boolean DEFAULT false NOT NULL,
	"quality" text DEFAULT '' NOT NULL,
	"customer_owned" boolean DEFAULT false NOT NULL,
	"customer_id" integer,
	"cost_each_minor" integer,
	"version" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "loss_tolerances" (
	"kind_id" integer PRIMARY KEY NOT NULL,
	"tolerance_pct" real NOT NULL
);
--> statement-breakpoint
CREATE TABLE "metal_movements" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "metal_movements_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"alloy_id" integer NOT NULL,
	"kind" text NOT NULL,
	"weight_mg" integer NOT NULL,
	"source" text,
	"form" text,
	"job_bag_id" integer,
	"operation_id" integer,
	"person_id" integer,
	"refining_lot_id" integer,
	"cost_minor" integer,
	"corrects_id" integer,
	"reason" text DEFAULT '' NOT NULL,
	"recorded_by" integer,
	"recorded_at" timestamp with time zone NOT NULL,
	"client_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "refining_lots" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "refining_lots_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"workshop_id" integer NOT NULL,
	"number" text NOT NULL,
	"status" text DEFAULT 'open' NOT NULL,
	"refiner" text DEFAULT '' NOT NULL,
	"sent_at" timestamp with time zone,
	"settled_at" timestamp with time zone,
	"credited_fine_mg" integer,
	"credited_minor" integer,
	"notes" text DEFAULT '' NOT NULL,
	"version" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "stone_movements" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "stone_movements_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"stone_line_id" integer NOT NULL,
	"kind" text NOT NULL,
	"count" integer NOT NULL,
	"person_id" integer,
	"operation_id" integer,
	"corrects_id" integer,
	"reason" text DEFAULT '' NOT NULL,
	"recorded_by" integer,
	"recorded_at" timestamp with time zone NOT NULL,
	"client_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "alloy_prices" ADD CONSTRAINT "alloy_prices_alloy_id_alloys_id_fk" FOREIGN KEY ("alloy_id") REFERENCES "public"."alloys"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alloy_prices" ADD CONSTRAINT "alloy_prices_set_by_users_id_fk" FOREIGN KEY ("set_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alloys" ADD CONSTRAINT "alloys_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "job_bag_stones" ADD CONSTRAINT "job_bag_stones_job_bag_id_job_bags_id_fk" FOREIGN KEY ("job_bag_id") REFERENCES "public"."job_bags"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "job_bag_stones" ADD CONSTRAINT "job_bag_stones_customer_id_customers_id_fk" FOREIGN KEY ("customer_id") REFERENCES "public"."customers"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "loss_tolerances" ADD CONSTRAINT "loss_tolerances_kind_id_operation_kinds_id_fk" FOREIGN KEY ("kind_id") REFERENCES "public"."operation_kinds"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "metal_movements" ADD CONSTRAINT "metal_movements_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "metal_movements" ADD CONSTRAINT "metal_movements_alloy_id_alloys_id_fk" FOREIGN KEY ("alloy_id") REFERENCES "public"."alloys"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "metal_movements" ADD CONSTRAINT "metal_movements_job_bag_id_job_bags_id_fk" FOREIGN KEY ("job_bag_id") REFERENCES "public"."job_bags"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "metal_movements" ADD CONSTRAINT "metal_movements_operation_id_operations_id_fk" FOREIGN KEY ("operation_id") REFERENCES "public"."operations"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "metal_movements" ADD CONSTRAINT "metal_movements_person_id_people_id_fk" FOREIGN KEY ("person_id") REFERENCES "public"."people"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "metal_movements" ADD CONSTRAINT "metal_movements_refining_lot_id_refining_lots_id_fk" FOREIGN KEY ("refining_lot_id") REFERENCES "public"."refining_lots"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "metal_movements" ADD CONSTRAINT "metal_movements_recorded_by_users_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "refining_lots" ADD CONSTRAINT "refining_lots_workshop_id_workshops_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."workshops"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stone_movements" ADD CONSTRAINT "stone_movements_stone_line_id_job_bag_stones_id_fk" FOREIGN KEY ("stone_line_id") REFERENCES "public"."job_bag_stones"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stone_movements" ADD CONSTRAINT "stone_movements_person_id_people_id_fk" FOREIGN KEY ("person_id") REFERENCES "public"."people"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stone_movements" ADD CONSTRAINT "stone_movements_operation_id_operations_id_fk" FOREIGN KEY ("operation_id") REFERENCES "public"."operations"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stone_movements" ADD CONSTRAINT "stone_movements_recorded_by_users_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "alloy_prices_alloy_id_effective_on_index" ON "alloy_prices" USING btree ("alloy_id","effective_on");--> statement-breakpoint
CREATE UNIQUE INDEX "alloys_workshop_id_code_index" ON "alloys" USING btree ("workshop_id","code");--> statement-breakpoint
CREATE INDEX "job_bag_stones_job_bag_id_index" ON "job_bag_stones" USING btree ("job_bag_id");--> statement-breakpoint
CREATE INDEX "metal_movements_workshop_id_alloy_id_index" ON "metal_movements" USING btree ("workshop_id","alloy_id");--> statement-breakpoint
CREATE INDEX "metal_movements_job_bag_id_index" ON "metal_movements" USING btree ("job_bag_id");--> statement-breakpoint
CREATE INDEX "metal_movements_refining_lot_id_index" ON "metal_movements" USING btree ("refining_lot_id");--> statement-breakpoint
CREATE UNIQUE INDEX "metal_movements_client_id_index" ON "metal_movements" USING btree ("client_id");--> statement-breakpoint
CREATE UNIQUE INDEX "refining_lots_workshop_id_number_index" ON "refining_lots" USING btree ("workshop_id","number");--> statement-breakpoint
CREATE INDEX "stone_movements_stone_line_id_index" ON "stone_movements" USING btree ("stone_line_id");--> statement-breakpoint
CREATE UNIQUE INDEX "stone_movements_client_id_index" ON "stone_movements" USING btree ("client_id");