ALTER TABLE "run_summaries" DISABLE ROW LEVEL SECURITY;--> statement-breakpoint
DROP TABLE "run_summaries" CASCADE;--> statement-breakpoint
ALTER TABLE "runs" ADD COLUMN "equivalence_volume_ml" double precision GENERATED ALWAYS AS (case when jsonb_typeof(result #> '{equivalencePoints,0,volumeMl}') = 'number' then (result #>> '{equivalencePoints,0,volumeMl}')::float8 end) STORED;--> statement-breakpoint
ALTER TABLE "runs" ADD COLUMN "pka" double precision GENERATED ALWAYS AS (case when jsonb_typeof(result #> '{pKa,0}') = 'number' then (result #>> '{pKa,0}')::float8 end) STORED;--> statement-breakpoint
ALTER TABLE "runs" ADD COLUMN "molar_mass_g_per_mol" double precision GENERATED ALWAYS AS (case when jsonb_typeof(result #> '{molarMassGPerMol}') = 'number' then (result #>> '{molarMassGPerMol}')::float8 end) STORED;--> statement-breakpoint
ALTER TABLE "runs" ADD COLUMN "concentration_m" double precision GENERATED ALWAYS AS (case when jsonb_typeof(result #> '{analyteConcentrationM}') = 'number' then (result #>> '{analyteConcentrationM}')::float8 end) STORED;--> statement-breakpoint
ALTER TABLE "runs" ADD COLUMN "titrant_lot" text GENERATED ALWAYS AS (left(coalesce(setup #>> '{titrant,lotLabel}', setup #>> '{titrant,lotId}'), 200)) STORED;--> statement-breakpoint
CREATE INDEX "runs_lab_ve_idx" ON "runs" USING btree ("lab_id","equivalence_volume_ml");--> statement-breakpoint
CREATE INDEX "runs_lab_pka_idx" ON "runs" USING btree ("lab_id","pka");--> statement-breakpoint
CREATE INDEX "runs_lab_lot_idx" ON "runs" USING btree ("lab_id","titrant_lot");