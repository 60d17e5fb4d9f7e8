CREATE TABLE "report_version_temperature_logs" (
	"id" serial PRIMARY KEY NOT NULL,
	"report_version_id" integer NOT NULL,
	"assessment_id" integer NOT NULL,
	"position" integer NOT NULL,
	CONSTRAINT "report_version_temperature_logs_once" UNIQUE("report_version_id","assessment_id")
);
--> statement-breakpoint
CREATE TABLE "temperature_log_assessments" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"title" text NOT NULL,
	"file_name" text NOT NULL,
	"format" text NOT NULL,
	"size_bytes" integer NOT NULL,
	"sha256" text NOT NULL,
	"content" "bytea" NOT NULL,
	"mapping" jsonb NOT NULL,
	"settings" jsonb NOT NULL,
	"result" jsonb NOT NULL,
	"figure_svg" text NOT NULL,
	"mkt_c" double precision NOT NULL,
	"max_c" double precision NOT NULL,
	"excursion_count" integer NOT NULL,
	"engine_version" text NOT NULL,
	"created_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "report_version_temperature_logs" ADD CONSTRAINT "report_version_temperature_logs_report_version_id_report_versions_id_fk" FOREIGN KEY ("report_version_id") REFERENCES "public"."report_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_version_temperature_logs" ADD CONSTRAINT "report_version_temperature_logs_assessment_id_temperature_log_assessments_id_fk" FOREIGN KEY ("assessment_id") REFERENCES "public"."temperature_log_assessments"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "temperature_log_assessments" ADD CONSTRAINT "temperature_log_assessments_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "temperature_log_assessments" ADD CONSTRAINT "temperature_log_assessments_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
-- A temperature-log assessment is write-once (ALCOA+ "original", "enduring"; 21 CFR 11.10(e)):
-- the stored file, its settings, its result and its figure are never changed; a new reading of
-- the log is a new record. Its attachment to a report version is write-once like the version.
CREATE TRIGGER temperature_log_assessments_write_once BEFORE UPDATE OR DELETE ON temperature_log_assessments
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER temperature_log_assessments_no_truncate BEFORE TRUNCATE ON temperature_log_assessments
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER report_version_temperature_logs_write_once BEFORE UPDATE OR DELETE ON report_version_temperature_logs
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER report_version_temperature_logs_no_truncate BEFORE TRUNCATE ON report_version_temperature_logs
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
