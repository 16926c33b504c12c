CREATE TABLE "mismatch" (
	"id" bigint PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "mismatch_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 9223372036854775807 START WITH 1 CACHE 1),
	"run_id" text NOT NULL,
	"panel_id" text NOT NULL,
	"element_id" text NOT NULL,
	"track" text NOT NULL,
	"kind" text NOT NULL,
	"start_ms" double precision NOT NULL,
	"end_ms" double precision NOT NULL,
	"worst_error" double precision NOT NULL,
	"expected" text NOT NULL,
	"seen" text NOT NULL,
	"at_ms" double precision NOT NULL
);
--> statement-breakpoint
CREATE TABLE "run" (
	"id" text PRIMARY KEY NOT NULL,
	"workshop_id" text NOT NULL,
	"recording_id" text NOT NULL,
	"name" text NOT NULL,
	"links" jsonb NOT NULL,
	"panels" jsonb NOT NULL,
	"speed" double precision NOT NULL,
	"segment" jsonb,
	"tolerance" jsonb NOT NULL,
	"state" text NOT NULL,
	"position_ms" bigint DEFAULT 0 NOT NULL,
	"duration_ms" bigint NOT NULL,
	"counts" jsonb NOT NULL,
	"mismatch_count" integer DEFAULT 0 NOT NULL,
	"lag" jsonb,
	"link_status" jsonb NOT NULL,
	"cuts" jsonb NOT NULL,
	"held_by" text,
	"alive_at" timestamp with time zone,
	"created_by_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	"judged_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "run_element_result" (
	"run_id" text NOT NULL,
	"panel_id" text NOT NULL,
	"element_id" text NOT NULL,
	"ordinal" integer NOT NULL,
	"label" text NOT NULL,
	"kind" text NOT NULL,
	"status" text NOT NULL,
	"mismatch_count" integer NOT NULL,
	"lag" jsonb NOT NULL,
	"no_data_ms" double precision NOT NULL,
	"reports" integer NOT NULL,
	CONSTRAINT "run_element_result_run_id_panel_id_element_id_pk" PRIMARY KEY("run_id","panel_id","element_id")
);
--> statement-breakpoint
CREATE TABLE "seen_log" (
	"run_id" text NOT NULL,
	"panel_id" text NOT NULL,
	"chunk" integer NOT NULL,
	"epoch" integer NOT NULL,
	"from_ms" double precision NOT NULL,
	"to_ms" double precision NOT NULL,
	"count" integer NOT NULL,
	"payload" "bytea" NOT NULL,
	CONSTRAINT "seen_log_run_id_panel_id_chunk_pk" PRIMARY KEY("run_id","panel_id","chunk")
);
--> statement-breakpoint
CREATE TABLE "share_link" (
	"id" text PRIMARY KEY NOT NULL,
	"run_id" text NOT NULL,
	"token_hash" text NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	"revoked_at" timestamp with time zone,
	"created_by_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "mismatch" ADD CONSTRAINT "mismatch_run_id_run_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."run"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run" ADD CONSTRAINT "run_workshop_id_organization_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."organization"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run" ADD CONSTRAINT "run_recording_id_recording_id_fk" FOREIGN KEY ("recording_id") REFERENCES "public"."recording"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run" ADD CONSTRAINT "run_created_by_id_user_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_element_result" ADD CONSTRAINT "run_element_result_run_id_run_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."run"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "seen_log" ADD CONSTRAINT "seen_log_run_id_run_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."run"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "share_link" ADD CONSTRAINT "share_link_run_id_run_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."run"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "share_link" ADD CONSTRAINT "share_link_created_by_id_user_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "mismatch_run_idx" ON "mismatch" USING btree ("run_id","start_ms");--> statement-breakpoint
CREATE INDEX "mismatch_run_element_idx" ON "mismatch" USING btree ("run_id","panel_id","element_id");--> statement-breakpoint
CREATE INDEX "run_workshop_idx" ON "run" USING btree ("workshop_id","created_at");--> statement-breakpoint
CREATE INDEX "run_recording_idx" ON "run" USING btree ("recording_id");--> statement-breakpoint
CREATE INDEX "run_state_idx" ON "run" USING btree ("state");--> statement-breakpoint
CREATE UNIQUE INDEX "share_link_token_uq" ON "share_link" USING btree ("token_hash");--> statement-breakpoint
CREATE INDEX "share_link_run_idx" ON "share_link" USING btree ("run_id","created_at");