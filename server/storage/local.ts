import { createReadStream, createWriteStream } from "node:fs";
import { mkdir, rename, rm, stat } from "node:fs/promises";
import path from "node:path";
import { randomBytes } from "node:crypto";
import type { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import { assertKey, StorageNotFound, type StorageDriver } from "./types";

/** Files in a folder on this machine: the default for a builder's own desk. */
export class LocalStorage implements StorageDriver {
  readonly root: string;
  readonly location: string;

  constructor(root: string) {
    this.root = path.resolve(root);
    this.location = `local:${this.root}`;
  }

  private file(key: string): string {
    assertKey(key);
    return path.join(this.root, ...key.split("/"));
  }

  async put(key: string, body: Readable): Promise<{ bytes: number }> {
    const target = this.file(key);
    await mkdir(path.dirname(target), { recursive: true });
    // Write beside the target and rename: a reader never sees half a file, and a failed
    // upload leaves only a temp file that is removed here.
    const temp = `${target}.${randomBytes(4).toString("hex")}.part`;
    let bytes = 0;
    body.on("data", (chunk: Buffer) => (bytes += chunk.length));
    try {
      await pipeline(body, createWriteStream(temp, { flags: "wx" }));
      await rename(temp, target);
    } catch (error) {
      await rm(temp, { force: true });
      throw error;
    }
    return { bytes };
  }

  async get(key: string): Promise<Readable> {
    const file = this.file(key);
    if ((await this.size(key)) === null) throw new StorageNotFound(key);
    return createReadStream(file, { highWaterMark: 256 * 1024 });
  }

  async delete(key: string): Promise<void> {
    await rm(this.file(key), { force: true });
  }

  async exists(key: string): Promise<boolean> {
    return (await this.size(key)) !== null;
  }

  async size(key: string): Promise<number | null> {
    try {
      const s = await stat(this.file(key));
      return s.isFile() ? s.size : null;
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code === "ENOENT") return null;
      throw error;
    }
  }
}
