-- Signatures and signed outputs are write-once (21 CFR 11.70: a signature cannot be excised,
-- copied or transferred); a signed review is final.
CREATE TRIGGER signatures_write_once BEFORE UPDATE OR DELETE ON signatures
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER signed_outputs_write_once BEFORE UPDATE OR DELETE ON signed_outputs
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER review_assignments_write_once BEFORE UPDATE OR DELETE ON review_assignments
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION report_reviews_guard() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'report_reviews rows are never deleted' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF OLD.state = 'signed' THEN
    RAISE EXCEPTION 'report version % is signed and locked: corrections are a new version', OLD.report_version_id
      USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF NEW.report_version_id <> OLD.report_version_id OR NEW.organisation_id <> OLD.organisation_id THEN
    RAISE EXCEPTION 'a review cannot move to another report version' USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER report_reviews_guard BEFORE UPDATE OR DELETE ON report_reviews
  FOR EACH ROW EXECUTE FUNCTION report_reviews_guard();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION invitations_single_use() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'invitations are never deleted' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF OLD.used_at IS NOT NULL THEN
    RAISE EXCEPTION 'this link has already been used' USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER invitations_single_use BEFORE UPDATE OR DELETE ON invitations
  FOR EACH ROW EXECUTE FUNCTION invitations_single_use();
--> statement-breakpoint
CREATE TRIGGER password_resets_single_use BEFORE UPDATE OR DELETE ON password_resets
  FOR EACH ROW EXECUTE FUNCTION invitations_single_use();
