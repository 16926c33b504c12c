import { randomUUID } from "node:crypto";
import { readFileSync } from "node:fs";
import { and, eq } from "drizzle-orm";
import type { ChannelDefinition } from "../../shared/recording/channels";
import { parseRecording } from "../../shared/recording/recording-file";
import type { Database } from "../db/client";
import { airframe, panel, recording } from "../db/schema";
import { demoChannels, demoPanels } from "../../shared/panel/demo";
import { checkPanelChannels, parsePanel } from "../../shared/panel";
import { RecordingWriter } from "../recordings/writer";
import { storeScenario } from "../routes/recordings";
import { createAuth } from "../auth/auth";
import { connectDatabase } from "../db/client";
import { member, organization, user } from "../db/schema";
import { DEMO_PASSWORD, DEMO_PEOPLE, DEMO_WORKSHOP } from "./demo-data";

const DEMO_SCENARIO = new URL("../../recordings/demo-engine-fire-drill.scenario.json", import.meta.url);
const DEMO_RECORDING = new URL("../../recordings/demo-pattern-flight.ppr.jsonl", import.meta.url);
const DEMO_FULL_CHECK = new URL("../../recordings/demo-full-panel-check.scenario.json", import.meta.url);
// The firmware example's panel and the recording that moves all of it (issue 7): a builder with
// the example flashed on a board can run it from the demo workshop.
const BENCH_PANEL = new URL("../../firmware/examples/bench-panel/bench-panel.panel.json", import.meta.url);
const BENCH_PANEL_CHECK = new URL("../../recordings/demo-bench-panel-check.scenario.json", import.meta.url);

/** The firmware example's panel definition, checked by the shared schema like any other. */
function benchPanel() {
  const parsed = parsePanel(JSON.parse(readFileSync(BENCH_PANEL, "utf8")));
  if (!parsed.ok) throw new Error(`firmware example panel: ${parsed.problems.map((p) => `${p.path}: ${p.message}`).join("; ")}`);
  return parsed.panel;
}

/**
 * Loads the demo workshop: an invented club, its people and their roles.
 * Idempotent: run it on every start; it only adds what is missing.
 */
