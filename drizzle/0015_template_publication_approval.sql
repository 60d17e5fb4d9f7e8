CREATE TABLE "template_publication_decisions" (
	"request_id" integer PRIMARY KEY NOT NULL,
	"decision" text NOT NULL,
	"decided_by" integer NOT NULL,
	"reason" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "template_publication_decision_kind" CHECK ("template_publication_decisions"."decision" in ('approved', 'refused'))
);
--> statement-breakpoint
CREATE TABLE "template_publication_requests" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"template_id" integer NOT NULL,
	"version_id" integer NOT NULL,
	"previous_version_id" integer,
	"proposed_by" integer NOT NULL,
	"reason" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "organisation_settings" ADD COLUMN "template_publication_needs_second_admin" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "template_publication_decisions" ADD CONSTRAINT "template_publication_decisions_request_id_template_publication_requests_id_fk" FOREIGN KEY ("request_id") REFERENCES "public"."template_publication_requests"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_publication_decisions" ADD CONSTRAINT "template_publication_decisions_decided_by_users_id_fk" FOREIGN KEY ("decided_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_publication_requests" ADD CONSTRAINT "template_publication_requests_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_publication_requests" ADD CONSTRAINT "template_publication_requests_template_id_report_templates_id_fk" FOREIGN KEY ("template_id") REFERENCES "public"."report_templates"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_publication_requests" ADD CONSTRAINT "template_publication_requests_version_id_report_template_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."report_template_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_publication_requests" ADD CONSTRAINT "template_publication_requests_previous_version_id_report_template_versions_id_fk" FOREIGN KEY ("previous_version_id") REFERENCES "public"."report_template_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "template_publication_requests" ADD CONSTRAINT "template_publication_requests_proposed_by_users_id_fk" FOREIGN KEY ("proposed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;