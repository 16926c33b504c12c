import type { Readable } from "node:stream";

/**
 * Where uploaded files (recording sources, later panel photos) are kept. Streams both ways so
 * a 512 MB upload never sits in memory. Keys are relative paths made by the server
 * (`workshops/<id>/uploads/<id>.ppr`), never by a client.
 */
export interface StorageDriver {
  /** Identifies the place the files live: workers may only take jobs whose files they can reach. */
  readonly location: string;
  /** Stores the whole stream under `key`; resolves with the bytes written. */
  put(key: string, body: Readable, contentType?: string): Promise<{ bytes: number }>;
  /** Throws StorageNotFound when there is no such key. */
  get(key: string): Promise<Readable>;
  delete(key: string): Promise<void>;
  exists(key: string): Promise<boolean>;
  /** Size in bytes, or null when missing. */
  size(key: string): Promise<number | null>;
}

export class StorageNotFound extends Error {
  constructor(key: string) {
    super(`No stored file ${key}`);
    this.name = "StorageNotFound";
  }
}

const KEY = /^[A-Za-z0-9_-]+(\/[A-Za-z0-9_.-]+)*$/;

/** Keys are made by the server, but check anyway: no `..`, no absolute paths, no odd bytes. */
export function assertKey(key: string): void {
  if (!KEY.test(key) || key.split("/").some((part) => part === "." || part === ".." || part.startsWith(".")) || key.length > 512) {
    throw new Error(`Invalid storage key ${JSON.stringify(key)}`);
  }
}

