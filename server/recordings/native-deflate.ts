import { deflateRawSync, inflateRawSync } from "node:zlib";

/**
 * Node's own zlib for segment compression on the server: raw DEFLATE like fflate's, so the
 * shared decoder reads it, at about six times fflate's speed (level 1 keeps segments within
 * ~10% of level 6's size; measured in bench/import.bench.ts).
 *
 * Compressing on another thread (Node's async zlib, or a worker of our own) was measured in
 * the import bench and kept out: on the shared two-core machine it cost more CPU in all and
 * 25-50 MB more peak memory for no steady gain in wall time.
 */
export function nativeDeflate(bytes: Uint8Array): Uint8Array {
  return deflateRawSync(bytes, { level: 1 });
}

/** Node's own zlib to read segments back (raw DEFLATE, either writer's). */
export function nativeInflate(bytes: Uint8Array): Uint8Array {
  return inflateRawSync(bytes);
}
