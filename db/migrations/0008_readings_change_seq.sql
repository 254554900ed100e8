ALTER TABLE "readings" ADD COLUMN "seq" bigint;--> statement-breakpoint
CREATE INDEX "readings_lab_seq_idx" ON "readings" USING btree ("lab_id","seq") WHERE "readings"."seq" is not null;