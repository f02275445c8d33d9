CREATE TYPE "public"."run_state" AS ENUM('received', 'reading', 'diagnosing', 'deriving', 'ready', 'rejected');--> statement-breakpoint
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
ALTER TABLE "runs" ADD CONSTRAINT "runs_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "runs_created_idx" ON "runs" USING btree ("created_at");--> statement-breakpoint
CREATE INDEX "runs_model_cycle_idx" ON "runs" USING btree ("model","cycle");