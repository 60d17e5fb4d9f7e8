CREATE TYPE "public"."paper_size" AS ENUM('a4', 'letter');--> statement-breakpoint
CREATE TYPE "public"."render_status" AS ENUM('queued', 'rendering', 'ready', 'failed');--> statement-breakpoint
CREATE TABLE "report_template_versions" (
	"id" serial PRIMARY KEY NOT NULL,
	"template_id" integer NOT NULL,
	"version_number" integer NOT NULL,
	"main_source" text NOT NULL,
	"partials" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"stylesheet" text DEFAULT '' NOT NULL,
	"sha256" text NOT NULL,
	"note" text DEFAULT '' NOT NULL,
	"created_by" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "report_template_versions_number" UNIQUE("template_id","version_number")
);
--> statement-breakpoint
CREATE TABLE "report_templates" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"name" text NOT NULL,
	"published_version_id" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "report_templates_org_name" UNIQUE("organisation_id","name")
);
--> statement-breakpoint
CREATE TABLE "report_versions" (
	"id" serial PRIMARY KEY NOT NULL,
	"report_id" integer NOT NULL,
	"version_number" integer NOT NULL,
	"analysis_run_id" integer NOT NULL,
	"template_version_id" integer NOT NULL,
	"paper_size" "paper_size" DEFAULT 'a4' NOT NULL,
	"render_status" "render_status" DEFAULT 'queued' NOT NULL,
	"failure_reason" text,
	"html" text,
	"pdf_sha256" text,
	"pdf_byte_size" integer,
	"page_count" integer,
	"job_id" text,
	"render_attempts" integer DEFAULT 0 NOT NULL,
	"requested_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"render_started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "report_versions_number" UNIQUE("report_id","version_number")
);
--> statement-breakpoint
CREATE TABLE "reports" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"study_id" integer NOT NULL,
	"analysis_run_id" integer NOT NULL,
	"report_number" text NOT NULL,
	"title" text NOT NULL,
	"author_id" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "reports_org_number" UNIQUE("organisation_id","report_number")
);
--> statement-breakpoint
ALTER TABLE "report_template_versions" ADD CONSTRAINT "report_template_versions_template_id_report_templates_id_fk" FOREIGN KEY ("template_id") REFERENCES "public"."report_templates"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_template_versions" ADD CONSTRAINT "report_template_versions_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_templates" ADD CONSTRAINT "report_templates_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_templates" ADD CONSTRAINT "report_templates_published_version_id_report_template_versions_id_fk" FOREIGN KEY ("published_version_id") REFERENCES "public"."report_template_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_versions" ADD CONSTRAINT "report_versions_report_id_reports_id_fk" FOREIGN KEY ("report_id") REFERENCES "public"."reports"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_versions" ADD CONSTRAINT "report_versions_analysis_run_id_analysis_runs_id_fk" FOREIGN KEY ("analysis_run_id") REFERENCES "public"."analysis_runs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_versions" ADD CONSTRAINT "report_versions_template_version_id_report_template_versions_id_fk" FOREIGN KEY ("template_version_id") REFERENCES "public"."report_template_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_versions" ADD CONSTRAINT "report_versions_requested_by_users_id_fk" FOREIGN KEY ("requested_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reports" ADD CONSTRAINT "reports_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reports" ADD CONSTRAINT "reports_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reports" ADD CONSTRAINT "reports_analysis_run_id_analysis_runs_id_fk" FOREIGN KEY ("analysis_run_id") REFERENCES "public"."analysis_runs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reports" ADD CONSTRAINT "reports_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "report_versions_status" ON "report_versions" USING btree ("render_status");--> statement-breakpoint
CREATE INDEX "reports_org_created" ON "reports" USING btree ("organisation_id","created_at");--> statement-breakpoint
-- Template versions and reports are write-once records (ALCOA+ "original", "enduring"); the
-- function comes from migration 0003.
CREATE TRIGGER report_template_versions_write_once BEFORE UPDATE OR DELETE ON report_template_versions
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER reports_write_once BEFORE UPDATE OR DELETE ON reports
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION report_templates_refuse_delete() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'report_templates rows are never deleted (reports cite their versions)'
    USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER report_templates_no_delete BEFORE DELETE ON report_templates
  FOR EACH ROW EXECUTE FUNCTION report_templates_refuse_delete();
--> statement-breakpoint
ALTER TABLE "report_versions" ADD CONSTRAINT "report_versions_ready_has_outputs" CHECK (
  render_status <> 'ready'
  OR (html IS NOT NULL AND pdf_sha256 IS NOT NULL AND pdf_byte_size IS NOT NULL AND page_count IS NOT NULL)
);
--> statement-breakpoint
-- A report version moves queued → rendering → ready | failed and then never changes: its HTML and
-- PDF hash, once stored, are the record. What went in (run, template version, paper size) is fixed
-- from the start. Versions are never deleted.
CREATE OR REPLACE FUNCTION report_versions_guard() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'report_versions rows are never deleted' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF OLD.render_status IN ('ready', 'failed') THEN
    RAISE EXCEPTION 'report version % is % and can no longer change; render a new version instead',
      OLD.id, OLD.render_status USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF NEW.report_id IS DISTINCT FROM OLD.report_id
    OR NEW.version_number IS DISTINCT FROM OLD.version_number
    OR NEW.analysis_run_id IS DISTINCT FROM OLD.analysis_run_id
    OR NEW.template_version_id IS DISTINCT FROM OLD.template_version_id
    OR NEW.paper_size IS DISTINCT FROM OLD.paper_size
    OR NEW.requested_by IS DISTINCT FROM OLD.requested_by
    OR NEW.created_at IS DISTINCT FROM OLD.created_at
    OR (OLD.html IS NOT NULL AND NEW.html IS DISTINCT FROM OLD.html)
    OR (OLD.pdf_sha256 IS NOT NULL AND NEW.pdf_sha256 IS DISTINCT FROM OLD.pdf_sha256) THEN
    RAISE EXCEPTION 'report version %: what went into the render and its stored outputs cannot change', OLD.id
      USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF NEW.render_status = 'queued' AND OLD.render_status <> 'queued' THEN
    RAISE EXCEPTION 'report version % cannot go back to queued', OLD.id USING ERRCODE = 'insufficient_privilege';
  END IF;
  NEW.updated_at := now();
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER report_versions_guard BEFORE UPDATE OR DELETE ON report_versions
  FOR EACH ROW EXECUTE FUNCTION report_versions_guard();
--> statement-breakpoint
CREATE INDEX IF NOT EXISTS "reports_org_study" ON "reports" ("organisation_id", "study_id");
--> statement-breakpoint
CREATE INDEX IF NOT EXISTS "report_versions_report" ON "report_versions" ("report_id", "version_number");
