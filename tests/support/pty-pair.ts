import { spawn, type ChildProcess } from "node:child_process";
import { existsSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";

/**
 * A linked pair of pseudo-terminals made by Debian's socat: bytes written to one end come
 * out of the other, through the kernel's tty layer, like a USB serial cable. A pty ignores
 * baud rate, so line timing is the bench's own model (RECIPES.md).
 */
export async function openPtyPair(): Promise<{ a: string; b: string; close(): Promise<void> }> {
  const dir = mkdtempSync(path.join(tmpdir(), "panelproof-pty-"));
  const a = path.join(dir, "ttyA");
  const b = path.join(dir, "ttyB");
  const child: ChildProcess = spawn("socat", [`pty,raw,echo=0,link=${a}`, `pty,raw,echo=0,link=${b}`], { stdio: "ignore" });
  const failed = new Promise<never>((_, reject) => child.once("error", (err) => reject(new Error(`socat did not start: ${err.message}. Install Debian's socat.`))));
  const deadline = Date.now() + 5000;
  while (!(existsSync(a) && existsSync(b))) {
    if (Date.now() > deadline) throw new Error("socat made no pty pair within 5 s");
    await Promise.race([new Promise((r) => setTimeout(r, 20)), failed]);
  }
  return {
    a,
    b,
    async close() {
      child.kill("SIGTERM");
      await new Promise((r) => child.once("exit", r));
      rmSync(dir, { recursive: true, force: true });
    },
  };
}
