import type { ServerEnv } from "../env";
import { LocalStorage } from "./local";
import { S3Storage } from "./s3";
import type { StorageDriver } from "./types";

export * from "./types";

export function createStorage(env: ServerEnv): StorageDriver {
  if (env.STORAGE_DRIVER === "s3") {
    return new S3Storage({
      endpoint: env.S3_ENDPOINT,
      bucket: env.S3_BUCKET!,
      accessKeyId: env.S3_ACCESS_KEY_ID!,
      secretAccessKey: env.S3_SECRET_ACCESS_KEY!,
      region: env.S3_REGION,
      forcePathStyle: env.S3_FORCE_PATH_STYLE === "true",
    });
  }
  return new LocalStorage(env.STORAGE_DIR);
}

export { LocalStorage, S3Storage };
