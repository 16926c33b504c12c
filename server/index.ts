import { readEnv } from "./env";
import { startServer } from "./start";

const env = readEnv();
const extraOrigins = (process.env.EXTRA_ORIGINS ?? "").split(",").filter(Boolean);
const server = await startServer(env, extraOrigins);
console.log(`[panelproof] serving ${server.url}`);
if (server.fakeSmtp) console.log(`[panelproof] mail goes to the local fake SMTP server on port ${server.fakeSmtp.port}; see ${server.url}/outbox`);

let stopping = false;
async function stop(signal: string) {
  if (stopping) return;
  stopping = true;
  console.log(`[panelproof] ${signal}: stopping`);
  await server.close();
  process.exit(0);
}
process.on("SIGINT", () => void stop("SIGINT"));
process.on("SIGTERM", () => void stop("SIGTERM"));
