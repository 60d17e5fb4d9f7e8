ALTER TABLE "analysis_runs" ADD COLUMN "result_form" text DEFAULT 'json' NOT NULL;--> statement-breakpoint
ALTER TABLE "analysis_runs" ADD COLUMN "result_arrays" "bytea";--> statement-breakpoint
-- The two stored forms of a result (schema/analysis-runs.ts): 'json' holds no arrays; 'compact-1'
-- always does, a whole number of IEEE-754 doubles. A row that breaks this cannot be read, so it is
-- refused at the door rather than found at review.
ALTER TABLE "analysis_runs" ADD CONSTRAINT "analysis_runs_result_form_known" CHECK (
  ("result_form" = 'json' AND "result_arrays" IS NULL)
  OR ("result_form" = 'compact-1' AND "result_arrays" IS NOT NULL AND octet_length("result_arrays") % 8 = 0)
);
