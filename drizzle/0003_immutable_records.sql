-- Originals, datasets and analysis runs are write-once records (ALCOA+ "original", "enduring").
CREATE OR REPLACE FUNCTION refuse_change_to_immutable_record() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION '% is write-once: % is not allowed', TG_TABLE_NAME, TG_OP
    USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER uploads_write_once BEFORE UPDATE OR DELETE ON uploads
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER datasets_write_once BEFORE UPDATE OR DELETE ON datasets
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER analysis_runs_write_once BEFORE UPDATE OR DELETE ON analysis_runs
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE INDEX IF NOT EXISTS "analysis_runs_study" ON "analysis_runs" ("study_id", "id");
--> statement-breakpoint
CREATE INDEX IF NOT EXISTS "datasets_study" ON "datasets" ("study_id", "id");
