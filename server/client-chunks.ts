import { readFileSync, statSync } from "node:fs";
import path from "node:path";
import { z } from "zod";

/**
 * The built client's chunks a screen needs, from Vite's build manifest (`dist/.vite/manifest.json`,
 * `build.manifest` in vite.config.ts): a screen's module and every chunk it imports, less those
 * the page's entry imports already (index.html preloads those itself). The page's answer names them
 * as `<link rel="modulepreload">`, so the browser fetches and compiles a screen's code while the
 * main bundle runs, instead of after the router asks for it (docs/run-report.md, "Speed").
 */

const manifestChunk = z.object({
  // Only plain relative names ever reach the page.
  file: z.string().regex(/^[A-Za-z0-9_][A-Za-z0-9_./-]*$/),
  isEntry: z.boolean().optional(),
  imports: z.array(z.string()).optional(),
});
const manifestSchema = z.record(z.string(), manifestChunk.passthrough());
type Manifest = z.infer<typeof manifestSchema>;

/** Files (as URL paths) of `moduleSource`'s chunk and its static imports not loaded by the entry. */
export function chunksOf(manifest: Manifest, moduleSource: string): string[] {
  const reach = (start: string[], into: Set<string>) => {
    const stack = [...start];
    while (stack.length) {
      const key = stack.pop()!;
      if (into.has(key) || !manifest[key]) continue;
      into.add(key);
      stack.push(...(manifest[key].imports ?? []));
    }
  };
  const loaded = new Set<string>();
  reach(
    Object.keys(manifest).filter((k) => manifest[k].isEntry),
    loaded,
  );
  const wanted = new Set<string>();
  reach([moduleSource], wanted);
  return [...wanted]
    .filter((k) => !loaded.has(k) && manifest[k].file.endsWith(".js") && !manifest[k].file.includes(".."))
    .map((k) => `/${manifest[k].file}`);
}

/**
 * The page HTML with `<link rel="modulepreload">` for a screen's chunks, read from `clientDir`
 * again only when index.html or the manifest changed (a rebuild while the server runs). Without a
 * manifest (an older build) the page goes out as built.
 */
export class ClientPage {
  private cached: { stamp: string; html: string; manifest: Manifest | null } | null = null;
  private readonly withChunks = new Map<string, string>();

  constructor(private readonly clientDir: string) {}

  html(moduleSource: string | null): string {
    const page = this.read();
    if (!moduleSource || !page.manifest) return page.html;
    let html = this.withChunks.get(moduleSource);
    if (html === undefined) {
      const links = chunksOf(page.manifest, moduleSource).map((file) => `<link rel="modulepreload" crossorigin href="${file}">`);
      html = links.length ? page.html.replace("</head>", `  ${links.join("\n    ")}\n  </head>`) : page.html;
      this.withChunks.set(moduleSource, html);
    }
    return html;
  }

  private read() {
    const indexFile = path.join(this.clientDir, "index.html");
    const manifestFile = path.join(this.clientDir, ".vite", "manifest.json");
    const stampOf = (file: string) => {
      try {
        const s = statSync(file);
        return `${s.mtimeMs}:${s.size}`;
      } catch {
        return "none";
      }
    };
    const stamp = `${stampOf(indexFile)}|${stampOf(manifestFile)}`;
    if (this.cached?.stamp === stamp) return this.cached;
    let manifest: Manifest | null = null;
    try {
      const parsed = manifestSchema.safeParse(JSON.parse(readFileSync(manifestFile, "utf8")));
      if (parsed.success) manifest = parsed.data;
      else console.warn(`[panelproof] ${manifestFile} is not a Vite manifest (${parsed.error.issues[0]?.message}); pages go out without chunk preloads`);
    } catch {
      manifest = null; // no manifest: an older build
    }
    this.withChunks.clear();
    this.cached = { stamp, html: readFileSync(indexFile, "utf8"), manifest };
    return this.cached;
  }
}
