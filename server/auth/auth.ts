import { betterAuth } from "better-auth";
import { drizzleAdapter } from "better-auth/adapters/drizzle";
import { organization } from "better-auth/plugins";
import { APIError } from "better-auth/api";
import { isWorkshopRole } from "../../shared/workshop/roles";
import type { Database } from "../db/client";
import * as schema from "../db/schema";
import type { Mailer } from "../mail/mailer";
import { invitationMail, passwordResetMail } from "../mail/templates";
import { accessControl, builderRole, ownerRole, viewerRole } from "./access";

export interface AuthOptions {
  db: Database;
  baseUrl: string;
  secret: string;
  mailer: Mailer;
  /** Other origins allowed to call the auth endpoints (the Vite dev server, say). */
  extraOrigins?: string[];
  rateLimit?: boolean;
}

function rejectUnknownRole(role: string) {
  // better-auth still accepts its built-in names (admin, member) on invite and role
  // change; they would carry no permissions here, so refuse them outright.
  for (const r of role.split(",")) {
    if (!isWorkshopRole(r.trim())) {
      throw new APIError("BAD_REQUEST", { message: `Unknown role "${r}": use owner, builder or viewer.` });
    }
  }
}

export function createAuth(options: AuthOptions) {
  const { db, baseUrl, secret, mailer } = options;
  return betterAuth({
    appName: "Panelproof",
    baseURL: baseUrl,
    basePath: "/api/auth",
    secret,
    telemetry: { enabled: false },
    trustedOrigins: [baseUrl, ...(options.extraOrigins ?? [])],
    rateLimit: { enabled: options.rateLimit ?? true },
    advanced: { ipAddress: { ipAddressHeaders: ["x-forwarded-for"] } },
    database: drizzleAdapter(db, { provider: "pg", schema }),
    emailAndPassword: {
      enabled: true,
      minPasswordLength: 10,
      maxPasswordLength: 200,
      resetPasswordTokenExpiresIn: 60 * 60,
      revokeSessionsOnPasswordReset: true,
      sendResetPassword: async ({ user, url }) => {
        await mailer.send({ to: user.email, ...passwordResetMail({ name: user.name, url }) });
      },
    },
    plugins: [
      organization({
        ac: accessControl,
        roles: { owner: ownerRole, builder: builderRole, viewer: viewerRole },
        creatorRole: "owner",
        invitationExpiresIn: 7 * 24 * 60 * 60,
        cancelPendingInvitationsOnReInvite: true,
        sendInvitationEmail: async (data) => {
          await mailer.send({
            to: data.email,
            ...invitationMail({
              workshopName: data.organization.name,
              inviterName: data.inviter.user.name,
              role: data.role,
              url: `${baseUrl}/invitations/${data.id}`,
            }),
          });
        },
        organizationHooks: {
          beforeCreateInvitation: async ({ invitation }) => rejectUnknownRole(invitation.role),
          beforeAddMember: async ({ member }) => rejectUnknownRole(member.role),
          beforeUpdateMemberRole: async ({ newRole }) => rejectUnknownRole(newRole),
        },
      }),
    ],
  });
}

export type Auth = ReturnType<typeof createAuth>;
