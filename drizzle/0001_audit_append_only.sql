-- The audit trail is append-only: no role the application uses may change or remove an event.
-- (21 CFR 11.10(e): audit trails shall not obscure previously recorded information.)
CREATE OR REPLACE FUNCTION audit_events_refuse_change() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'audit_events is append-only: % is not allowed', TG_OP
    USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER audit_events_no_update_delete
  BEFORE UPDATE OR DELETE ON audit_events
  FOR EACH ROW EXECUTE FUNCTION audit_events_refuse_change();
--> statement-breakpoint
CREATE TRIGGER audit_events_no_truncate
  BEFORE TRUNCATE ON audit_events
  FOR EACH STATEMENT EXECUTE FUNCTION audit_events_refuse_change();
--> statement-breakpoint
CREATE INDEX IF NOT EXISTS "session_expire_idx" ON "session" ("expire");
