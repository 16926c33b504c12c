import { randomUUID } from "node:crypto";
import type { AddressInfo } from "node:net";
import { simpleParser, type AddressObject } from "mailparser";
import { SMTPServer } from "smtp-server";
import type { Database } from "../db/client";
import { outboxMessage } from "../db/schema";

export interface FakeSmtp {
  port: number;
  close(): Promise<void>;
}

const MAX_MESSAGE_BYTES = 5 * 1024 * 1024;

function addresses(field: AddressObject | AddressObject[] | undefined): string[] {
  const list = Array.isArray(field) ? field : field ? [field] : [];
  return list.flatMap((a) => a.value.map((v) => v.address ?? "")).filter(Boolean);
}

/**
 * A real SMTP server on loopback that keeps every message in PostgreSQL for the
 * Outbox page. Mail goes through nodemailer and the SMTP conversation exactly as
 * it would to a real host.
 */
export async function startFakeSmtp(db: Database, port: number, host = "127.0.0.1"): Promise<FakeSmtp> {
  const server = new SMTPServer({
    authOptional: true,
    // The bundled certificate has expired, so STARTTLS would break nodemailer.
    disabledCommands: ["STARTTLS", "AUTH"],
    size: MAX_MESSAGE_BYTES,
    logger: false,
    onData(stream, _session, callback) {
      simpleParser(stream)
        .then(async (parsed) => {
          await db.insert(outboxMessage).values({
            id: randomUUID(),
            fromAddress: addresses(parsed.from)[0] ?? "",
            toAddresses: addresses(parsed.to),
            subject: parsed.subject ?? "",
            text: parsed.text ?? "",
            html: typeof parsed.html === "string" ? parsed.html : null,
          });
          callback();
        })
        .catch((err: Error) => callback(err));
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(port, host, () => resolve());
  });
  const address = server.server.address() as AddressInfo;
  return {
    port: address.port,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
