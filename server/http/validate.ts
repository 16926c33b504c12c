import type { Request } from "express";
import type { z } from "zod";
import { issuesFromZod } from "../../shared/api/errors";
import { HttpError } from "./errors";

/** Parses one part of a request with a shared zod schema, or answers 422 naming each bad field. */
function parsePart<S extends z.ZodType>(schema: S, value: unknown, source: string): z.infer<S> {
  const parsed = schema.safeParse(value);
  if (!parsed.success) {
    const issues = issuesFromZod(parsed.error, source);
    const first = issues[0];
    throw new HttpError("validation_failed", `${first.path}: ${first.message}`, issues);
  }
  return parsed.data;
}

export const parseBody = <S extends z.ZodType>(req: Request, schema: S) => parsePart(schema, req.body ?? {}, "body");
export const parseQuery = <S extends z.ZodType>(req: Request, schema: S) => parsePart(schema, req.query, "query");
export const parseParams = <S extends z.ZodType>(req: Request, schema: S) => parsePart(schema, req.params, "params");
