import type { ErrorRequestHandler, RequestHandler } from "express";
import { APIError as AuthApiError } from "better-auth/api";
import { STATUS_FOR_CODE, type ApiErrorBody, type ApiErrorCode, type ApiIssue } from "../../shared/api/errors";

/** Throw this from any route: the error handler turns it into the API's stable error shape. */
export class HttpError extends Error {
  constructor(
    readonly code: ApiErrorCode,
    message: string,
    readonly issues?: ApiIssue[],
  ) {
    super(message);
  }
  get status() {
    return STATUS_FOR_CODE[this.code];
  }
}

export const notFound = (what = "Not found") => new HttpError("not_found", what);
export const forbidden = (why = "Your role in this workshop does not allow this.") => new HttpError("forbidden", why);
export const unauthenticated = () => new HttpError("unauthenticated", "Sign in first.");

const CODE_FOR_STATUS: Record<number, ApiErrorCode> = {
  400: "bad_request",
  401: "unauthenticated",
  403: "forbidden",
  404: "not_found",
  409: "conflict",
  413: "too_large",
  422: "validation_failed",
  503: "unavailable",
};

/** better-auth's own errors (thrown by auth.api calls) carry a status; keep it and its message. */
export function fromAuthError(err: unknown): HttpError | null {
  if (!(err instanceof AuthApiError)) return null;
  const status = typeof err.statusCode === "number" ? err.statusCode : 400;
  const message = (err.body as { message?: string } | undefined)?.message ?? err.message ?? "Request refused";
  return new HttpError(CODE_FOR_STATUS[status] ?? (status >= 500 ? "internal" : "bad_request"), message);
}

export const unknownApiRoute: RequestHandler = (req, _res, next) => {
  next(new HttpError("not_found", `No API route ${req.method} ${req.path}`));
};

export const errorHandler: ErrorRequestHandler = (err, _req, res, _next) => {
  let httpError: HttpError;
  if (err instanceof HttpError) httpError = err;
  else if (fromAuthError(err)) httpError = fromAuthError(err)!;
  else if (err?.type === "entity.parse.failed") httpError = new HttpError("bad_request", `The body is not valid JSON: ${err.message}`);
  else if (err?.type === "entity.too.large") httpError = new HttpError("too_large", "The body is too large.");
  else {
    console.error("[api] unexpected error:", err);
    httpError = new HttpError("internal", "Something went wrong on the server. It has been logged.");
  }
  const body: ApiErrorBody = { error: { code: httpError.code, message: httpError.message } };
  if (httpError.issues) body.error.issues = httpError.issues;
  res.status(httpError.status).json(body);
};
