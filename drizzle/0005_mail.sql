CREATE TYPE "public"."mail_delivery_status" AS ENUM('sent', 'failed');--> statement-breakpoint
CREATE TABLE "outgoing_mail" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer,
	"kind" text NOT NULL,
	"record_type" text,
	"record_id" text,
	"recipients" text[] NOT NULL,
	"subject" text NOT NULL,
	"status" "mail_delivery_status" NOT NULL,
	"failure_reason" text,
	"message_id" text,
	"smtp_response" text,
	"transport" text NOT NULL,
	"duration_ms" integer NOT NULL,
	"attempted_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "received_mail" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer,
	"message_id" text,
	"envelope_from" text,
	"envelope_to" text[] NOT NULL,
	"from_header" text DEFAULT '' NOT NULL,
	"to_header" text DEFAULT '' NOT NULL,
	"cc_header" text DEFAULT '' NOT NULL,
	"subject" text DEFAULT '' NOT NULL,
	"text_body" text DEFAULT '' NOT NULL,
	"html_body" text,
	"sent_at" timestamp with time zone,
	"size_bytes" integer NOT NULL,
	"headers" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"received_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "outgoing_mail" ADD CONSTRAINT "outgoing_mail_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "outgoing_mail_org_attempted" ON "outgoing_mail" USING btree ("organisation_id","attempted_at");--> statement-breakpoint
CREATE INDEX "received_mail_org_received" ON "received_mail" USING btree ("organisation_id","received_at");