import sharp from "sharp";
import type { Request } from "express";
import { PHOTO_MAX_BYTES, PHOTO_TYPES } from "../../shared/api/panels";
import { HttpError } from "../http/errors";

export type PhotoType = (typeof PHOTO_TYPES)[number];

/** The longest side a stored photo keeps: enough to place markers, small enough to load fast. */
export const PHOTO_MAX_SIDE = 2000;

const EXTENSIONS: Record<PhotoType, string> = { "image/jpeg": "jpg", "image/png": "png", "image/webp": "webp" };

export function photoExtension(type: PhotoType): string {
  return EXTENSIONS[type];
}

/**
 * What the first bytes say the file is. The Content-Type header is the sender's claim; the magic
 * bytes are what sharp will actually read, so only they decide.
 */
export function sniffPhotoType(bytes: Uint8Array): PhotoType | null {
  const at = (i: number, ...want: number[]) => want.every((b, k) => bytes[i + k] === b);
  if (bytes.length >= 3 && at(0, 0xff, 0xd8, 0xff)) return "image/jpeg";
  if (bytes.length >= 8 && at(0, 0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a)) return "image/png";
  // RIFF....WEBP
  if (bytes.length >= 12 && at(0, 0x52, 0x49, 0x46, 0x46) && at(8, 0x57, 0x45, 0x42, 0x50)) return "image/webp";
  return null;
}

/** Reads a raw request body into memory, refusing (413) past `max` bytes. Photos are small enough. */
export async function readRawBody(req: Request, max = PHOTO_MAX_BYTES): Promise<Buffer> {
  const chunks: Buffer[] = [];
  let received = 0;
  let over = false;
  await new Promise<void>((resolve, reject) => {
    req.on("data", (chunk: Buffer) => {
      received += chunk.length;
      if (over) {
        // Keep reading (and dropping) so the client gets our answer, but not without bound.
        if (received > max * 2) req.socket.destroy();
        return;
      }
      if (received > max) {
        over = true;
        chunks.length = 0;
        return;
      }
      chunks.push(chunk);
    });
    req.on("end", () => resolve());
    req.on("error", reject);
    req.on("close", () => resolve());
  });
  if (over) {
    throw new HttpError("too_large", `The photo is over the size limit of ${max} bytes (${Math.round(max / 1024 / 1024)} MB).`, [
      { path: "body", message: `the photo is over the size limit of ${max} bytes` },
    ]);
  }
  return Buffer.concat(chunks);
}

export interface ScaledPhoto {
  type: PhotoType;
  bytes: Buffer;
  width: number;
  height: number;
}

/**
 * Checks and scales an uploaded photo: the type from its magic bytes, then sharp decodes it
 * (a file that only starts like an image is refused), turns it upright from its EXIF
 * orientation, scales it to at most 2,000 px on the long side and writes it in the same format.
 */
export async function preparePhoto(bytes: Buffer): Promise<ScaledPhoto> {
  if (bytes.length === 0) throw new HttpError("validation_failed", "body: the photo is empty", [{ path: "body", message: "the photo is empty" }]);
  const type = sniffPhotoType(bytes);
  if (!type) {
    throw new HttpError("validation_failed", "body: the photo must be a JPEG, PNG or WebP image", [
      { path: "body", message: "not a JPEG, PNG or WebP image (judged by the file's first bytes, not its name or Content-Type)" },
    ]);
  }
  try {
    let pipeline = sharp(bytes, { limitInputPixels: 100_000_000 })
      .rotate()
      .resize({ width: PHOTO_MAX_SIDE, height: PHOTO_MAX_SIDE, fit: "inside", withoutEnlargement: true });
    pipeline =
      type === "image/jpeg" ? pipeline.jpeg({ quality: 85, mozjpeg: true }) : type === "image/png" ? pipeline.png({ compressionLevel: 8 }) : pipeline.webp({ quality: 85 });
    const { data, info } = await pipeline.toBuffer({ resolveWithObject: true });
    return { type, bytes: data, width: info.width, height: info.height };
  } catch (error) {
    throw new HttpError("validation_failed", "body: the photo could not be read", [
      { path: "body", message: `the ${type.slice(6).toUpperCase()} image could not be read: ${(error as Error).message}` },
    ]);
  }
}
