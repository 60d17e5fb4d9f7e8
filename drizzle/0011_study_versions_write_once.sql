-- Study versions, the link from each analysis run to the study version it was computed against,
-- and retirements are write-once (ALCOA+ "original", "enduring"; 21 CFR 11.10(e)).
CREATE TRIGGER study_versions_write_once BEFORE UPDATE OR DELETE ON study_versions
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER study_versions_no_truncate BEFORE TRUNCATE ON study_versions
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER analysis_run_study_versions_write_once BEFORE UPDATE OR DELETE ON analysis_run_study_versions
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER analysis_run_study_versions_no_truncate BEFORE TRUNCATE ON analysis_run_study_versions
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER retirements_write_once BEFORE UPDATE OR DELETE ON retirements
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER retirements_no_truncate BEFORE TRUNCATE ON retirements
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE INDEX IF NOT EXISTS "retirements_org_type" ON "retirements" ("organisation_id", "record_type");
--> statement-breakpoint
-- Runs recorded before study versions existed: each study without a version gets version 1,
-- recorded from the study as it stands now and marked 'recorded-at-migration', and each run
-- without a link is linked to its study's latest version, marked the same way. The values the
-- engine used (limits, direction, storage temperature, Q1E declaration) are also in each run's
-- own write-once `options`; the application shows those where they are present. The function is
-- idempotent and kept so that the step can be shown to work (tests/integration/study-versions).
CREATE OR REPLACE FUNCTION record_unversioned_studies_and_runs() RETURNS void
LANGUAGE sql AS $$
  INSERT INTO study_versions (organisation_id, study_id, version_number, values, changed_fields, reason, origin, recorded_by)
  SELECT s.organisation_id, s.id, 1,
    jsonb_build_object(
      'title', s.title, 'product', s.product, 'attribute', s.attribute, 'unit', s.unit,
      'direction', s.direction, 'lowerLimit', s.lower_limit, 'upperLimit', s.upper_limit,
      'storageTemperatureC', s.storage_temperature_c, 'storageHumidityPercent', s.storage_humidity_percent,
      'storageCategory', s.storage_category, 'intermediateTemperatureC', s.intermediate_temperature_c,
      'acceleratedTemperatureC', s.accelerated_temperature_c, 'acceleratedChange', s.accelerated_change,
      'intermediateChange', s.intermediate_change, 'littleChange', s.little_change,
      'supportingData', s.supporting_data, 'declarationBasis', s.declaration_basis,
      'batches', s.batches, 'notes', s.notes),
    '[]'::jsonb,
    'Recorded from the study as it stood when study versions were introduced; earlier changes were kept only in the audit trail.',
    'recorded-at-migration', s.created_by
  FROM studies s
  WHERE NOT EXISTS (SELECT 1 FROM study_versions v WHERE v.study_id = s.id);
  INSERT INTO analysis_run_study_versions (analysis_run_id, study_version_id, origin)
  SELECT r.id,
    (SELECT v.id FROM study_versions v WHERE v.study_id = r.study_id ORDER BY v.version_number DESC LIMIT 1),
    'recorded-at-migration'
  FROM analysis_runs r
  WHERE NOT EXISTS (SELECT 1 FROM analysis_run_study_versions l WHERE l.analysis_run_id = r.id);
$$;
--> statement-breakpoint
SELECT record_unversioned_studies_and_runs();
