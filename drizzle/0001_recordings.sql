CREATE TABLE "airframe" (
	"id" text PRIMARY KEY NOT NULL,
	"workshop_id" text NOT NULL,
	"name" text NOT NULL,
	"description" text,
	"channels" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "capture" (
	"id" text PRIMARY KEY NOT NULL,
	"workshop_id" text NOT NULL,
	"airframe_id" text NOT NULL,
	"name" text NOT NULL,
	"state" text NOT NULL,
	"udp_port" integer,
	"token_hash" text NOT NULL,
	"received" integer DEFAULT 0 NOT NULL,
	"malformed" integer DEFAULT 0 NOT NULL,
	"out_of_order" integer DEFAULT 0 NOT NULL,
	"duplicates" integer DEFAULT 0 NOT NULL,
	"dropped" integer DEFAULT 0 NOT NULL,
	"last_error" text,
	"recording_id" text,
	"created_by_id" text,
	"started_at" timestamp with time zone DEFAULT now() NOT NULL,
	"stopped_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "import_job" (
	"id" text PRIMARY KEY NOT NULL,
	"workshop_id" text NOT NULL,
	"airframe_id" text NOT NULL,
	"name" text NOT NULL,
	"format" text NOT NULL,
	"options" jsonb NOT NULL,
	"storage_key" text NOT NULL,
	"state" text DEFAULT 'queued' NOT NULL,
	"bytes_read" bigint DEFAULT 0 NOT NULL,
	"bytes_total" bigint NOT NULL,
	"frames" integer DEFAULT 0 NOT NULL,
	"error_message" text,
	"error_where" text,
	"error_code" text,
	"recording_id" text,
	"created_by_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "recording" (
	"id" text PRIMARY KEY NOT NULL,
	"workshop_id" text NOT NULL,
	"airframe_id" text NOT NULL,
	"name" text NOT NULL,
	"source" text NOT NULL,
	"status" text DEFAULT 'ready' NOT NULL,
	"duration_ms" bigint NOT NULL,
	"frame_count" integer NOT NULL,
	"segment_count" integer NOT NULL,
	"size_bytes" bigint NOT NULL,
	"channels" jsonb NOT NULL,
	"channel_stats" jsonb NOT NULL,
	"sample_rate_hz" double precision,
	"notes" text,
	"original_key" text,
	"created_by_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "recording_segment" (
	"recording_id" text NOT NULL,
	"index" integer NOT NULL,
	"start_ms" bigint NOT NULL,
	"end_ms" bigint NOT NULL,
	"frame_count" integer NOT NULL,
	"payload" "bytea" NOT NULL
);
--> statement-breakpoint
ALTER TABLE "airframe" ADD CONSTRAINT "airframe_workshop_id_organization_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."organization"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "capture" ADD CONSTRAINT "capture_workshop_id_organization_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."organization"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "capture" ADD CONSTRAINT "capture_airframe_id_airframe_id_fk" FOREIGN KEY ("airframe_id") REFERENCES "public"."airframe"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "capture" ADD CONSTRAINT "capture_recording_id_recording_id_fk" FOREIGN KEY ("recording_id") REFERENCES "public"."recording"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "capture" ADD CONSTRAINT "capture_created_by_id_user_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "import_job" ADD CONSTRAINT "import_job_workshop_id_organization_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."organization"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "import_job" ADD CONSTRAINT "import_job_airframe_id_airframe_id_fk" FOREIGN KEY ("airframe_id") REFERENCES "public"."airframe"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "import_job" ADD CONSTRAINT "import_job_recording_id_recording_id_fk" FOREIGN KEY ("recording_id") REFERENCES "public"."recording"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "import_job" ADD CONSTRAINT "import_job_created_by_id_user_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recording" ADD CONSTRAINT "recording_workshop_id_organization_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."organization"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recording" ADD CONSTRAINT "recording_airframe_id_airframe_id_fk" FOREIGN KEY ("airframe_id") REFERENCES "public"."airframe"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recording" ADD CONSTRAINT "recording_created_by_id_user_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recording_segment" ADD CONSTRAINT "recording_segment_recording_id_recording_id_fk" FOREIGN KEY ("recording_id") REFERENCES "public"."recording"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "airframe_workshop_idx" ON "airframe" USING btree ("workshop_id");--> statement-breakpoint
CREATE UNIQUE INDEX "airframe_workshop_name_uq" ON "airframe" USING btree ("workshop_id","name");--> statement-breakpoint
CREATE INDEX "capture_workshop_idx" ON "capture" USING btree ("workshop_id","started_at");--> statement-breakpoint
CREATE INDEX "import_job_workshop_idx" ON "import_job" USING btree ("workshop_id","created_at");--> statement-breakpoint
CREATE INDEX "recording_workshop_idx" ON "recording" USING btree ("workshop_id","created_at");--> statement-breakpoint
CREATE INDEX "recording_airframe_idx" ON "recording" USING btree ("airframe_id");--> statement-breakpoint
CREATE UNIQUE INDEX "recording_segment_index_uq" ON "recording_segment" USING btree ("recording_id","index");--> statement-breakpoint
CREATE INDEX "recording_segment_time_idx" ON "recording_segment" USING btree ("recording_id","start_ms");