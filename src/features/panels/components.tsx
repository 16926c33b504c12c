import type { ReactNode } from "react";
import type { ApiIssue } from "../../../shared/api/errors";
import { ApiError } from "../../lib/api";

/** Small pieces shared by the panel screens. Status is a word and a shape, never colour alone. */

export function Mark({ glyph, word, tone = "text-ink", children }: { glyph: string; word: string; tone?: string; children?: ReactNode }) {
  return (
    <span className={`inline-flex items-baseline gap-1.5 ${tone}`}>
      <span aria-hidden="true" className="font-mono">
        {glyph}
      </span>
      <span className="font-semibold">{word}</span>
      {children && <span className="text-ink-soft">{children}</span>}
    </span>
  );
}

/** A refusal with every field path the server named. */
export function ProblemList({ error, title = "Not done" }: { error: unknown; title?: string }) {
  if (!error) return null;
  const issues: ApiIssue[] = error instanceof ApiError ? error.issues : [];
  const message = error instanceof Error ? error.message : String(error);
  return (
    <div role="alert" className="rounded-md border border-bad/40 bg-bad/5 px-3 py-2 text-sm text-bad">
      <p>
        <span aria-hidden="true" className="mr-1 font-mono">▲</span>
        <span className="font-semibold">{title}: </span>
        {issues.length > 1 ? `${issues.length} problems.` : message}
      </p>
      {issues.length > 1 && (
        <ul className="mt-1 list-disc pl-5">
          {issues.slice(0, 30).map((i, k) => (
            <li key={k}>
              <span className="font-mono text-xs">{i.path}</span>: {i.message}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

/** A download link styled as a button: the browser saves the file itself. */
export function FileLink({ href, children, testId }: { href: string; children: ReactNode; testId?: string }) {
  return (
    <a
      href={href}
      download
      data-testid={testId}
      className="inline-flex items-center justify-center gap-2 rounded-md border border-rule bg-card px-3.5 py-2 text-sm font-semibold text-ink no-underline hover:bg-paper"
    >
      {children}
    </a>
  );
}

/** Turns a name into a definition identifier: `Left glareshield` -> `left-glareshield`. */
export function slugify(name: string, max = 40): string {
  const s = name
    .toLowerCase()
    .normalize("NFKD")
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, max)
    .replace(/-+$/, "");
  return /^[a-z]/.test(s) ? s : `p-${s}`.slice(0, max).replace(/-+$/, "") || "panel";
}

export const formatMs = (ms: number) => {
  const s = Math.floor(ms / 1000);
  const m = Math.floor(s / 60);
  return `${String(m).padStart(2, "0")}:${String(s % 60).padStart(2, "0")}.${String(Math.floor(ms % 1000)).padStart(3, "0").slice(0, 1)}`;
};
