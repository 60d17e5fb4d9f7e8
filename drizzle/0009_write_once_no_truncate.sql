-- Write-once records refuse TRUNCATE as well as UPDATE and DELETE (ALCOA+ "enduring"; 21 CFR
-- 11.10(c): records are protected throughout their retention period). A statement-level trigger
-- fires for every table a TRUNCATE ... CASCADE reaches, so no cascade empties them either. The app
-- role has no TRUNCATE privilege at all; these triggers hold against the table owner too.
CREATE OR REPLACE FUNCTION refuse_truncate_of_write_once_record() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION '% is write-once: TRUNCATE is not allowed', TG_TABLE_NAME
    USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER uploads_no_truncate BEFORE TRUNCATE ON uploads
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER datasets_no_truncate BEFORE TRUNCATE ON datasets
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER analysis_runs_no_truncate BEFORE TRUNCATE ON analysis_runs
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER report_templates_no_truncate BEFORE TRUNCATE ON report_templates
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER report_template_versions_no_truncate BEFORE TRUNCATE ON report_template_versions
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER reports_no_truncate BEFORE TRUNCATE ON reports
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER report_versions_no_truncate BEFORE TRUNCATE ON report_versions
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER signatures_no_truncate BEFORE TRUNCATE ON signatures
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER signed_outputs_no_truncate BEFORE TRUNCATE ON signed_outputs
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER review_assignments_no_truncate BEFORE TRUNCATE ON review_assignments
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER report_reviews_no_truncate BEFORE TRUNCATE ON report_reviews
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER invitations_no_truncate BEFORE TRUNCATE ON invitations
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER password_resets_no_truncate BEFORE TRUNCATE ON password_resets
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
