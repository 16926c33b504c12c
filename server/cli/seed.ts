import { eq } from "drizzle-orm";
import { createAuth } from "../auth/auth";
import { connectDatabase } from "../db/client";
import { member, organization, user } from "../db/schema";
import { DEMO_PASSWORD, DEMO_PEOPLE, DEMO_WORKSHOP } from "./demo-data";

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
