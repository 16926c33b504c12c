import type { ReactNode } from "react";
import { Link } from "react-router";
import { Gauge } from "./Gauge";

/** The frame around sign-in, sign-up and password pages: the product's name and one sentence of what it does. */
export function AuthFrame({ title, children, foot }: { title: string; children: ReactNode; foot?: ReactNode }) {
  return (
    <div className="flex min-h-full items-start justify-center px-4 py-12 sm:py-20">
      <div className="w-full max-w-md">
        <Link to="/" className="mb-8 flex items-center gap-3 text-ink no-underline">
          <Gauge className="h-10 w-10" />
          <span>
            <span className="block text-xl font-bold tracking-tight">Panelproof</span>
            <span className="block text-sm text-ink-soft">Replay a flight into your panel and see what it gets wrong.</span>
          </span>
        </Link>
        <div className="rounded-lg border border-rule bg-card p-6 shadow-sm">
          <h1 className="mb-5 text-xl font-semibold">{title}</h1>
          {children}
        </div>
        {foot && <div className="mt-4 text-sm text-ink-soft">{foot}</div>}
      </div>
    </div>
  );
}
