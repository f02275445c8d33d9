CREATE TYPE "public"."call_state" AS ENUM('draft', 'published');--> statement-breakpoint
CREATE TYPE "public"."mail_state" AS ENUM('pending', 'sent', 'failed');--> statement-breakpoint
CREATE TYPE "public"."member_state" AS ENUM('waiting', 'diagnosing', 'deriving', 'done', 'failed');--> statement-breakpoint
CREATE TYPE "public"."run_state" AS ENUM('received', 'reading', 'diagnosing', 'deriving', 'ready', 'rejected');--> statement-breakpoint
CREATE TABLE "api_tokens" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"name" text NOT NULL,
	"token_hash" text NOT NULL,
	"roles" text[] NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_used_at" timestamp with time zone,
	"revoked_at" timestamp with time zone,
	CONSTRAINT "api_tokens_token_hash_unique" UNIQUE("token_hash")
);
--> statement-breakpoint
CREATE TABLE "calibration_sets" (
	"version" serial PRIMARY KEY NOT NULL,
	"name" text NOT NULL,
	"params" jsonb NOT NULL,
	"note" text,
	"based_on" integer,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "outbox_mails" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"kind" text NOT NULL,
	"related_type" text,
	"related_id" text,
	"recipients" text[] NOT NULL,
	"subject" text NOT NULL,
	"text_body" text NOT NULL,
	"html_body" text,
	"state" "mail_state" DEFAULT 'pending' NOT NULL,
	"attempts" integer DEFAULT 0 NOT NULL,
	"next_attempt_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_error" text,
	"sent_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "regime_calls" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"series_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"state" "call_state" DEFAULT 'draft' NOT NULL,
	"valid_from" date NOT NULL,
	"valid_to" date NOT NULL,
	"regimes" jsonb NOT NULL,
	"confidence" text NOT NULL,
	"weights" jsonb NOT NULL,
	"key_risks" text DEFAULT '' NOT NULL,
	"narrative" text DEFAULT '' NOT NULL,
	"linked_run_ids" uuid[] DEFAULT '{}'::uuid[] NOT NULL,
	"correction_of" uuid,
	"correction_reason" text,
	"author_id" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	"published_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "regime_names" (
	"id" serial PRIMARY KEY NOT NULL,
	"name" text NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	CONSTRAINT "regime_names_name_unique" UNIQUE("name")
);
--> statement-breakpoint
CREATE TABLE "region_climatology" (
	"region_id" text NOT NULL,
	"month" integer NOT NULL,
	"precip_mm_per_day" real NOT NULL,
	CONSTRAINT "region_climatology_region_id_month_pk" PRIMARY KEY("region_id","month")
);
--> statement-breakpoint
CREATE TABLE "regions" (
	"id" text PRIMARY KEY NOT NULL,
	"name" text NOT NULL,
	"kind" text NOT NULL,
	"properties" jsonb NOT NULL,
	"geometry" jsonb NOT NULL,
	"area_km2" double precision NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"updated_by" uuid,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "run_clusterings" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"run_id" uuid NOT NULL,
	"step" integer NOT NULL,
	"k" integer NOT NULL,
	"seed" integer NOT NULL,
	"silhouette" real NOT NULL,
	"explained_variance" real[] NOT NULL,
	"clusters" jsonb NOT NULL,
	"mean_fields" jsonb NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "run_diagnostics" (
	"run_id" uuid NOT NULL,
	"member" integer NOT NULL,
	"step" integer NOT NULL,
	"f0" double precision NOT NULL,
	"residual" double precision NOT NULL,
	"solve_ms" real NOT NULL,
	"sigma" real[] NOT NULL,
	"omega_min" real[] NOT NULL,
	"omega_mean" real[] NOT NULL,
	"omega_max" real[] NOT NULL,
	"correlation" real[],
	"warnings" text[] DEFAULT '{}'::text[] NOT NULL,
	CONSTRAINT "run_diagnostics_run_id_member_step_pk" PRIMARY KEY("run_id","member","step")
);
--> statement-breakpoint
CREATE TABLE "run_members" (
	"run_id" uuid NOT NULL,
	"member" integer NOT NULL,
	"state" "member_state" DEFAULT 'waiting' NOT NULL,
	"progress" real DEFAULT 0 NOT NULL,
	"message" text,
	"attempts" integer DEFAULT 0 NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "run_members_run_id_member_pk" PRIMARY KEY("run_id","member")
);
--> statement-breakpoint
CREATE TABLE "runs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"checksum" text NOT NULL,
	"size_bytes" bigint NOT NULL,
	"file_name" text NOT NULL,
	"format" text,
	"model" text,
	"cycle" timestamp with time zone,
	"members" integer[],
	"is_ensemble" boolean,
	"steps" integer[],
	"levels_hpa" real[],
	"variables" text[],
	"grid" jsonb,
	"state" "run_state" DEFAULT 'received' NOT NULL,
	"progress" real DEFAULT 0 NOT NULL,
	"message" text,
	"uploaded_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "runs_checksum_unique" UNIQUE("checksum")
);
--> statement-breakpoint
CREATE TABLE "saved_views" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"user_id" uuid NOT NULL,
	"name" text NOT NULL,
	"state" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "signal_rows" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"run_id" uuid NOT NULL,
	"member" integer NOT NULL,
	"region_id" text NOT NULL,
	"day" date NOT NULL,
	"precip_mm" real,
	"snow_share" real,
	"cloud_pct" real,
	"ghi_kwh_m2" real,
	"solar_gwh" real,
	"inflow_gwh" real,
	"model_precip_mm" real,
	"model_cloud_pct" real,
	"hours_covered" real DEFAULT 24 NOT NULL,
	"calibration_version" integer NOT NULL,
	"code_version" text NOT NULL,
	"input_checksum" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "snapshots" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"sealed_at" timestamp with time zone NOT NULL,
	"sealed_by" uuid,
	"sealed_by_label" text NOT NULL,
	"summary" jsonb NOT NULL,
	"document" text NOT NULL,
	"hash" text NOT NULL,
	"previous_hash" text,
	"key_id" text NOT NULL,
	CONSTRAINT "snapshots_hash_unique" UNIQUE("hash")
);
--> statement-breakpoint
CREATE TABLE "subscriptions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"email" text NOT NULL,
	"name" text NOT NULL,
	"region_ids" text[] DEFAULT '{}'::text[] NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "subscriptions_email_unique" UNIQUE("email")
);
--> statement-breakpoint
ALTER TABLE "api_tokens" ADD CONSTRAINT "api_tokens_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "calibration_sets" ADD CONSTRAINT "calibration_sets_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "regime_calls" ADD CONSTRAINT "regime_calls_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "region_climatology" ADD CONSTRAINT "region_climatology_region_id_regions_id_fk" FOREIGN KEY ("region_id") REFERENCES "public"."regions"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "regions" ADD CONSTRAINT "regions_updated_by_users_id_fk" FOREIGN KEY ("updated_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_clusterings" ADD CONSTRAINT "run_clusterings_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_clusterings" ADD CONSTRAINT "run_clusterings_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_diagnostics" ADD CONSTRAINT "run_diagnostics_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_members" ADD CONSTRAINT "run_members_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "runs" ADD CONSTRAINT "runs_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "saved_views" ADD CONSTRAINT "saved_views_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signal_rows" ADD CONSTRAINT "signal_rows_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signal_rows" ADD CONSTRAINT "signal_rows_region_id_regions_id_fk" FOREIGN KEY ("region_id") REFERENCES "public"."regions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signal_rows" ADD CONSTRAINT "signal_rows_calibration_version_calibration_sets_version_fk" FOREIGN KEY ("calibration_version") REFERENCES "public"."calibration_sets"("version") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "snapshots" ADD CONSTRAINT "snapshots_sealed_by_users_id_fk" FOREIGN KEY ("sealed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "outbox_mails_due_idx" ON "outbox_mails" USING btree ("state","next_attempt_at");--> statement-breakpoint
CREATE UNIQUE INDEX "regime_calls_series_version" ON "regime_calls" USING btree ("series_id","version");--> statement-breakpoint
CREATE INDEX "regime_calls_published_idx" ON "regime_calls" USING btree ("published_at");--> statement-breakpoint
CREATE UNIQUE INDEX "run_clusterings_key" ON "run_clusterings" USING btree ("run_id","step","k","seed");--> statement-breakpoint
CREATE INDEX "runs_created_idx" ON "runs" USING btree ("created_at");--> statement-breakpoint
CREATE INDEX "runs_model_cycle_idx" ON "runs" USING btree ("model","cycle");--> statement-breakpoint
CREATE UNIQUE INDEX "signal_rows_key" ON "signal_rows" USING btree ("run_id","member","region_id","day");--> statement-breakpoint
CREATE INDEX "signal_rows_region_day_idx" ON "signal_rows" USING btree ("region_id","day");