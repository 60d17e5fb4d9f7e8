CREATE TYPE "public"."retired_record_type" AS ENUM('dataset', 'analysis_run', 'report');--> statement-breakpoint
CREATE TYPE "public"."run_study_version_origin" AS ENUM('with-run', 'recorded-at-migration');--> statement-breakpoint
CREATE TYPE "public"."study_version_origin" AS ENUM('created', 'edited', 'recorded-at-migration');--> statement-breakpoint
CREATE TABLE "retirements" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"record_type" "retired_record_type" NOT NULL,
	"record_id" integer NOT NULL,
	"reason" text NOT NULL,
	"retired_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "retirements_once" UNIQUE("record_type","record_id")
);
--> statement-breakpoint
CREATE TABLE "analysis_run_study_versions" (
	"analysis_run_id" integer PRIMARY KEY NOT NULL,
	"study_version_id" integer NOT NULL,
	"origin" "run_study_version_origin" NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "study_versions" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"study_id" integer NOT NULL,
	"version_number" integer NOT NULL,
	"values" jsonb NOT NULL,
	"changed_fields" jsonb NOT NULL,
	"reason" text NOT NULL,
	"origin" "study_version_origin" NOT NULL,
	"recorded_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "study_versions_number" UNIQUE("study_id","version_number")
);
--> statement-breakpoint
ALTER TABLE "retirements" ADD CONSTRAINT "retirements_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "retirements" ADD CONSTRAINT "retirements_retired_by_users_id_fk" FOREIGN KEY ("retired_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "analysis_run_study_versions" ADD CONSTRAINT "analysis_run_study_versions_analysis_run_id_analysis_runs_id_fk" FOREIGN KEY ("analysis_run_id") REFERENCES "public"."analysis_runs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "analysis_run_study_versions" ADD CONSTRAINT "analysis_run_study_versions_study_version_id_study_versions_id_fk" FOREIGN KEY ("study_version_id") REFERENCES "public"."study_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "study_versions" ADD CONSTRAINT "study_versions_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "study_versions" ADD CONSTRAINT "study_versions_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "study_versions" ADD CONSTRAINT "study_versions_recorded_by_users_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "analysis_run_study_versions_version" ON "analysis_run_study_versions" USING btree ("study_version_id");