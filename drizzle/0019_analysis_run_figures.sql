CREATE TABLE "analysis_run_figures" (
	"id" serial PRIMARY KEY NOT NULL,
	"analysis_run_id" integer NOT NULL,
	"figure_id" text NOT NULL,
	"svg" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "analysis_run_figures_once" UNIQUE("analysis_run_id","figure_id")
);
--> statement-breakpoint
ALTER TABLE "analysis_run_figures" ADD CONSTRAINT "analysis_run_figures_analysis_run_id_analysis_runs_id_fk" FOREIGN KEY ("analysis_run_id") REFERENCES "public"."analysis_runs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
-- An analysis run's report figures are drawn once and never changed (ALCOA+ "original",
-- "enduring"; 21 CFR 11.10(e)): a later report version and the signed PDF print the same drawing.
CREATE TRIGGER analysis_run_figures_write_once BEFORE UPDATE OR DELETE ON analysis_run_figures
  FOR EACH ROW EXECUTE FUNCTION refuse_change_to_immutable_record();
--> statement-breakpoint
CREATE TRIGGER analysis_run_figures_no_truncate BEFORE TRUNCATE ON analysis_run_figures
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate_of_write_once_record();
