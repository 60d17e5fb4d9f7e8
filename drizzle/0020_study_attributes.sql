CREATE TYPE "public"."censored_rule" AS ENUM('exclude', 'stated-value');--> statement-breakpoint
CREATE TYPE "public"."mass_balance_role" AS ENUM('assay', 'degradant');--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "censored_rule" "censored_rule" DEFAULT 'exclude' NOT NULL;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "censored_value" double precision;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "mass_balance_role" "mass_balance_role";--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "additional_attributes" jsonb DEFAULT '[]'::jsonb NOT NULL;