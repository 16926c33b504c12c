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

  // ---- recordings (issue 3) ----
  /** Where uploaded files are kept: a local folder (default) or an S3-compatible bucket. */
  STORAGE_DRIVER: z.enum(["local", "s3"]).default("local"),
  /** Local driver's folder; relative paths are from the working directory. */
  STORAGE_DIR: z.string().min(1).default(".data/storage"),
  S3_ENDPOINT: z.string().url("must be a URL such as http://127.0.0.1:9000").optional(),
  S3_BUCKET: z.string().min(3, "must be a bucket name").max(63).optional(),
  S3_ACCESS_KEY_ID: z.string().min(1).optional(),
  S3_SECRET_ACCESS_KEY: z.string().min(1).optional(),
  S3_REGION: z.string().min(1).default("us-east-1"),
  /** "true" for servers that want bucket names in the path (most self-hosted ones). */
  S3_FORCE_PATH_STYLE: z.enum(["true", "false"]).default("true"),
  /** Largest upload, in bytes (for gzip also the largest unpacked size). Default 512 MB. */
  MAX_UPLOAD_BYTES: z.coerce.number().int().positive().max(2 ** 40).default(512 * 1024 * 1024),
  /** Address live-capture UDP sockets bind to; 0.0.0.0 lets a simulator on another computer send. */
  CAPTURE_UDP_HOST: z.string().min(1).default("127.0.0.1"),
  /** How often (seconds, at least 0.5) idle import workers look for queued imports. */
  IMPORT_POLL_SECONDS: z.coerce.number().min(0.5).max(60).default(1),
}).superRefine((env, ctx) => {
  if (env.STORAGE_DRIVER !== "s3") return;
  for (const key of ["S3_BUCKET", "S3_ACCESS_KEY_ID", "S3_SECRET_ACCESS_KEY"] as const) {
    if (!env[key]) ctx.addIssue({ code: "custom", path: [key], message: "is required when STORAGE_DRIVER=s3" });
  }
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
