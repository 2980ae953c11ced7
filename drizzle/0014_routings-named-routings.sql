-- Routings keep their rows and ids: tables, columns, sequences, keys and indexes are renamed from "template" to "routing", nothing is dropped.
ALTER TABLE "routing_templates" RENAME TO "routings";--> statement-breakpoint
ALTER TABLE "template_steps" RENAME TO "routing_steps";--> statement-breakpoint
ALTER TABLE "template_step_changes" RENAME TO "routing_step_changes";--> statement-breakpoint
ALTER TABLE "template_step_costs" RENAME TO "routing_step_costs";--> statement-breakpoint
ALTER TABLE "routing_steps" RENAME COLUMN "template_id" TO "routing_id";--> statement-breakpoint
ALTER TABLE "job_bags" RENAME COLUMN "template_id" TO "routing_id";--> statement-breakpoint
ALTER TABLE "routing_step_changes" RENAME COLUMN "template_id" TO "routing_id";--> statement-breakpoint
ALTER TABLE "routing_step_changes" RENAME COLUMN "template_version" TO "routing_version";--> statement-breakpoint
ALTER TABLE "routing_step_costs" RENAME COLUMN "template_id" TO "routing_id";--> statement-breakpoint
ALTER SEQUENCE "routing_templates_id_seq" RENAME TO "routings_id_seq";--> statement-breakpoint
ALTER SEQUENCE "template_steps_id_seq" RENAME TO "routing_steps_id_seq";--> statement-breakpoint
ALTER SEQUENCE "template_step_changes_id_seq" RENAME TO "routing_step_changes_id_seq";--> statement-breakpoint
ALTER TABLE "routings" RENAME CONSTRAINT "routing_templates_pkey" TO "routings_pkey";--> statement-breakpoint
ALTER TABLE "routing_steps" RENAME CONSTRAINT "template_steps_pkey" TO "routing_steps_pkey";--> statement-breakpoint
ALTER TABLE "routing_step_changes" RENAME CONSTRAINT "template_step_changes_pkey" TO "routing_step_changes_pkey";--> statement-breakpoint
ALTER TABLE "routing_step_costs" RENAME CONSTRAINT "template_step_costs_template_id_step_key_pk" TO "routing_step_costs_routing_id_step_key_pk";--> statement-breakpoint
ALTER INDEX "routing_templates_workshop_id_code_index" RENAME TO "routings_workshop_id_code_index";--> statement-breakpoint
ALTER INDEX "template_steps_template_id_key_index" RENAME TO "routing_steps_routing_id_key_index";--> statement-breakpoint
ALTER INDEX "template_step_changes_workshop_id_template_id_index" RENAME TO "routing_step_changes_workshop_id_routing_id_index";--> statement-breakpoint
ALTER TABLE "job_bags" RENAME CONSTRAINT "job_bags_template_id_routing_templates_id_fk" TO "job_bags_routing_id_routings_id_fk";--> statement-breakpoint
ALTER TABLE "routings" RENAME CONSTRAINT "routing_templates_workshop_id_workshops_id_fk" TO "routings_workshop_id_workshops_id_fk";--> statement-breakpoint
ALTER TABLE "routing_steps" RENAME CONSTRAINT "template_steps_template_id_routing_templates_id_fk" TO "routing_steps_routing_id_routings_id_fk";--> statement-breakpoint
ALTER TABLE "routing_steps" RENAME CONSTRAINT "template_steps_kind_id_operation_kinds_id_fk" TO "routing_steps_kind_id_operation_kinds_id_fk";--> statement-breakpoint
ALTER TABLE "routing_step_changes" RENAME CONSTRAINT "template_step_changes_workshop_id_workshops_id_fk" TO "routing_step_changes_workshop_id_workshops_id_fk";--> statement-breakpoint
ALTER TABLE "routing_step_changes" RENAME CONSTRAINT "template_step_changes_template_id_routing_templates_id_fk" TO "routing_step_changes_routing_id_routings_id_fk";--> statement-breakpoint
ALTER TABLE "routing_step_changes" RENAME CONSTRAINT "template_step_changes_kind_id_operation_kinds_id_fk" TO "routing_step_changes_kind_id_operation_kinds_id_fk";--> statement-breakpoint
ALTER TABLE "routing_step_changes" RENAME CONSTRAINT "template_step_changes_accepted_by_users_id_fk" TO "routing_step_changes_accepted_by_users_id_fk";--> statement-breakpoint
ALTER TABLE "routing_step_costs" RENAME CONSTRAINT "template_step_costs_template_id_routing_templates_id_fk" TO "routing_step_costs_routing_id_routings_id_fk";
