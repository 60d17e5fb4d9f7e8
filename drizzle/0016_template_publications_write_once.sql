-- Proposed template publications and their decisions are write-once (21 CFR 11.10(e); EU GMP
-- Annex 11 §10): a proposal without a decision is pending, a decision is never changed.
CREATE TRIGGER template_publication_requests_write_once BEFORE UPDATE OR DELETE ON template_publication_requests
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER template_publication_requests_no_truncate BEFORE TRUNCATE ON template_publication_requests
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
--> statement-breakpoint
CREATE TRIGGER template_publication_decisions_write_once BEFORE UPDATE OR DELETE ON template_publication_decisions
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER template_publication_decisions_no_truncate BEFORE TRUNCATE ON template_publication_decisions
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
