CREATE TABLE "device_token" (
	"id" text PRIMARY KEY NOT NULL,
	"panel_id" text NOT NULL,
	"label" text NOT NULL,
	"token_hash" text NOT NULL,
	"created_by_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_used_at" timestamp with time zone,
	"revoked_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "panel" (
	"id" text PRIMARY KEY NOT NULL,
	"workshop_id" text NOT NULL,
	"airframe_id" text NOT NULL,
	"slug" text NOT NULL,
	"name" text NOT NULL,
	"definition" jsonb NOT NULL,
	"photo_key" text,
	"photo_type" text,
	"mirror_of" text,
	"created_by_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "device_token" ADD CONSTRAINT "device_token_panel_id_panel_id_fk" FOREIGN KEY ("panel_id") REFERENCES "public"."panel"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "device_token" ADD CONSTRAINT "device_token_created_by_id_user_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "panel" ADD CONSTRAINT "panel_workshop_id_organization_id_fk" FOREIGN KEY ("workshop_id") REFERENCES "public"."organization"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "panel" ADD CONSTRAINT "panel_airframe_id_airframe_id_fk" FOREIGN KEY ("airframe_id") REFERENCES "public"."airframe"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "panel" ADD CONSTRAINT "panel_mirror_of_panel_id_fk" FOREIGN KEY ("mirror_of") REFERENCES "public"."panel"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "panel" ADD CONSTRAINT "panel_created_by_id_user_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "device_token_panel_idx" ON "device_token" USING btree ("panel_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "device_token_hash_uq" ON "device_token" USING btree ("token_hash");--> statement-breakpoint
CREATE INDEX "panel_workshop_idx" ON "panel" USING btree ("workshop_id","name");--> statement-breakpoint
CREATE UNIQUE INDEX "panel_workshop_slug_uq" ON "panel" USING btree ("workshop_id","slug");--> statement-breakpoint
CREATE INDEX "panel_airframe_idx" ON "panel" USING btree ("airframe_id");