import { index, jsonb, pgTable, text, timestamp } from "drizzle-orm/pg-core";

export * from "./auth-schema";

/**
 * Mail caught by the local fake SMTP server (development and tests only).
 * The Outbox page lists these; with a real SMTP host nothing is written here.
 */
export const outboxMessage = pgTable(
  "outbox_message",
  {
    id: text("id").primaryKey(),
    fromAddress: text("from_address").notNull(),
    toAddresses: jsonb("to_addresses").$type<string[]>().notNull(),
    subject: text("subject").notNull(),
    text: text("text").notNull(),
    html: text("html"),
    receivedAt: timestamp("received_at", { withTimezone: true }).defaultNow().notNull(),
  },
  (table) => [index("outbox_message_received_at_idx").on(table.receivedAt)],
);

export * from "./recordings-schema";

export * from "./panels-schema";

export * from "./runs-schema";
