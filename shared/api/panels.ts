import { z } from "zod";
import { ELEMENT_KINDS, elementId } from "../elements/kinds";
import { panel } from "../panel/schema";
import { entityId } from "./workshops";
import type { PanelCoverage } from "../expect/coverage";
import type { ExpectedTimelines } from "../expect/types";

/**
 * The panels API contract (issue 4), shared by the server's routes and the client. All routes
 * live under /api/workshops/:workshopId. Viewers read; builders and owners change
 * (ability "bench.write"). A panel's whole definition (shared/panel/schema.ts) is stored and
 * replaced as one validated document; element edits in the UI change the document and PUT it.
 */

export const panelSummary = z.object({
  id: z.string(),
  /** The definition's own identifier (`panel.id`), unique in the workshop. */
  slug: z.string(),
  name: z.string(),
  airframeId: z.string(),
  airframeName: z.string(),
  elementCount: z.number().int(),
  placeholderCount: z.number().int(),
  kinds: z.record(z.enum(ELEMENT_KINDS), z.number().int()),
  hasPhoto: z.boolean(),
  /** Set on a panel made by mirroring another. */
  mirrorOf: z.string().nullable(),
  createdBy: z.string().nullable(),
  updatedAt: z.string(),
});
export type PanelSummary = z.infer<typeof panelSummary>;

/** GET /panels/:panelId */
export const panelDetail = panelSummary.extend({ definition: panel });
export type PanelDetail = z.infer<typeof panelDetail>;

/** POST /panels (create or import a definition): the airframe is the workshop's airframe row. */
export const createPanelBody = z.object({ airframeId: entityId, definition: z.unknown() }).strict();

/** PUT /panels/:panelId: replace the definition (422 with every problem's path when invalid). */
export const replacePanelBody = z.object({ definition: z.unknown() }).strict();

/** POST /panels/:panelId/duplicate and /mirror */
export const copyPanelBody = z
  .object({
    name: z.string().trim().min(1).max(80).optional(),
    /** New definition identifier; default: the original's with "-copy" or "-right"/"-left". */
    slug: z.string().max(40).regex(/^[a-z][a-z0-9-]*$/).optional(),
  })
  .strict();

/** PUT /panels/:panelId/photo: raw image bytes (image/jpeg, image/png or image/webp), at most 15 MB; scaled to 2,000 px. */
export const PHOTO_TYPES = ["image/jpeg", "image/png", "image/webp"] as const;
export const PHOTO_MAX_BYTES = 15 * 1024 * 1024;

/** PUT /panels/:panelId/markers: where each element sits on the photo, as fractions. */
export const markersBody = z
  .object({ markers: z.record(z.string(), z.object({ x: z.number().min(0).max(1), y: z.number().min(0).max(1) }).strict()) })
  .strict();

/** GET /panels/:panelId/expected?recordingId= : expected timelines and coverage for a preview. */
export const expectedQuery = z.object({ recordingId: entityId }).strict();

// ---- device tokens (a board on the network proves which panel it is) --------------------------

export const deviceTokenView = z.object({
  id: z.string(),
  label: z.string(),
  createdAt: z.string(),
  lastUsedAt: z.string().nullable(),
  revokedAt: z.string().nullable(),
});
export type DeviceTokenView = z.infer<typeof deviceTokenView>;

/** POST /panels/:panelId/tokens: the token is in the answer once; only its hash is stored. */
export const createTokenBody = z.object({ label: z.string().trim().min(1).max(60) }).strict();
export const createdTokenView = deviceTokenView.extend({ token: z.string() });

// ---- additions while building the routes (additive only) -------------------------------------

/** GET /panels?airframeId= : only the panels of one airframe (the preview's recording picker uses it the other way round). */
export const listPanelsQuery = z.object({ airframeId: entityId.optional() }).strict();

/** PATCH /panels/:panelId: rename (the definition's `name` changes with it). */
export const renamePanelBody = z.object({ name: z.string().trim().min(1, "must not be empty").max(80, "must be at most 80 characters") }).strict();

/**
 * POST /panels/:panelId/mirror also takes `channelMap`: channels the mirrored side reads instead
 * (`nav.range_l_nm` -> `nav.range_r_nm`). Every channel it names must be in the airframe's catalogue.
 */
export const mirrorPanelBody = copyPanelBody.extend({
  channelMap: z.record(z.string().max(80), z.string().max(80)).optional(),
});

/** The answer of GET /panels/:panelId/expected: timelines (shared/expect) and coverage for the preview. */
export interface ExpectedView {
  panelId: string;
  recordingId: string;
  recordingName: string;
  durationMs: number;
  frameCount: number;
  timelines: ExpectedTimelines;
  coverage: PanelCoverage;
}
export type CreatedTokenView = z.infer<typeof createdTokenView>;

// ---- motion demand (a pointer's motor against a recording) ------------------------------------

/**
 * GET /panels/:panelId/elements/:elementId/motion?recordingId= : whether the pointer's saved motor
 * profile keeps up with its value over a recording of the panel's airframe (shared/elements/scale
 * motionDemand). 404 for an unknown element; 422 `params.elementId` for an element that is not a
 * pointer or has no motor profile; 422 `query.recordingId` for a recording of another airframe.
 */
export const motionQuery = z.object({ recordingId: entityId }).strict();
/** Element identifiers as the panel schema writes them. */
export const elementIdParam = elementId;

/** The most stretches a motion answer lists; `behindCount` says how many there were. */
export const MOTION_MAX_STRETCHES = 50;

export const motionStretch = z.object({
  /** Recording time, milliseconds. */
  startMs: z.number(),
  endMs: z.number(),
  /** The largest lag in the stretch, dial degrees. */
  worstLagDegrees: z.number(),
  worstAtMs: z.number(),
});

export const motionView = z.object({
  panelId: z.string(),
  elementId: z.string(),
  recordingId: z.string(),
  recordingName: z.string(),
  channel: z.string(),
  /** Numeric samples of the channel the demand was computed from. */
  sampleCount: z.number().int(),
  /** The pointer's tolerance: lag up to this is not "behind". */
  toleranceDegrees: z.number(),
  peakDegreesPerSecond: z.number(),
  peakDegreesPerSecond2: z.number(),
  /** The motor's limits in dial degrees (its steps per second and per second squared, converted). */
  motorMaxDegreesPerSecond: z.number(),
  motorAccelerationDegreesPerSecond2: z.number(),
  keepsUp: z.boolean(),
  worstLagDegrees: z.number(),
  behindCount: z.number().int(),
  /** The first MOTION_MAX_STRETCHES stretches where the motor falls behind by more than the tolerance. */
  behind: z.array(motionStretch),
});
export type MotionView = z.infer<typeof motionView>;
