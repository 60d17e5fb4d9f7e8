CREATE TABLE "review_checklists" (
	"id" serial PRIMARY KEY NOT NULL,
	"organisation_id" integer NOT NULL,
	"version_number" integer NOT NULL,
	"items" jsonb NOT NULL,
	"reason" text NOT NULL,
	"created_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "review_checklists_version" UNIQUE("organisation_id","version_number")
);
--> statement-breakpoint
ALTER TABLE "signatures" ADD COLUMN "checklist_version_id" integer;--> statement-breakpoint
ALTER TABLE "signatures" ADD COLUMN "checklist_confirmed" jsonb;--> statement-breakpoint
ALTER TABLE "review_checklists" ADD CONSTRAINT "review_checklists_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "review_checklists" ADD CONSTRAINT "review_checklists_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signatures" ADD CONSTRAINT "signatures_checklist_version_id_review_checklists_id_fk" FOREIGN KEY ("checklist_version_id") REFERENCES "public"."review_checklists"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
-- A review checklist version is write-once (21 CFR 11.10(e); EU GMP Annex 11 §10): a change is
-- a new version with its reason. The signatures trigger (0007) refuses UPDATE/DELETE only, so the
-- new signature columns are written by the INSERT like the others.
CREATE TRIGGER review_checklists_write_once BEFORE UPDATE OR DELETE ON review_checklists
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER review_checklists_no_truncate BEFORE TRUNCATE ON review_checklists
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
