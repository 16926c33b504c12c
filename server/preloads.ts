/** An id or token as the app makes them; anything else is never put in a header. */
const SAFE_SEGMENT = /^[A-Za-z0-9_-]{1,128}$/;

/**
 * The API answers a page will ask for first, named in the page's own answer (a `Link: rel=preload`
 * header): the browser fetches them while it reads the page's code, and the app's own requests
 * then find them on their way. The report page's first visit asked for its report only after the
 * main bundle ran (docs/run-report.md, "Speed").
 */
export function preloadsFor(pagePath: string): string[] {
  const parts = pagePath.split("/").filter(Boolean);
  if (parts[0] === "shared") return parts.length === 2 && SAFE_SEGMENT.test(parts[1]) ? [`/api/shared/${parts[1]}`] : [];
  if (parts[0] !== "w" || !parts[1] || !SAFE_SEGMENT.test(parts[1])) return [];
  const workshop = parts[1];
  const out = ["/api/me", `/api/workshops/${workshop}`];
  if (parts[2] === "runs" && parts[3] && SAFE_SEGMENT.test(parts[3]) && parts[4] === "report" && parts.length === 5) out.push(`/api/workshops/${workshop}/runs/${parts[3]}/export.json`);
  return out;
}

/**
 * The source module of the screen at `pagePath` whose code the page's answer names for preloading
 * (server/client-chunks.ts), or null. Only the report screens, which have a speed target: the
 * routes themselves live in src/main.tsx.
 */
export function screenModuleFor(pagePath: string): string | null {
  const parts = pagePath.split("/").filter(Boolean);
  if (parts[0] === "shared" && parts.length === 2) return "src/routes/SharedReport.tsx";
  if (parts[0] === "w" && parts[2] === "runs" && parts[4] === "report" && parts.length === 5) return "src/routes/RunReport.tsx";
  return null;
}
