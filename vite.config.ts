import tailwindcss from "@tailwindcss/vite";
import react from "@vitejs/plugin-react";
import { defineConfig } from "vite";

// `npm run dev` serves the client with hot reload and forwards /api to a server
// started with `npm start` (or `npm run serve`) on port 5178.
export default defineConfig({
  plugins: [react(), tailwindcss()],
  // The manifest lets the server name a screen's chunks in the page's answer (server/client-chunks.ts).
  build: { outDir: "dist", sourcemap: true, chunkSizeWarningLimit: 700, manifest: true },
  server: {
    host: "127.0.0.1",
    port: 5173,
    proxy: { "/api": { target: "http://127.0.0.1:5178", ws: true } },
  },
});
