CREATE TYPE "public"."review_state" AS ENUM('draft', 'in_review', 'returned', 'signed');--> statement-breakpoint
CREATE TABLE "report_reviews" (
	"report_version_id" integer PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"state" "review_state" DEFAULT 'draft' NOT NULL,
	"submitted_by" integer,
	"submitted_at" timestamp with time zone,
	"round" integer DEFAULT 0 NOT NULL,
	"last_comment" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "review_assignments" (
	"id" serial PRIMARY KEY NOT NULL,
	"report_version_id" integer NOT NULL,
	"round" integer NOT NULL,
	"reviewer_id" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "review_assignments_once" UNIQUE("report_version_id","round","reviewer_id")
);
--> statement-breakpoint
CREATE TABLE "signatures" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"report_version_id" integer NOT NULL,
	"signer_id" integer NOT NULL,
	"signer_printed_name" text NOT NULL,
	"meaning" text NOT NULL,
	"comment" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"time_zone" text NOT NULL,
	"reviewed_pdf_sha256" text NOT NULL,
	"signed_pdf_sha256" text
);
--> statement-breakpoint
CREATE TABLE "signed_outputs" (
	"id" serial PRIMARY KEY NOT NULL,
	"report_version_id" integer NOT NULL,
	"pdf_sha256" text NOT NULL,
	"pdf_byte_size" integer NOT NULL,
	"signature_count" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "signed_outputs_pdf_sha256_unique" UNIQUE("pdf_sha256")
);
--> statement-breakpoint
CREATE TABLE "signing_lockouts" (
	"user_id" integer PRIMARY KEY NOT NULL,
	"failed_attempts" integer DEFAULT 0 NOT NULL,
	"locked_until" timestamp with time zone,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "invitations" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"email" text NOT NULL,
	"full_name" text NOT NULL,
	"roles" jsonb NOT NULL,
	"token_sha256" text NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	"used_at" timestamp with time zone,
	"invited_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "invitations_token_sha256_unique" UNIQUE("token_sha256")
);
--> statement-breakpoint
CREATE TABLE "organisation_settings" (
	"organisation_id" integer PRIMARY KEY NOT NULL,
	"signature_meanings" jsonb DEFAULT '["Reviewed","Approved"]'::jsonb NOT NULL,
	"default_confidence_level" double precision DEFAULT 0.95 NOT NULL,
	"default_time_unit" text DEFAULT 'month' NOT NULL,
	"default_value_unit" text DEFAULT '% of label claim' NOT NULL,
	"acceptance_presets" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"report_number_format" text DEFAULT 'RL-{YYYY}-{NNNN}' NOT NULL,
	"password_min_length" integer DEFAULT 12 NOT NULL,
	"password_require_classes" integer DEFAULT 3 NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "password_resets" (
	"id" serial PRIMARY KEY NOT NULL,
	"user_id" integer NOT NULL,
	"token_sha256" text NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	"used_at" timestamp with time zone,
	"requested_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "password_resets_token_sha256_unique" UNIQUE("token_sha256")
);
--> statement-breakpoint
ALTER TABLE "report_reviews" ADD CONSTRAINT "report_reviews_report_version_id_report_versions_id_fk" FOREIGN KEY ("report_version_id") REFERENCES "public"."report_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_reviews" ADD CONSTRAINT "report_reviews_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_reviews" ADD CONSTRAINT "report_reviews_submitted_by_users_id_fk" FOREIGN KEY ("submitted_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "review_assignments" ADD CONSTRAINT "review_assignments_report_version_id_report_versions_id_fk" FOREIGN KEY ("report_version_id") REFERENCES "public"."report_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "review_assignments" ADD CONSTRAINT "review_assignments_reviewer_id_users_id_fk" FOREIGN KEY ("reviewer_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signatures" ADD CONSTRAINT "signatures_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signatures" ADD CONSTRAINT "signatures_report_version_id_report_versions_id_fk" FOREIGN KEY ("report_version_id") REFERENCES "public"."report_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signatures" ADD CONSTRAINT "signatures_signer_id_users_id_fk" FOREIGN KEY ("signer_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signed_outputs" ADD CONSTRAINT "signed_outputs_report_version_id_report_versions_id_fk" FOREIGN KEY ("report_version_id") REFERENCES "public"."report_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signing_lockouts" ADD CONSTRAINT "signing_lockouts_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "invitations" ADD CONSTRAINT "invitations_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "invitations" ADD CONSTRAINT "invitations_invited_by_users_id_fk" FOREIGN KEY ("invited_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "organisation_settings" ADD CONSTRAINT "organisation_settings_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "password_resets" ADD CONSTRAINT "password_resets_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "password_resets" ADD CONSTRAINT "password_resets_requested_by_users_id_fk" FOREIGN KEY ("requested_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "report_reviews_org_state" ON "report_reviews" USING btree ("organisation_id","state");--> statement-breakpoint
CREATE INDEX "signatures_version" ON "signatures" USING btree ("report_version_id");