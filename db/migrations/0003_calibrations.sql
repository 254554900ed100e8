CREATE TABLE "burettes" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"identifier" text NOT NULL,
	"capacity_ml" double precision NOT NULL,
	"class" text NOT NULL,
	"tolerance_ml" double precision NOT NULL,
	"tolerance_source" text NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"retired_at" timestamp with time zone,
	"is_demo" boolean DEFAULT false NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "drip_calibrations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"drip_setting_id" uuid NOT NULL,
	"method" text NOT NULL,
	"inputs" jsonb NOT NULL,
	"result" jsonb NOT NULL,
	"rate_ml_per_s" double precision,
	"u_rate_ml_per_s" double precision,
	"drain_volume_ml" double precision,
	"delivered_volume_ml" double precision,
	"drops_per_min" double precision,
	"drop_volume_ml" double precision,
	"accepted" boolean NOT NULL,
	"acceptance_reasons" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"performed_at" timestamp with time zone NOT NULL,
	"performed_by" uuid,
	"expires_at" timestamp with time zone NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"withdrawn_at" timestamp with time zone,
	"withdrawn_reason" text,
	"is_demo" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "drip_settings" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"burette_id" uuid NOT NULL,
	"stopcock_setting" text NOT NULL,
	"tip" text DEFAULT '' NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"retired_at" timestamp with time zone,
	"is_demo" boolean DEFAULT false NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "electrode_calibrations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"electrode_id" uuid NOT NULL,
	"temperature_c" double precision NOT NULL,
	"points" jsonb NOT NULL,
	"inputs" jsonb NOT NULL,
	"slope_pct" double precision NOT NULL,
	"slope_mv_per_ph" double precision NOT NULL,
	"offset_mv" double precision NOT NULL,
	"limits" jsonb NOT NULL,
	"accepted" boolean NOT NULL,
	"acceptance_reasons" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"result" jsonb NOT NULL,
	"performed_at" timestamp with time zone NOT NULL,
	"performed_by" uuid,
	"expires_at" timestamp with time zone NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"withdrawn_at" timestamp with time zone,
	"withdrawn_reason" text,
	"is_demo" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "electrodes" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"identifier" text NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"retired_at" timestamp with time zone,
	"is_demo" boolean DEFAULT false NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "standardisations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"lot_id" uuid NOT NULL,
	"standard" text NOT NULL,
	"mass_g" double precision NOT NULL,
	"purity" double precision NOT NULL,
	"molar_mass_g_per_mol" double precision NOT NULL,
	"equivalence_volume_ml" double precision NOT NULL,
	"run_id" uuid,
	"inputs" jsonb NOT NULL,
	"concentration_m" double precision NOT NULL,
	"u_concentration_m" double precision NOT NULL,
	"budget" jsonb NOT NULL,
	"performed_at" timestamp with time zone NOT NULL,
	"performed_by" uuid,
	"expires_at" timestamp with time zone NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"withdrawn_at" timestamp with time zone,
	"withdrawn_reason" text,
	"is_demo" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "titrant_lots" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"identifier" text NOT NULL,
	"titrant" text DEFAULT 'NaOH' NOT NULL,
	"nominal_concentration_m" double precision NOT NULL,
	"prepared_at" timestamp with time zone NOT NULL,
	"storage" text DEFAULT '' NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"expires_at" timestamp with time zone,
	"retired_at" timestamp with time zone,
	"is_demo" boolean DEFAULT false NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "burettes" ADD CONSTRAINT "burettes_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "burettes" ADD CONSTRAINT "burettes_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "drip_calibrations" ADD CONSTRAINT "drip_calibrations_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "drip_calibrations" ADD CONSTRAINT "drip_calibrations_drip_setting_id_drip_settings_id_fk" FOREIGN KEY ("drip_setting_id") REFERENCES "public"."drip_settings"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "drip_calibrations" ADD CONSTRAINT "drip_calibrations_performed_by_users_id_fk" FOREIGN KEY ("performed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "drip_settings" ADD CONSTRAINT "drip_settings_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "drip_settings" ADD CONSTRAINT "drip_settings_burette_id_burettes_id_fk" FOREIGN KEY ("burette_id") REFERENCES "public"."burettes"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "drip_settings" ADD CONSTRAINT "drip_settings_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "electrode_calibrations" ADD CONSTRAINT "electrode_calibrations_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "electrode_calibrations" ADD CONSTRAINT "electrode_calibrations_electrode_id_electrodes_id_fk" FOREIGN KEY ("electrode_id") REFERENCES "public"."electrodes"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "electrode_calibrations" ADD CONSTRAINT "electrode_calibrations_performed_by_users_id_fk" FOREIGN KEY ("performed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "electrodes" ADD CONSTRAINT "electrodes_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "electrodes" ADD CONSTRAINT "electrodes_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standardisations" ADD CONSTRAINT "standardisations_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standardisations" ADD CONSTRAINT "standardisations_lot_id_titrant_lots_id_fk" FOREIGN KEY ("lot_id") REFERENCES "public"."titrant_lots"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standardisations" ADD CONSTRAINT "standardisations_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standardisations" ADD CONSTRAINT "standardisations_performed_by_users_id_fk" FOREIGN KEY ("performed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "titrant_lots" ADD CONSTRAINT "titrant_lots_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "titrant_lots" ADD CONSTRAINT "titrant_lots_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "burettes_lab_identifier_idx" ON "burettes" USING btree ("lab_id",lower("identifier"));--> statement-breakpoint
CREATE INDEX "drip_calibrations_setting_idx" ON "drip_calibrations" USING btree ("drip_setting_id","performed_at");--> statement-breakpoint
CREATE INDEX "drip_settings_burette_idx" ON "drip_settings" USING btree ("burette_id");--> statement-breakpoint
CREATE INDEX "electrode_calibrations_electrode_idx" ON "electrode_calibrations" USING btree ("electrode_id","performed_at");--> statement-breakpoint
CREATE UNIQUE INDEX "electrodes_lab_identifier_idx" ON "electrodes" USING btree ("lab_id",lower("identifier"));--> statement-breakpoint
CREATE INDEX "standardisations_lot_idx" ON "standardisations" USING btree ("lot_id","performed_at");--> statement-breakpoint
CREATE UNIQUE INDEX "titrant_lots_lab_identifier_idx" ON "titrant_lots" USING btree ("lab_id",lower("identifier"));