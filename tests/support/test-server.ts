import { readEnv } from "../../server/env";
import { startServer, type RunningServer } from "../../server/start";

/**
 * Starts the whole app in this process against the real test database, with its own
 * fake SMTP server on a free port: mail really travels over SMTP.
 */
export async function startTestServer(): Promise<RunningServer> {
  const url = process.env.TEST_DATABASE_URL;
  if (!url) throw new Error("TEST_DATABASE_URL is not set: run the tests through `npm test`, which starts a test database.");
  return startServer(
    readEnv({
      NODE_ENV: "test",
      DATABASE_URL: url,
      HOST: "127.0.0.1",
      PORT: "0",
      AUTH_SECRET: "integration-tests-only-secret-0123456789abcdef",
      MAIL_FAKE_PORT: "0",
    }),
  );
}

/** A unique address per test run, so tests sharing one database never collide. */
export function uniqueEmail(who: string): string {
  return `${who}-${Date.now().toString(36)}-${Math.random().toString(36).slice(2, 8)}@panelproof.example`;
}

export interface Reply<T = any> {
  status: number;
  body: T;
  headers: Headers;
}

/** One person's HTTP client: keeps their cookies and sends the Origin a browser would. */
export class Visitor {
  private cookies = new Map<string, string>();
  constructor(readonly baseUrl: string) {}

  async request<T = any>(method: string, path: string, body?: unknown, extraHeaders: Record<string, string> = {}): Promise<Reply<T>> {
    const headers: Record<string, string> = { origin: this.baseUrl, ...extraHeaders };
    if (this.cookies.size) headers.cookie = [...this.cookies].map(([k, v]) => `${k}=${v}`).join("; ");
    if (body !== undefined) headers["content-type"] = "application/json";
    const response = await fetch(this.baseUrl + path, {
      method,
      headers,
      body: body === undefined ? undefined : typeof body === "string" ? body : JSON.stringify(body),
      redirect: "manual",
    });
    for (const line of response.headers.getSetCookie()) {
      const [pair] = line.split(";");
      const eq = pair.indexOf("=");
      const name = pair.slice(0, eq).trim();
      const value = pair.slice(eq + 1).trim();
      if (value === "" || /max-age=0/i.test(line)) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
    const text = await response.text();
    let parsed: unknown = text;
    try {
      parsed = text ? JSON.parse(text) : null;
    } catch {
      /* not JSON: keep the text */
    }
    return { status: response.status, body: parsed as T, headers: response.headers };
  }

  get = <T = any>(path: string) => this.request<T>("GET", path);
  post = <T = any>(path: string, body: unknown = {}) => this.request<T>("POST", path, body);
  patch = <T = any>(path: string, body: unknown) => this.request<T>("PATCH", path, body);
  delete = <T = any>(path: string) => this.request<T>("DELETE", path);

  async signUp(name: string, email: string, password = "correct-horse-battery") {
    const reply = await this.post("/api/auth/sign-up/email", { name, email, password });
    if (reply.status !== 200) throw new Error(`sign-up failed: ${reply.status} ${JSON.stringify(reply.body)}`);
    return reply.body.user as { id: string; email: string };
  }

  async signIn(email: string, password = "correct-horse-battery") {
    return this.post("/api/auth/sign-in/email", { email, password });
  }
}

/** Waits for the fake SMTP server to have caught a message to `to` whose subject matches. */
export async function waitForMail(visitor: Visitor, to: string, subject: RegExp, timeoutMs = 5000) {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const reply = await visitor.get(`/api/outbox?to=${encodeURIComponent(to)}`);
    const found = (reply.body as { subject: string; text: string; html: string | null }[]).find((m) => subject.test(m.subject));
    if (found) return found;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`no mail to ${to} matching ${subject} within ${timeoutMs} ms`);
}

export function firstLink(text: string): string {
  const match = text.match(/https?:\/\/\S+/);
  if (!match) throw new Error(`no link in: ${text}`);
  return match[0];
}
