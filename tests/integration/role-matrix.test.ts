import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { RunningServer } from "../../server/start";
import { Visitor, startTestServer, uniqueEmail } from "../support/test-server";

/**
 * For each role (and anonymous, and a member of another workshop) each route answers
 * the expected status. The server enforces this; the client only hides what it refuses.
 */
type ActorName = "owner" | "builder" | "viewer" | "outsider" | "anonymous";
const ACTORS: ActorName[] = ["owner", "builder", "viewer", "outsider", "anonymous"];

let server: RunningServer;
const visitors = {} as Record<ActorName, Visitor>;
const memberIds = {} as Record<"owner" | "builder" | "viewer", string>;
let workshopId = "";
let outsiderWorkshopId = "";

async function join(owner: Visitor, person: Visitor, name: string, role: "builder" | "viewer") {
  const email = uniqueEmail(role);
  const invite = await owner.post(`/api/workshops/${workshopId}/invitations`, { email, role });
  expect(invite.status).toBe(201);
  await person.signUp(name, email);
  expect((await person.post(`/api/invitations/${invite.body.id}/accept`)).status).toBe(200);
}

beforeAll(async () => {
  server = await startTestServer();
  for (const a of ACTORS) visitors[a] = new Visitor(server.url);
  await visitors.owner.signUp("Matrix Owner", uniqueEmail("owner"));
  workshopId = (await visitors.owner.post("/api/workshops", { name: "Matrix Bench" })).body.id;
  await join(visitors.owner, visitors.builder, "Matrix Builder", "builder");
  await join(visitors.owner, visitors.viewer, "Matrix Viewer", "viewer");
  await visitors.outsider.signUp("Other Shop", uniqueEmail("outsider"));
  outsiderWorkshopId = (await visitors.outsider.post("/api/workshops", { name: "Other Shop Bench" })).body.id;
  const members = (await visitors.owner.get(`/api/workshops/${workshopId}/members`)).body as { id: string; role: string }[];
  for (const m of members) memberIds[m.role as "owner"] = m.id;
});
afterAll(async () => {
  await server?.close();
});

interface RouteCase {
  name: string;
  call: (v: Visitor) => Promise<{ status: number }>;
  expect: Record<ActorName, number>;
}

const freshInvitation = async () =>
  (await visitors.owner.post(`/api/workshops/${workshopId}/invitations`, { email: uniqueEmail("spare"), role: "viewer" })).body.id as string;

const CASES: RouteCase[] = [
  { name: "GET /api/me", call: (v) => v.get("/api/me"), expect: { owner: 200, builder: 200, viewer: 200, outsider: 200, anonymous: 401 } },
  { name: "POST /api/workshops", call: (v) => v.post("/api/workshops", { name: "Another bench" }), expect: { owner: 201, builder: 201, viewer: 201, outsider: 201, anonymous: 401 } },
  { name: "GET workshop", call: (v) => v.get(`/api/workshops/${workshopId}`), expect: { owner: 200, builder: 200, viewer: 200, outsider: 404, anonymous: 401 } },
  { name: "PATCH workshop", call: (v) => v.patch(`/api/workshops/${workshopId}`, { name: "Matrix Bench" }), expect: { owner: 200, builder: 403, viewer: 403, outsider: 404, anonymous: 401 } },
  { name: "GET members", call: (v) => v.get(`/api/workshops/${workshopId}/members`), expect: { owner: 200, builder: 200, viewer: 200, outsider: 404, anonymous: 401 } },
  { name: "PATCH member role", call: (v) => v.patch(`/api/workshops/${workshopId}/members/${memberIds.viewer}`, { role: "viewer" }), expect: { owner: 200, builder: 403, viewer: 403, outsider: 404, anonymous: 401 } },
  { name: "DELETE member", call: (v) => v.delete(`/api/workshops/${workshopId}/members/${memberIds.builder}`), expect: { owner: 0, builder: 403, viewer: 403, outsider: 404, anonymous: 401 } },
  { name: "GET invitations", call: (v) => v.get(`/api/workshops/${workshopId}/invitations`), expect: { owner: 200, builder: 403, viewer: 403, outsider: 404, anonymous: 401 } },
  { name: "POST invitation", call: (v) => v.post(`/api/workshops/${workshopId}/invitations`, { email: uniqueEmail("new"), role: "builder" }), expect: { owner: 201, builder: 403, viewer: 403, outsider: 404, anonymous: 401 } },
  { name: "DELETE invitation", call: async (v) => v.delete(`/api/workshops/${workshopId}/invitations/${await freshInvitation()}`), expect: { owner: 204, builder: 403, viewer: 403, outsider: 404, anonymous: 401 } },
  { name: "GET other workshop", call: (v) => v.get(`/api/workshops/${outsiderWorkshopId}`), expect: { owner: 404, builder: 404, viewer: 404, outsider: 200, anonymous: 401 } },
  { name: "GET other workshop's members", call: (v) => v.get(`/api/workshops/${outsiderWorkshopId}/members`), expect: { owner: 404, builder: 404, viewer: 404, outsider: 200, anonymous: 401 } },
  { name: "GET /api/outbox", call: (v) => v.get("/api/outbox"), expect: { owner: 200, builder: 200, viewer: 200, outsider: 200, anonymous: 200 } },
];

describe("role matrix", () => {
  for (const c of CASES) {
    for (const actor of ACTORS) {
      const want = c.expect[actor];
      if (want === 0) continue; // covered separately below (it changes the workshop)
      it(`${c.name} as ${actor} → ${want}`, async () => {
        const reply = await c.call(visitors[actor]);
        expect(reply.status).toBe(want);
      });
    }
  }

  it("an owner removes a member, but never the last owner", async () => {
    const extra = new Visitor(server.url);
    const email = uniqueEmail("leaver");
    const invite = await visitors.owner.post(`/api/workshops/${workshopId}/invitations`, { email, role: "builder" });
    await extra.signUp("Lee Leaver", email);
    await extra.post(`/api/invitations/${invite.body.id}/accept`);
    const members = (await visitors.owner.get(`/api/workshops/${workshopId}/members`)).body as { id: string; email: string }[];
    const leaver = members.find((m) => m.email === email)!;
    expect((await visitors.owner.delete(`/api/workshops/${workshopId}/members/${leaver.id}`)).status).toBe(204);
    expect((await extra.get(`/api/workshops/${workshopId}`)).status).toBe(404);

    expect((await visitors.owner.delete(`/api/workshops/${workshopId}/members/${memberIds.owner}`)).status).toBe(409);
    expect((await visitors.owner.patch(`/api/workshops/${workshopId}/members/${memberIds.owner}`, { role: "viewer" })).status).toBe(409);
  });

  it("better-auth's own organization endpoints agree with our policies", async () => {
    // A builder cannot invite through better-auth's endpoint either.
    const viaAuth = await visitors.builder.post("/api/auth/organization/invite-member", {
      email: uniqueEmail("sneak"),
      role: "builder",
      organizationId: workshopId,
    });
    expect(viaAuth.status).toBe(403);
    // Built-in role names carry no permissions here and are refused outright.
    const adminRole = await visitors.owner.post("/api/auth/organization/invite-member", {
      email: uniqueEmail("admin"),
      role: "admin",
      organizationId: workshopId,
    });
    expect(adminRole.status).toBeGreaterThanOrEqual(400);
    const invitations = (await visitors.owner.get(`/api/workshops/${workshopId}/invitations`)).body as { role: string }[];
    expect(invitations.every((i) => ["builder", "viewer"].includes(i.role))).toBe(true);
  });
});
