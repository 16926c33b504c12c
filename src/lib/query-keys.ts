/** Every server-data cache key in one place, so invalidations match what queries use. */
export const queryKeys = {
  me: ["me"] as const,
  health: ["health"] as const,
  workshop: (id: string) => ["workshops", id] as const,
  members: (id: string) => ["workshops", id, "members"] as const,
  invitations: (id: string) => ["workshops", id, "invitations"] as const,
  invitationPreview: (id: string) => ["invitations", id] as const,
  outbox: ["outbox"] as const,
  // Recordings (issue 3): everything inside a workshop starts with ["workshops", id].
  airframes: (id: string) => ["workshops", id, "airframes"] as const,
  airframe: (id: string, airframeId: string) => ["workshops", id, "airframes", airframeId] as const,
  recordings: (id: string) => ["workshops", id, "recordings"] as const,
  recording: (id: string, recordingId: string) => ["workshops", id, "recordings", recordingId] as const,
  recordingSeries: (id: string, recordingId: string, channels: readonly string[], fromMs: number | null, toMs: number | null) =>
    ["workshops", id, "recordings", recordingId, "series", channels.join(","), fromMs, toMs] as const,
  recordingState: (id: string, recordingId: string, t: number) => ["workshops", id, "recordings", recordingId, "state", t] as const,
  imports: (id: string) => ["workshops", id, "imports"] as const,
  importJob: (id: string, importId: string) => ["workshops", id, "imports", importId] as const,
  capture: (id: string, captureId: string) => ["workshops", id, "captures", captureId] as const,
};
