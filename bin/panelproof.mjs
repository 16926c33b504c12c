#!/usr/bin/env node
// The `panelproof` command: runs server/cli/panelproof.ts through tsx, so the CLI uses the very
// same TypeScript code as the server (parser, segmenter, scenario generator, capture session).
import { spawn } from "node:child_process";
import { createRequire } from "node:module";
import { fileURLToPath, pathToFileURL } from "node:url";

const require = createRequire(import.meta.url);
// Resolved from this package, not from the caller's folder, so `npx panelproof` works anywhere.
const tsx = pathToFileURL(require.resolve("tsx")).href;
const cli = fileURLToPath(new URL("../server/cli/panelproof.ts", import.meta.url));
const child = spawn(process.execPath, ["--import", tsx, cli, ...process.argv.slice(2)], { stdio: "inherit" });
for (const signal of ["SIGINT", "SIGTERM"]) process.on(signal, () => child.kill(signal));
child.on("exit", (code, signal) => process.exit(code ?? (signal ? 1 : 0)));
