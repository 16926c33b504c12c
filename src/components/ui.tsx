import type { ButtonHTMLAttributes, InputHTMLAttributes, ReactNode, SelectHTMLAttributes } from "react";
import { useId } from "react";

type Tone = "primary" | "plain" | "danger";

const TONES: Record<Tone, string> = {
  primary: "bg-bezel text-dial hover:bg-bezel-soft border-bezel",
  plain: "bg-card text-ink hover:bg-paper border-rule",
  danger: "bg-card text-bad hover:bg-paper border-bad/50",
};

export function Button({ tone = "plain", className = "", ...props }: ButtonHTMLAttributes<HTMLButtonElement> & { tone?: Tone }) {
  return (
    <button
      {...props}
      className={`inline-flex items-center justify-center gap-2 rounded-md border px-3.5 py-2 text-sm font-semibold transition-colors disabled:cursor-not-allowed disabled:opacity-50 ${TONES[tone]} ${className}`}
    />
  );
}

export function Field({
  label,
  hint,
  error,
  ...props
}: InputHTMLAttributes<HTMLInputElement> & { label: string; hint?: string; error?: string }) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-semibold text-ink">
        {label}
      </label>
      <input
        id={id}
        {...props}
        aria-invalid={error ? true : undefined}
        aria-describedby={error || hint ? `${id}-note` : undefined}
        className={`rounded-md border bg-card px-3 py-2 text-ink placeholder:text-ink-soft/60 ${error ? "border-bad" : "border-rule"}`}
      />
      {(error || hint) && (
        <p id={`${id}-note`} className={`text-sm ${error ? "text-bad" : "text-ink-soft"}`}>
          {error ? `✕ ${error}` : hint}
        </p>
      )}
    </div>
  );
}

export function Select({ label, children, ...props }: SelectHTMLAttributes<HTMLSelectElement> & { label: string; children: ReactNode }) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-semibold text-ink">
        {label}
      </label>
      <select id={id} {...props} className="rounded-md border border-rule bg-card px-3 py-2 text-ink">
        {children}
      </select>
    </div>
  );
}

/** A refusal or failure, said in words with a mark, never by colour alone. */
export function ErrorNote({ error }: { error: unknown }) {
  if (!error) return null;
  const message = error instanceof Error ? error.message : String(error);
  return (
    <p role="alert" className="rounded-md border border-bad/40 bg-bad/5 px-3 py-2 text-sm text-bad">
      <span aria-hidden="true" className="mr-1 font-mono">▲</span>
      <span className="font-semibold">Not done: </span>
      {message}
    </p>
  );
}

export function DoneNote({ children }: { children: ReactNode }) {
  return (
    <p role="status" className="rounded-md border border-good/40 bg-good/5 px-3 py-2 text-sm text-good">
      <span aria-hidden="true" className="mr-1 font-mono">●</span>
      {children}
    </p>
  );
}

export function Card({ title, children, aside }: { title?: ReactNode; children: ReactNode; aside?: ReactNode }) {
  return (
    <section className="rounded-lg border border-rule bg-card p-5 shadow-[0_1px_0_#0000000d]">
      {(title || aside) && (
        <header className="mb-3 flex items-baseline justify-between gap-4">
          {title && <h2 className="text-lg font-semibold">{title}</h2>}
          {aside}
        </header>
      )}
      {children}
    </section>
  );
}

/** A role printed like an engraved legend: a word in capitals inside a rule, never a colour code. */
export function RoleTag({ role }: { role: string }) {
  return (
    <span className="inline-block rounded-sm border border-ink/40 px-1.5 py-0.5 font-mono text-[11px] tracking-widest text-ink uppercase">
      {role}
    </span>
  );
}

export function PageTitle({ children, sub }: { children: ReactNode; sub?: ReactNode }) {
  return (
    <div className="mb-6">
      <h1 className="text-2xl font-bold tracking-tight">{children}</h1>
      {sub && <p className="mt-1 text-ink-soft">{sub}</p>}
    </div>
  );
}

export function Loading({ what = "Loading" }: { what?: string }) {
  return (
    <p className="font-mono text-sm text-ink-soft" role="status">
      {what}…
    </p>
  );
}
