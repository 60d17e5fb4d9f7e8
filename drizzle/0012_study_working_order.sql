ALTER TABLE "studies" ADD COLUMN "working_order" integer;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "working_order_reason" text DEFAULT '' NOT NULL;