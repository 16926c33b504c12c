import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { RunningServer } from "../../server/start";
import { Visitor, firstLink, startTestServer, uniqueEmail, waitForMail } from "../support/test-server";

let server: RunningServer;
beforeAll(async () => {
  server = await startTestServer();
});
afterAll(async () => {
  await server?.close();
});

describe("health", () => {
  it("reports the app and a reachable database", async () => {
    const reply = await new Visitor(server.url).get("/api/health");
    expect(reply.status).toBe(200);
    expect(reply.body).toMatchObject({ app: "ok", database: "ok", mail: "outbox" });
  });

  it("answers unknown API routes with the stable error shape", async () => {
    const reply = await new Visitor(server.url).get("/api/no-such-thing");
    expect(reply.status).toBe(404);
    expect(reply.body).toEqual({ error: { code: "not_found", message: "No API route GET /no-such-thing" } });
  });
});

describe("sign-up, sign-in, workshop, invitation over real SMTP, acceptance", () => {
  it("walks the whole path", async () => {
    const owner = new Visitor(server.url);
    const ownerEmail = uniqueEmail("owner");
    await owner.signUp("Wren Owner", ownerEmail);

    // A fresh visitor signs in with the same password and sees the same person.
    const again = new Visitor(server.url);
    expect((await again.signIn(ownerEmail)).status).toBe(200);
    expect((await again.get("/api/me")).body.user.email).toBe(ownerEmail);
    expect((await new Visitor(server.url).signIn(ownerEmail, "wrong-password-123")).status).toBe(401);

    const created = await owner.post("/api/workshops", { name: "Loft Overhead Build" });
    expect(created.status).toBe(201);
    expect(created.body).toMatchObject({ name: "Loft Overhead Build", role: "owner", memberCount: 1 });
    const workshopId: string = created.body.id;

    const me = await owner.get("/api/me");
    expect(me.body.workshops.map((w: { id: string }) => w.id)).toContain(workshopId);

    const guestEmail = uniqueEmail("guest");
    const invite = await owner.post(`/api/workshops/${workshopId}/invitations`, { email: guestEmail, role: "viewer" });
    expect(invite.status).toBe(201);

    // The message went through nodemailer and the SMTP conversation into the fake's outbox.
    const mail = await waitForMail(owner, guestEmail, /invites you to the Loft Overhead Build workshop/);
    expect(mail.text).toContain("as viewer");
    const link = new URL(firstLink(mail.text));
    expect(link.pathname).toBe(`/invitations/${invite.body.id}`);

    const guest = new Visitor(server.url);
    const preview = await guest.get(`/api/invitations/${invite.body.id}`);
    expect(preview.status).toBe(200);
    expect(preview.body).toMatchObject({ workshopName: "Loft Overhead Build", email: guestEmail, role: "viewer", status: "pending", expired: false });

    // Accepting needs the invited address signed in.
    expect((await guest.post(`/api/invitations/${invite.body.id}/accept`)).status).toBe(401);
    const stranger = new Visitor(server.url);
    await stranger.signUp("Someone Else", uniqueEmail("stranger"));
    expect((await stranger.post(`/api/invitations/${invite.body.id}/accept`)).status).toBe(403);

    await guest.signUp("Gale Guest", guestEmail);
    const accepted = await guest.post(`/api/invitations/${invite.body.id}/accept`);
    expect(accepted.status).toBe(200);
    expect(accepted.body.workshopId).toBe(workshopId);

    const seen = await guest.get(`/api/workshops/${workshopId}`);
    expect(seen.status).toBe(200);
    expect(seen.body.role).toBe("viewer");
    expect(seen.body.abilities).not.toContain("invitation.create");
    const members = await owner.get(`/api/workshops/${workshopId}/members`);
    expect(members.body.map((m: { email: string; role: string }) => [m.email, m.role])).toEqual(
      expect.arrayContaining([[ownerEmail, "owner"], [guestEmail, "viewer"]]),
    );

    // A used invitation cannot be accepted twice.
    expect((await guest.post(`/api/invitations/${invite.body.id}/accept`)).status).toBe(409);
  });

  it("resets a forgotten password through the e-mailed link", async () => {
    const email = uniqueEmail("forgetful");
    const person = new Visitor(server.url);
    await person.signUp("Fern Forgetful", email, "first-password-1");

    const request = await new Visitor(server.url).post("/api/auth/request-password-reset", {
      email,
      redirectTo: `${server.url}/reset-password`,
    });
    expect(request.status).toBe(200);
    const mail = await waitForMail(person, email, /Reset your Panelproof password/);
    const link = firstLink(mail.text);

    // The e-mailed link checks the token and sends the browser to the client's page with it.
    const follow = await new Visitor(server.url).request("GET", new URL(link).pathname + new URL(link).search);
    expect(follow.status).toBe(302);
    const landing = new URL(follow.headers.get("location")!, server.url);
    expect(landing.pathname).toBe("/reset-password");
    const token = landing.searchParams.get("token");
    expect(token).toBeTruthy();

    const reset = await new Visitor(server.url).post("/api/auth/reset-password", { newPassword: "second-password-2", token });
    expect(reset.status).toBe(200);
    expect((await new Visitor(server.url).signIn(email, "first-password-1")).status).toBe(401);
    expect((await new Visitor(server.url).signIn(email, "second-password-2")).status).toBe(200);
    // The token is single-use.
    expect((await new Visitor(server.url).post("/api/auth/reset-password", { newPassword: "third-password-3", token })).status).toBe(400);
  });
});

describe("input validation", () => {
  it("names the field and why, with the stable error shape", async () => {
    const owner = new Visitor(server.url);
    await owner.signUp("Val Idator", uniqueEmail("validator"));
    const w = await owner.post("/api/workshops", { name: "Checks" });

    const badName = await owner.post("/api/workshops", { name: "x" });
    expect(badName.status).toBe(422);
    expect(badName.body.error.code).toBe("validation_failed");
    expect(badName.body.error.issues).toEqual([{ path: "body.name", message: "must be at least 2 characters" }]);

    const extra = await owner.post("/api/workshops", { name: "Fine name", colour: "red" });
    expect(extra.status).toBe(422);

    const badInvite = await owner.post(`/api/workshops/${w.body.id}/invitations`, { email: "not-an-address", role: "admin" });
    expect(badInvite.status).toBe(422);
    expect(badInvite.body.error.issues.map((i: { path: string }) => i.path)).toEqual(["body.email", "body.role"]);

    const notJson = await owner.request("POST", "/api/workshops", "{name:", { "content-type": "application/json" });
    expect(notJson.status).toBe(400);
    expect(notJson.body.error.code).toBe("bad_request");

    const badId = await owner.get("/api/workshops/has%20spaces");
    expect(badId.status).toBe(422);
    expect(badId.body.error.issues[0].path).toBe("params.workshopId");
  });

  it("refuses changing requests from a foreign origin", async () => {
    const owner = new Visitor(server.url);
    await owner.signUp("Ori Gin", uniqueEmail("origin"));
    const reply = await owner.request("POST", "/api/workshops", { name: "Cross site" }, { origin: "http://evil.example" });
    expect(reply.status).toBe(403);
  });
});
