import { z } from "zod";

/**
 * Every API error has this shape, whatever the route:
 * `{ "error": { "code": "not_found", "message": "…", "issues": [...] } }`.
 * `issues` is present for validation errors and names the field (path) and why.
 */
export const API_ERROR_CODES = [
  "bad_request",
  "validation_failed",
  "unauthenticated",
  "forbidden",
  "not_found",
  "conflict",
  /** A share link its workshop revoked (410). */
  "revoked",
  /** A share link past its expiry (410). */
  "expired",
  "too_large",
  "internal",
  "unavailable",
] as const;
export type ApiErrorCode = (typeof API_ERROR_CODES)[number];

export const apiIssue = z.object({
  /** Where: the field path, e.g. `body.email` or `query.limit`. */
  path: z.string(),
  /** Why, in words. */
  message: z.string(),
});
export type ApiIssue = z.infer<typeof apiIssue>;

export const apiErrorBody = z.object({
  error: z.object({
    code: z.enum(API_ERROR_CODES),
    message: z.string(),
    issues: z.array(apiIssue).optional(),
  }),
});
export type ApiErrorBody = z.infer<typeof apiErrorBody>;

export const STATUS_FOR_CODE: Record<ApiErrorCode, number> = {
  bad_request: 400,
  validation_failed: 422,
  unauthenticated: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  revoked: 410,
  expired: 410,
  too_large: 413,
  internal: 500,
  unavailable: 503,
};

/** Turns zod issues into the API's issue list, prefixing each path with where the value came from. */
export function issuesFromZod(error: z.ZodError, source: string): ApiIssue[] {
  return error.issues.map((issue) => ({
    path: [source, ...issue.path.map(String)].join("."),
    message: issue.message,
  }));
}
