import { eq } from "drizzle-orm";
import type { ChannelDefinition } from "../../shared/recording/channels";
import { RecordingError } from "../../shared/recording/errors";
import { airframe } from "../db/schema";
import type { DbOrTx } from "./writer";

/**
 * Checks a file's channel list (its header) against the airframe's catalogue. A channel the
 * catalogue lacks is refused, or returned as a draft to add when the builder asked for that;
 * a channel whose kind (or enum values) disagree is always refused, since its values would
 * mean something else on this airframe.
 */
export function checkAgainstCatalogue(
  header: readonly ChannelDefinition[],
  catalogue: readonly ChannelDefinition[],
  addDrafts: boolean,
): ChannelDefinition[] {
  const known = new Map(catalogue.map((c) => [c.name, c]));
  const drafts: ChannelDefinition[] = [];
  header.forEach((channel, i) => {
    const where = { line: 1, field: `channels[${i}]`, channel: channel.name };
    const existing = known.get(channel.name);
    if (!existing) {
      if (!addDrafts) {
        throw new RecordingError(
          "unknown_channel",
          "this channel is not in the airframe's catalogue; add it there, or import with new channels added as drafts",
          where,
        );
      }
      drafts.push({ ...channel, draft: true });
      return;
    }
    if (existing.kind !== channel.kind) {
      throw new RecordingError(
        "invalid_header",
        `the file says this channel is ${channel.kind}, the airframe's catalogue says ${existing.kind}`,
        { ...where, field: `channels[${i}].kind` },
      );
    }
    if (existing.kind === "enum" && channel.kind === "enum") {
      const extra = channel.values.filter((v) => !existing.values.includes(v));
      if (extra.length > 0) {
        throw new RecordingError(
          "invalid_header",
          `the file names enum values ${extra.join(", ")} that the airframe's catalogue does not have (${existing.values.join(", ")})`,
          { ...where, field: `channels[${i}].values` },
        );
      }
    }
  });
  return drafts;
}

/**
 * Adds channels first seen in an import to the catalogue as drafts, inside the import's
 * transaction. The row is locked so two imports finishing together cannot drop each other's
 * drafts.
 */
export async function addDraftChannels(tx: DbOrTx, airframeId: string, drafts: readonly ChannelDefinition[]): Promise<number> {
  if (drafts.length === 0) return 0;
  const [row] = await tx.select({ channels: airframe.channels }).from(airframe).where(eq(airframe.id, airframeId)).for("update");
  if (!row) throw new Error(`airframe ${airframeId} vanished during the import`);
  const names = new Set(row.channels.map((c) => c.name));
  const added = drafts.filter((d) => !names.has(d.name)).map((d) => ({ ...d, draft: true }));
  if (added.length === 0) return 0;
  await tx
    .update(airframe)
    .set({ channels: [...row.channels, ...added], updatedAt: new Date() })
    .where(eq(airframe.id, airframeId));
  return added.length;
}
