/** Every server-data cache key in one place, so invalidations match what queries use. */
export const queryKeys = {
  me: ["me"] as const,
  health: ["health"] as const,
  workshop: (id: string) => ["workshops", id] as const,
  members: (id: string) => ["workshops", id, "members"] as const,
  invitations: (id: string) => ["workshops", id, "invitations"] as const,
  invitationPreview: (id: string) => ["invitations", id] as const,
  outbox: ["outbox"] as const,
};
