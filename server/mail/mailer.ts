import nodemailer from "nodemailer";

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html: string;
}

export interface Mailer {
  send(mail: OutgoingMail): Promise<void>;
  close(): void;
}

export interface SmtpSettings {
  host: string;
  port: number;
  secure: boolean;
  user?: string;
  password?: string;
  from: string;
  /** The local fake speaks plain SMTP only (its bundled certificate has expired). */
  plain?: boolean;
}

/** Sends over SMTP: to the local fake in development and tests, to a real host by configuration. */
export function createSmtpMailer(settings: SmtpSettings): Mailer {
  const transport = nodemailer.createTransport({
    host: settings.host,
    port: settings.port,
    secure: settings.secure,
    ignoreTLS: settings.plain ?? false,
    auth: settings.user ? { user: settings.user, pass: settings.password ?? "" } : undefined,
  });
  return {
    async send(mail) {
      await transport.sendMail({ from: settings.from, ...mail });
    },
    close() {
      transport.close();
    },
  };
}
