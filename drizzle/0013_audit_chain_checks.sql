CREATE TABLE "audit_chain_checks" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"requested_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"events_expected" bigint NOT NULL,
	"events_scanned" bigint DEFAULT 0 NOT NULL,
	"started_at" timestamp with time zone,
	"progress_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	"context" jsonb NOT NULL,
	"outcome_event_id" bigint,
	"failure" text
);
--> statement-breakpoint
ALTER TABLE "audit_chain_checks" ADD CONSTRAINT "audit_chain_checks_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "audit_chain_checks" ADD CONSTRAINT "audit_chain_checks_requested_by_users_id_fk" FOREIGN KEY ("requested_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "audit_chain_checks_org" ON "audit_chain_checks" USING btree ("organisation_id","id");