export async function seedDemo(url: string, baseUrl = "http://127.0.0.1") {
  const db = connectDatabase(url, 2);
  const auth = createAuth({
    db,
    baseUrl,
    secret: "seed-only-secret-never-used-for-sessions-0000",
    mailer: { async send() {}, close() {} },
    rateLimit: false,
  });
  try {
    const ids: Record<string, string> = {};
    for (const person of DEMO_PEOPLE) {
      const [existing] = await db.select({ id: user.id }).from(user).where(eq(user.email, person.email));
      if (existing) ids[person.email] = existing.id;
      else {
        const made = await auth.api.signUpEmail({ body: { name: person.name, email: person.email, password: DEMO_PASSWORD } });
        await db.update(user).set({ emailVerified: true }).where(eq(user.id, made.user.id));
        ids[person.email] = made.user.id;
      }
    }
    const owner = DEMO_PEOPLE.find((p) => p.role === "owner")!;
    let [workshop] = await db.select({ id: organization.id }).from(organization).where(eq(organization.slug, DEMO_WORKSHOP.slug));
    if (!workshop) {
      const made = await auth.api.createOrganization({
        body: { name: DEMO_WORKSHOP.name, slug: DEMO_WORKSHOP.slug, userId: ids[owner.email] },
      });
      workshop = { id: made!.id };
    }
    const present = new Set(
      (await db.select({ userId: member.userId }).from(member).where(eq(member.organizationId, workshop.id))).map((m) => m.userId),
    );
    for (const person of DEMO_PEOPLE) {
      if (present.has(ids[person.email])) continue;
      await auth.api.addMember({ body: { userId: ids[person.email], role: person.role, organizationId: workshop.id } });
    }
    const airframeId = await seedRecordings(db, workshop.id, ids[owner.email]);
    await seedPanels(db, workshop.id, airframeId, ids[owner.email]);
    await seedFullCheck(db, workshop.id, airframeId, ids[owner.email]);
    return { workshopId: workshop.id };
  } finally {
    await db.$client.end();
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const url = process.env.DATABASE_URL;
  if (!url) {
    console.error("DATABASE_URL is not set.");
    process.exit(2);
  }
  await seedDemo(url);
  console.log("[seed] demo workshop is in place");
}


/**
 * The invented airframe with its catalogue (the scenario's channels plus any the demo flight
 * adds), the demo flight file and the recording generated from the scenario. Each is added
 * only when missing, by name, so running the seed again changes nothing.
 */
async function seedRecordings(db: Database, workshopId: string, ownerId: string) {
  const scenario = JSON.parse(readFileSync(DEMO_SCENARIO, "utf8")) as { airframe: string; name: string; channels: ChannelDefinition[] };
  const flightText = readFileSync(DEMO_RECORDING, "utf8");
  const flight = parseRecording(flightText);
  const channels = [...scenario.channels];
  for (const c of flight.header.channels) if (!channels.some((k) => k.name === c.name)) channels.push(c);

  let [frame] = await db
    .select()
    .from(airframe)
    .where(and(eq(airframe.workshopId, workshopId), eq(airframe.name, scenario.airframe)));
  if (!frame) {
    [frame] = await db
      .insert(airframe)
      .values({ id: randomUUID(), workshopId, name: scenario.airframe, description: "Invented light twin used by the demo workshop.", channels })
      .returning();
  }
  const has = async (name: string) =>
    (await db.select({ id: recording.id }).from(recording).where(and(eq(recording.workshopId, workshopId), eq(recording.name, name)))).length > 0;

  if (!(await has("Pattern flight (demo)"))) {
    await db.transaction(async (tx) => {
      const writer = new RecordingWriter(tx, {
        workshopId,
        airframeId: frame.id,
        name: "Pattern flight (demo)",
        source: "file",
        channels: flight.header.channels,
        notes: flight.header.notes ?? null,
        sampleRateHz: flight.header.sampleRateHz ?? null,
        createdById: ownerId,
        sizeBytes: Buffer.byteLength(flightText),
      });
      await writer.push(flight.frames);
      await writer.finish({ durationMs: flight.header.durationMs });
    });
  }
  const generatedName = `${scenario.name} (generated)`;
  if (!(await has(generatedName))) {
    await storeScenario({ db }, { workshopId, airframeId: frame.id, catalogue: frame.channels, name: generatedName, scenario, createdById: ownerId });
  }
  return frame.id;
}

/**
 * The demo panels of the invented airframe (shared/panel/demo): the channels they bind are added
 * to the airframe's catalogue when missing, then each panel is added when no panel has its
 * identifier yet. The mirrored bezel points at its original.
 */
async function seedPanels(db: Database, workshopId: string, airframeId: string, ownerId: string) {
  const [frame] = await db.select().from(airframe).where(eq(airframe.id, airframeId));
  const missing = demoChannels.filter((c) => !frame.channels.some((k) => k.name === c.name));
  const channels = missing.length ? [...frame.channels, ...missing] : frame.channels;
  if (missing.length) await db.update(airframe).set({ channels, updatedAt: new Date() }).where(eq(airframe.id, airframeId));
  const rows = await db.select({ id: panel.id, slug: panel.slug }).from(panel).where(eq(panel.workshopId, workshopId));
  const bySlug = new Map(rows.map((r) => [r.slug, r.id]));
  for (const definition of [...demoPanels, benchPanel()]) {
    if (bySlug.has(definition.id)) continue;
    const problems = checkPanelChannels(definition, channels);
    if (problems.length) {
      console.warn(`[seed] demo panel ${definition.id} skipped: ${problems.map((p) => `${p.path}: ${p.message}`).join("; ")}`);
      continue;
    }
    const id = randomUUID();
    const mirrorOf = definition.id === "nav-bezel-right" ? (bySlug.get("nav-bezel-left") ?? null) : null;
    await db.insert(panel).values({ id, workshopId, airframeId, slug: definition.id, name: definition.name, definition, mirrorOf, createdById: ownerId });
    bySlug.set(definition.id, id);
  }
}

/**
 * The full panel check: a scenario that moves every channel the demo panels read (cautions,
 * fires, breakers, a fast descent, power off and on). Stored after the panels, whose channels
 * it uses, are in the catalogue.
 */
async function seedFullCheck(db: Database, workshopId: string, airframeId: string, ownerId: string) {
  for (const file of [DEMO_FULL_CHECK, BENCH_PANEL_CHECK]) {
    const scenario = JSON.parse(readFileSync(file, "utf8")) as { name: string };
    const name = `${scenario.name} (generated)`;
    const exists = await db.select({ id: recording.id }).from(recording).where(and(eq(recording.workshopId, workshopId), eq(recording.name, name)));
    if (exists.length > 0) continue;
    const [frame] = await db.select().from(airframe).where(eq(airframe.id, airframeId));
    await storeScenario({ db }, { workshopId, airframeId, catalogue: frame.channels, name, scenario, createdById: ownerId });
  }
}
