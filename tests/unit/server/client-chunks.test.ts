import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it, vi } from "vitest";
import { ClientPage, chunksOf } from "../../../server/client-chunks";
import { screenModuleFor } from "../../../server/preloads";

/** Shaped like Vite's build manifest (build.manifest): an entry, two screens, shared chunks. */
const manifest = {
  "index.html": { file: "assets/index-a1.js", isEntry: true, imports: ["_ui-b2.js"], css: ["assets/index-c3.css"] },
  "_ui-b2.js": { file: "assets/ui-b2.js" },
  "src/routes/RunReport.tsx": { file: "assets/RunReport-d4.js", isDynamicEntry: true, imports: ["_ui-b2.js", "index.html", "_ReportBody-e5.js"] },
  "_ReportBody-e5.js": { file: "assets/ReportBody-e5.js", imports: ["_table-f6.js", "_ui-b2.js"], css: ["assets/uPlot-g7.css"] },
  "_table-f6.js": { file: "assets/table-f6.js", imports: ["_ReportBody-e5.js"] },
  "src/routes/Panels.tsx": { file: "assets/Panels-h8.js", imports: ["_table-f6.js"] },
  "_font.woff2": { file: "assets/font-i9.woff2" },
};

const page = `<!doctype html>
<html lang="en">
  <head>
    <script type="module" crossorigin src="/assets/index-a1.js"></script>
  </head>
  <body><div id="root"></div></body>
</html>
`;

const dirs: string[] = [];
function clientDir(withManifest: unknown) {
  const dir = mkdtempSync(path.join(tmpdir(), "panelproof-client-"));
  dirs.push(dir);
  writeFileSync(path.join(dir, "index.html"), page);
  if (withManifest !== undefined) {
    mkdirSync(path.join(dir, ".vite"));
    writeFileSync(path.join(dir, ".vite", "manifest.json"), typeof withManifest === "string" ? withManifest : JSON.stringify(withManifest));
  }
  return dir;
}
afterAll(() => dirs.forEach((d) => rmSync(d, { recursive: true, force: true })));

describe("a screen's chunks named for preloading in the page", () => {
  it("lists the screen's chunk and what it imports, less what the entry loads already, cycles and all", () => {
    expect(chunksOf(manifest, "src/routes/RunReport.tsx").sort()).toEqual(["/assets/ReportBody-e5.js", "/assets/RunReport-d4.js", "/assets/table-f6.js"]);
    expect(chunksOf(manifest, "src/routes/Panels.tsx").sort()).toEqual(["/assets/Panels-h8.js", "/assets/ReportBody-e5.js", "/assets/table-f6.js"]);
    expect(chunksOf(manifest, "src/routes/Missing.tsx")).toEqual([]);
  });

  it("knows the report screens' modules, and no other page's", () => {
    expect(screenModuleFor("/w/abc/runs/r1/report")).toBe("src/routes/RunReport.tsx");
    expect(screenModuleFor("/shared/Zm9v")).toBe("src/routes/SharedReport.tsx");
    expect(screenModuleFor("/w/abc/runs")).toBeNull();
    expect(screenModuleFor("/w/abc/runs/r1/report/extra")).toBeNull();
  });

  it("adds modulepreload links to the page before </head>, and leaves other pages as built", () => {
    const client = new ClientPage(clientDir(manifest));
    const html = client.html("src/routes/RunReport.tsx");
    expect(html).toContain('<link rel="modulepreload" crossorigin href="/assets/RunReport-d4.js">');
    expect(html.indexOf("modulepreload")).toBeLessThan(html.indexOf("</head>"));
    // What the entry loads (its own chunk, the ui chunk) is not named again.
    expect(html).not.toContain('modulepreload" crossorigin href="/assets/index-a1.js');
    expect(html).not.toContain('modulepreload" crossorigin href="/assets/ui-b2.js');
    expect(client.html(null)).toBe(page);
  });

  it("sends the page as built when the manifest is missing or not a manifest, and says why for the latter", () => {
    expect(new ClientPage(clientDir(undefined)).html("src/routes/RunReport.tsx")).toBe(page);
    const warn = vi.spyOn(console, "warn").mockImplementation(() => {});
    expect(new ClientPage(clientDir({ "index.html": { file: "../../etc/passwd\"><script>" } })).html("src/routes/RunReport.tsx")).toBe(page);
    expect(warn.mock.calls[0]?.[0]).toMatch(/is not a Vite manifest/);
    expect(new ClientPage(clientDir("{not json")).html("src/routes/RunReport.tsx")).toBe(page);
    warn.mockRestore();
  });

  it("reads the build again after a rebuild", () => {
    const dir = clientDir(manifest);
    const client = new ClientPage(dir);
    expect(client.html("src/routes/RunReport.tsx")).toContain("RunReport-d4.js");
    const rebuilt = { ...manifest, "src/routes/RunReport.tsx": { ...manifest["src/routes/RunReport.tsx"], file: "assets/RunReport-zz.js" } };
    writeFileSync(path.join(dir, ".vite", "manifest.json"), JSON.stringify(rebuilt, null, 1));
    expect(client.html("src/routes/RunReport.tsx")).toContain("RunReport-zz.js");
  });
});
