import pg from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Mismatch } from "../../shared/compare/types";
import { copyMismatches } from "../../server/bench/store";
import { copyField } from "../../server/db/copy";

/**
 * Mismatches are stored with COPY (server/db/copy.ts): every odd character a panel or recording
 * can put in a mismatch's text comes back as it went in, except U+0000, which PostgreSQL text
 * cannot hold and becomes U+FFFD instead of failing the whole judgement. Real PostgreSQL.
 */
const url = process.env.TEST_DATABASE_URL;
let client: pg.Client;

beforeAll(async () => {
  if (!url) throw new Error("TEST_DATABASE_URL is not set (npm test sets it)");
  client = new pg.Client({ connectionString: url });
  await client.connect();
});
afterAll(async () => {
  await client?.end();
});

describe("storing mismatches with COPY", () => {
  it("escapes fields as COPY's text format reads them", () => {
    expect(copyField("plain")).toBe("plain");
    expect(copyField("a\\b\tc\nd\re")).toBe("a\\\\b\\tc\\nd\\re");
    expect(copyField("nul\u0000here")).toBe("nul\ufffdhere");
    expect(copyField(1e-7)).toBe("1e-7");
  });

  it("stores odd texts and numbers and reads them back, in one transaction that leaves nothing behind", async () => {
    const texts = ['quote " and backslash \\', "tab\tnew line\nreturn\r", "accents éü, a dial ° and 🛩", "\\N looks like COPY's null", "nul \u0000 inside", ""];
    const list: Mismatch[] = texts.map((text, i) => ({ elementId: `el-${i}`, track: "text", kind: "wrong_value", startMs: i * 1000 + 0.25, endMs: i * 1000 + 500, worstError: i === 1 ? 1e-7 : 12.5, expected: text, seen: `${text}!`, atMs: i * 1000 + 3 }));
    const runId = `copy-test-${Date.now()}`;
    await client.query("BEGIN");
    try {
      // The rows belong to no real run: foreign keys off for this transaction only.
      await client.query("SET LOCAL session_replication_role = replica");
      await copyMismatches(client, runId, "panel\tone", list);
      const back = await client.query("SELECT panel_id, element_id, track, kind, start_ms, end_ms, worst_error, expected, seen, at_ms FROM mismatch WHERE run_id = $1 ORDER BY start_ms", [runId]);
      expect(back.rows).toEqual(
        list.map((m) => ({
          panel_id: "panel\tone",
          element_id: m.elementId,
          track: m.track,
          kind: m.kind,
          start_ms: m.startMs,
          end_ms: m.endMs,
          worst_error: m.worstError,
          expected: m.expected.replace("\u0000", "\ufffd"),
          seen: m.seen.replace("\u0000", "\ufffd"),
          at_ms: m.atMs,
        })),
      );
    } finally {
      await client.query("ROLLBACK");
    }
    expect((await client.query("SELECT count(*)::int AS n FROM mismatch WHERE run_id = $1", [runId])).rows[0].n).toBe(0);
  });
});
