CREATE TYPE "public"."declared_answer" AS ENUM('unknown', 'yes', 'no');--> statement-breakpoint
CREATE TYPE "public"."declared_change" AS ENUM('unknown', 'none', 'significant');--> statement-breakpoint
CREATE TYPE "public"."storage_category" AS ENUM('unknown', 'room-temperature', 'refrigerated', 'frozen');--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "storage_category" "storage_category" DEFAULT 'unknown' NOT NULL;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "intermediate_temperature_c" double precision;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "accelerated_temperature_c" double precision;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "accelerated_change" "declared_change" DEFAULT 'unknown' NOT NULL;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "intermediate_change" "declared_change" DEFAULT 'unknown' NOT NULL;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "little_change" "declared_answer" DEFAULT 'unknown' NOT NULL;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "supporting_data" "declared_answer" DEFAULT 'unknown' NOT NULL;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "declaration_basis" text DEFAULT '' NOT NULL;