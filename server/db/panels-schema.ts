import { index, jsonb, pgTable, text, timestamp, uniqueIndex, type AnyPgColumn } from "drizzle-orm/pg-core";
import type { Panel } from "../../shared/panel/schema";
import { organization, user } from "./auth-schema";
import { airframe } from "./recordings-schema";

/**
 * Panels (issue 4): a panel's whole definition is one validated jsonb document (shared/panel),
 * read and replaced whole, like an airframe's channel catalogue. Every row carries its workshop
 * so every query is scoped to it.
 */
export const panel = pgTable(
  "panel",
  {
    id: text("id").primaryKey(),
    workshopId: text("workshop_id")
      .notNull()
      .references(() => organization.id, { onDelete: "cascade" }),
    airframeId: text("airframe_id")
      .notNull()
      .references(() => airframe.id, { onDelete: "restrict" }),
    /** The definition's own identifier (`definition.id`), unique in the workshop. */
    slug: text("slug").notNull(),
    /** The definition's name, kept beside it for lists and sorting. */
    name: text("name").notNull(),
    /** Validated with shared/panel's schema (and the airframe's catalogue) on every write. */
    definition: jsonb("definition").$type<Panel>().notNull(),
    /** The scaled photo of the real panel, through the storage driver; null until one is uploaded. */
    photoKey: text("photo_key"),
    /** image/jpeg, image/png or image/webp: the stored photo's type (sniffed, never trusted). */
    photoType: text("photo_type"),
    /** The panel this one was mirrored from (null when that panel is deleted). */
    mirrorOf: text("mirror_of").references((): AnyPgColumn => panel.id, { onDelete: "set null" }),
    createdById: text("created_by_id").references(() => user.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).defaultNow().notNull(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).defaultNow().notNull(),
  },
  (t) => [
    index("panel_workshop_idx").on(t.workshopId, t.name),
    uniqueIndex("panel_workshop_slug_uq").on(t.workshopId, t.slug),
    index("panel_airframe_idx").on(t.airframeId),
  ],
);

/**
 * A token a board on the network presents to say which panel it is. Only the SHA-256 of the token
 * is kept; the token itself is shown once, when it is made.
 */
export const deviceToken = pgTable(
  "device_token",
  {
    id: text("id").primaryKey(),
    panelId: text("panel_id")
      .notNull()
      .references(() => panel.id, { onDelete: "cascade" }),
    label: text("label").notNull(),
    tokenHash: text("token_hash").notNull(),
    createdById: text("created_by_id").references(() => user.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).defaultNow().notNull(),
    lastUsedAt: timestamp("last_used_at", { withTimezone: true }),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
  },
  (t) => [index("device_token_panel_idx").on(t.panelId, t.createdAt), uniqueIndex("device_token_hash_uq").on(t.tokenHash)],
);
