import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { serialPortList } from "../../shared/api/bench";
import { startBench, type Bench } from "./recordings-support";

/**
 * The bench machine's serial ports (issue 5: "ports listed in the UI"): builders and owners
 * see them for the link form; viewers are refused, other workshops' members get 404 and
 * anonymous visitors 401. What is listed depends on the machine (often nothing in a container),
 * so the check is the answer's shape, not its length.
 */
let bench: Bench;
let url: string;

beforeAll(async () => {
  bench = await startBench();
  url = `/api/workshops/${bench.workshopId}/bench/serial-ports`;
}, 60_000);
afterAll(async () => {
  await bench?.close();
});

describe("serial ports of the bench machine", () => {
  it("are listed for builders and owners, with a note on ports that cannot be listed", async () => {
    for (const who of ["owner", "builder"] as const) {
      const reply = await bench.visitors[who].get(url);
      expect(reply.status).toBe(200);
      const parsed = serialPortList.parse(reply.body);
      expect(parsed.note).toMatch(/pseudo-terminal/);
      for (const p of parsed.ports) expect(p.path.length).toBeGreaterThan(0);
    }
  });

  it("are refused to viewers (403), other workshops (404) and anonymous visitors (401)", async () => {
    expect((await bench.visitors.viewer.get(url)).status).toBe(403);
    expect((await bench.visitors.outsider.get(url)).status).toBe(404);
    expect((await bench.visitors.anonymous.get(url)).status).toBe(401);
  });
});
