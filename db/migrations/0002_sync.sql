CREATE TABLE "devices" (
	"id" uuid NOT NULL,
	"user_id" uuid NOT NULL,
	"lab_id" uuid,
	"last_seq" bigint DEFAULT 0 NOT NULL,
	"clock_offset_ms" double precision,
	"last_sync_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "devices_id_user_id_pk" PRIMARY KEY("id","user_id")
);
--> statement-breakpoint
CREATE TABLE "run_clock_flags" (
	"run_id" uuid NOT NULL,
	"device_id" uuid NOT NULL,
	"offset_ms" double precision NOT NULL,
	"flagged_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "run_clock_flags_run_id_device_id_pk" PRIMARY KEY("run_id","device_id")
);
--> statement-breakpoint
CREATE TABLE "run_meta_history" (
	"id" uuid PRIMARY KEY NOT NULL,
	"run_id" uuid NOT NULL,
	"lab_id" uuid NOT NULL,
	"user_id" uuid NOT NULL,
	"device_id" uuid NOT NULL,
	"field" text NOT NULL,
	"value" text NOT NULL,
	"previous_value" text,
	"base_version" integer,
	"result_version" integer NOT NULL,
	"outcome" text NOT NULL,
	"device_recorded_at" timestamp with time zone,
	"received_at" timestamp with time zone DEFAULT now() NOT NULL,
	"payload_hash" text NOT NULL
);
--> statement-breakpoint
CREATE TABLE "run_submissions" (
	"id" uuid PRIMARY KEY NOT NULL,
	"run_id" uuid NOT NULL,
	"lab_id" uuid NOT NULL,
	"user_id" uuid NOT NULL,
	"note" text DEFAULT '' NOT NULL,
	"device_recorded_at" timestamp with time zone,
	"received_at" timestamp with time zone DEFAULT now() NOT NULL,
	"payload_hash" text NOT NULL
);
--> statement-breakpoint
CREATE TABLE "sync_changes" (
	"seq" bigserial PRIMARY KEY NOT NULL,
	"lab_id" uuid NOT NULL,
	"entity" text NOT NULL,
	"record_id" uuid NOT NULL,
	"run_id" uuid,
	"at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "checkpoints" ALTER COLUMN "burette_ml" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "devices" ADD CONSTRAINT "devices_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "devices" ADD CONSTRAINT "devices_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_clock_flags" ADD CONSTRAINT "run_clock_flags_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_meta_history" ADD CONSTRAINT "run_meta_history_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_meta_history" ADD CONSTRAINT "run_meta_history_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_meta_history" ADD CONSTRAINT "run_meta_history_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_submissions" ADD CONSTRAINT "run_submissions_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_submissions" ADD CONSTRAINT "run_submissions_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_submissions" ADD CONSTRAINT "run_submissions_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sync_changes" ADD CONSTRAINT "sync_changes_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "run_meta_history_run_idx" ON "run_meta_history" USING btree ("run_id","field","result_version");--> statement-breakpoint
CREATE INDEX "run_submissions_run_idx" ON "run_submissions" USING btree ("run_id");--> statement-breakpoint
CREATE INDEX "sync_changes_lab_seq_idx" ON "sync_changes" USING btree ("lab_id","seq");--> statement-breakpoint
CREATE INDEX "sync_changes_run_seq_idx" ON "sync_changes" USING btree ("run_id","seq");