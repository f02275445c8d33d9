CREATE TYPE "public"."mail_state" AS ENUM('pending', 'sent', 'failed');--> statement-breakpoint
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
CREATE INDEX "outbox_mails_due_idx" ON "outbox_mails" USING btree ("state","next_attempt_at");