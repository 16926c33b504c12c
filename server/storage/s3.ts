import type { Readable } from "node:stream";
import {
  AbortMultipartUploadCommand,
  CompleteMultipartUploadCommand,
  CreateMultipartUploadCommand,
  DeleteObjectCommand,
  GetObjectCommand,
  HeadObjectCommand,
  PutObjectCommand,
  S3Client,
  UploadPartCommand,
} from "@aws-sdk/client-s3";
import { assertKey, StorageNotFound, type StorageDriver } from "./types";

export interface S3StorageOptions {
  endpoint?: string;
  bucket: string;
  accessKeyId: string;
  secretAccessKey: string;
  region: string;
  forcePathStyle: boolean;
  /** Bytes per multipart part; S3 needs at least 5 MiB for every part but the last. */
  partBytes?: number;
}

/**
 * An S3-compatible bucket (AWS, or a self-hosted server). Uploads of unknown length are sent
 * as multipart uploads of fixed-size parts, so memory stays one part whatever the file size and
 * no part is sent with the SDK's aws-chunked stream framing.
 */
export class S3Storage implements StorageDriver {
  readonly client: S3Client;
  readonly bucket: string;
  readonly location: string;
  private readonly partBytes: number;

  constructor(options: S3StorageOptions) {
    this.bucket = options.bucket;
    this.partBytes = Math.max(options.partBytes ?? 8 * 1024 * 1024, 5 * 1024 * 1024);
    this.location = `s3:${options.endpoint ?? "aws"}/${options.bucket}`;
    this.client = new S3Client({
      endpoint: options.endpoint,
      region: options.region,
      forcePathStyle: options.forcePathStyle,
      credentials: { accessKeyId: options.accessKeyId, secretAccessKey: options.secretAccessKey },
      // With the SDK's default checksums some S3-compatible servers store the aws-chunked
      // framing inside the object (silently corrupt). Only send checksums when S3 requires them.
      requestChecksumCalculation: "WHEN_REQUIRED",
      responseChecksumValidation: "WHEN_REQUIRED",
    });
  }

  async put(key: string, body: Readable, contentType = "application/octet-stream"): Promise<{ bytes: number }> {
    assertKey(key);
    let uploadId: string | undefined;
    const parts: { ETag: string; PartNumber: number }[] = [];
    let pending: Buffer[] = [];
    let pendingBytes = 0;
    let total = 0;
    const sendPart = async (final: boolean) => {
      const data = Buffer.concat(pending, pendingBytes);
      pending = [];
      pendingBytes = 0;
      if (!uploadId) {
        if (final) {
          // Small file: one plain request with a known length.
          await this.client.send(
            new PutObjectCommand({ Bucket: this.bucket, Key: key, Body: data, ContentLength: data.length, ContentType: contentType }),
          );
          return;
        }
        const created = await this.client.send(new CreateMultipartUploadCommand({ Bucket: this.bucket, Key: key, ContentType: contentType }));
        uploadId = created.UploadId!;
      }
      if (final && data.length === 0 && parts.length > 0) return;
      const PartNumber = parts.length + 1;
      const sent = await this.client.send(
        new UploadPartCommand({ Bucket: this.bucket, Key: key, UploadId: uploadId, PartNumber, Body: data, ContentLength: data.length }),
      );
      parts.push({ ETag: sent.ETag!, PartNumber });
    };
    try {
      for await (const chunk of body as AsyncIterable<Buffer>) {
        pending.push(chunk);
        pendingBytes += chunk.length;
        total += chunk.length;
        if (pendingBytes >= this.partBytes) await sendPart(false);
      }
      await sendPart(true);
      if (uploadId) {
        await this.client.send(
          new CompleteMultipartUploadCommand({ Bucket: this.bucket, Key: key, UploadId: uploadId, MultipartUpload: { Parts: parts } }),
        );
      }
      return { bytes: total };
    } catch (error) {
      if (uploadId) {
        await this.client.send(new AbortMultipartUploadCommand({ Bucket: this.bucket, Key: key, UploadId: uploadId })).catch(() => {});
      }
      throw error;
    }
  }

  async get(key: string): Promise<Readable> {
    assertKey(key);
    try {
      const got = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: key }));
      return got.Body as Readable;
    } catch (error) {
      if (isMissing(error)) throw new StorageNotFound(key);
      throw error;
    }
  }

  async delete(key: string): Promise<void> {
    assertKey(key);
    await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: key }));
  }

  async exists(key: string): Promise<boolean> {
    return (await this.size(key)) !== null;
  }

  async size(key: string): Promise<number | null> {
    assertKey(key);
    try {
      const head = await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: key }));
      return head.ContentLength ?? 0;
    } catch (error) {
      if (isMissing(error)) return null;
      throw error;
    }
  }
}

function isMissing(error: unknown): boolean {
  const e = error as { name?: string; $metadata?: { httpStatusCode?: number } };
  return e?.name === "NoSuchKey" || e?.name === "NotFound" || e?.$metadata?.httpStatusCode === 404;
}
