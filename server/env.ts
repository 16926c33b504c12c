import { z } from "zod";

/**
 * The server's whole configuration, read once from the environment and checked.
 * A bad value stops the server at start with the variable's name and why.
 */
const schema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  DATABASE_URL: z.string().url("must be a postgres:// URL"),
  HOST: z.string().default("127.0.0.1"),
  PORT: z.coerce.number().int().min(0).max(65535).default(5178),
  /** The address people open; used in e-mailed links and as the trusted origin. */
  BASE_URL: z.string().url().optional(),
  /** Signs sessions. The start script makes one per checkout; set your own in production. */
  AUTH_SECRET: z.string().min(32, "must be at least 32 characters"),
  /** When set, an in-process fake SMTP server listens here and the Outbox page shows what it caught. */
  MAIL_FAKE_PORT: z.coerce.number().int().min(0).max(65535).optional(),
  SMTP_HOST: z.string().optional(),
  SMTP_PORT: z.coerce.number().int().min(1).max(65535).optional(),
  SMTP_SECURE: z.enum(["true", "false"]).optional(),
  SMTP_USER: z.string().optional(),
  SMTP_PASSWORD: z.string().optional(),
  MAIL_FROM: z.string().default("Panelproof <bench@panelproof.localhost>"),
  /** "true" when a reverse proxy in front of the app sets X-Forwarded-For. */
  BEHIND_PROXY: z.enum(["true", "false"]).default("false"),
  /** Folder with the built client (vite build). Empty: API only. */
  CLIENT_DIR: z.string().optional(),
});

export type ServerEnv = z.infer<typeof schema>;

export function readEnv(source: NodeJS.ProcessEnv = process.env): ServerEnv {
  const parsed = schema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join(".")}: ${i.message}`);
    throw new Error(`Panelproof cannot start, the environment is not valid:\n${lines.join("\n")}`);
  }
  return parsed.data;
}
