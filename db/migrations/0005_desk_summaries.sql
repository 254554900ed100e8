CREATE TABLE "run_summaries" (
	"run_id" uuid PRIMARY KEY NOT NULL,
	"lab_id" uuid NOT NULL,
	"equivalence_volume_ml" double precision,
	"pka" double precision,
	"molar_mass_g_per_mol" double precision,
	"concentration_m" double precision,
	"titrant_lot" text,
	"reading_count" integer DEFAULT 0 NOT NULL,
	"fingerprint" text NOT NULL
);
--> statement-breakpoint
ALTER TABLE "run_summaries" ADD CONSTRAINT "run_summaries_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_summaries" ADD CONSTRAINT "run_summaries_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "run_summaries_lab_ve_idx" ON "run_summaries" USING btree ("lab_id","equivalence_volume_ml");--> statement-breakpoint
CREATE INDEX "run_summaries_lab_lot_idx" ON "run_summaries" USING btree ("lab_id","titrant_lot");