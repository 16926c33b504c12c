import type { IncomingMessage, Server } from "node:http";
import type { Duplex } from "node:stream";

export type UpgradeHandler = (request: IncomingMessage, socket: Duplex, head: Buffer, url: URL) => void;

/**
 * One HTTP server, several WebSocket endpoints: each feature (capture, bench watchers,
 * network panels) registers a path prefix and handles its own upgrades, typically with a
 * `new WebSocketServer({ noServer: true })`. Unknown paths are refused with 404.
 */
export class UpgradeRouter {
  private readonly routes: { prefix: string; handle: UpgradeHandler }[] = [];

  add(prefix: string, handle: UpgradeHandler) {
    if (this.routes.some((r) => r.prefix === prefix)) throw new Error(`WebSocket path ${prefix} is registered twice`);
    this.routes.push({ prefix, handle });
    // Longest prefix first, so /ws/bench/panels wins over /ws/bench.
    this.routes.sort((a, b) => b.prefix.length - a.prefix.length);
  }

  attach(server: Server) {
    server.on("upgrade", (request: IncomingMessage, socket: Duplex, head: Buffer) => {
      socket.on("error", () => socket.destroy());
      let url: URL;
      try {
        url = new URL(request.url ?? "/", "http://upgrade.invalid");
      } catch {
        return refuse(socket, 400, "Bad Request");
      }
      const route = this.routes.find((r) => url.pathname === r.prefix || url.pathname.startsWith(`${r.prefix}/`));
      if (!route) return refuse(socket, 404, "Not Found");
      route.handle(request, socket, head, url);
    });
  }
}

/** Refuses an upgrade before it becomes a WebSocket, with a plain HTTP status. */
export function refuse(socket: Duplex, status: number, reason: string) {
  socket.write(`HTTP/1.1 ${status} ${reason}\r\nConnection: close\r\nContent-Length: 0\r\n\r\n`);
  socket.destroy();
}
