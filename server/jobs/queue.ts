import { createHash } from "node:crypto";
import PgBoss from "pg-boss";
import type { Database } from "../db/client";
import type { StorageDriver } from "../storage";
import { runImport } from "./import-recording";

export interface JobsOptions {
  databaseUrl: string;
  db: Database;
  storage: StorageDriver;
  maxUploadBytes: number;
  pollingIntervalSeconds: number;
}

/**
 * Background work in a PostgreSQL-backed queue (pg-boss). Any server process may take any
 * import, as long as it reaches the same stored files: the queue's name carries a fingerprint
 * of the storage location, so several servers sharing one database (stateless web instances,
 * or test servers each with its own temporary folder) only ever take imports they can read.
 */
export class Jobs {
  readonly boss: PgBoss;
  readonly importQueue: string;
  private workerId: string | null = null;
  private readonly running = new Set<Promise<void>>();

  constructor(private readonly options: JobsOptions) {
    this.boss = new PgBoss({
      connectionString: options.databaseUrl,
      max: 3,
      application_name: "panelproof-jobs",
      // Completed jobs only matter for a day; import_job keeps the history builders see.
      deleteAfterDays: 1,
    });
    // pg-boss reports connection trouble as events; an unhandled "error" event would end the process.
    this.boss.on("error", (error) => console.error("[jobs]", error.message));
    const fingerprint = createHash("sha256").update(options.storage.location).digest("hex").slice(0, 12);
    this.importQueue = `recording-import-${fingerprint}`;
  }

  async start(): Promise<void> {
    await this.boss.start();
    // An import is all or nothing and records its own failure; a retry only helps when the
    // process died mid-import (the job then expires and runs again from the start).
    await createQueueRetrying(() => this.boss.createQueue(this.importQueue, { name: this.importQueue, retryLimit: 1, expireInSeconds: 60 * 60 }));
    this.workerId = await this.boss.work<{ importId: string }>(
      this.importQueue,
      { pollingIntervalSeconds: this.options.pollingIntervalSeconds, batchSize: 1 },
      async ([job]) => {
        const work = runImport(
          { db: this.options.db, storage: this.options.storage, maxBytes: this.options.maxUploadBytes },
          job.data.importId,
        );
        this.running.add(work);
        try {
          await work;
        } finally {
          this.running.delete(work);
        }
      },
    );
  }

  async enqueueImport(importId: string): Promise<void> {
    await this.boss.send(this.importQueue, { importId }, { singletonKey: importId });
    // Wake this process's own worker now instead of at its next poll.
    if (this.workerId) this.boss.notifyWorker(this.workerId);
  }

  /** Lets running imports finish (they are one transaction each), then stops polling. */
  async stop(): Promise<void> {
    await this.boss.stop({ graceful: true, wait: true, timeout: 30_000 });
    await Promise.allSettled([...this.running]);
  }
}

/**
 * pg-boss makes a table partition per queue; two processes doing so at the same moment can
 * deadlock (PostgreSQL aborts one with 40P01, seen when test servers start together). The
 * aborted one simply tries again after a short random pause.
 */
async function createQueueRetrying(create: () => Promise<void>, attempts = 8): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    try {
      await create();
      return;
    } catch (err) {
      const code = (err as { code?: string }).code;
      if (attempt >= attempts || (code !== "40P01" && code !== "55P03")) throw err;
      await new Promise((r) => setTimeout(r, 50 + Math.random() * 250 * attempt));
    }
  }
}
