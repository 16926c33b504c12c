import { lineBytesPerSecond } from "../shared/link/bus";
import { encodeLinkFrame } from "../shared/link/codec";
import type { LinkFrame } from "../shared/link/messages";
import { LinkStreamDecoder } from "../shared/link/stream";
import { opsPerSecond, type BenchReport } from "./harness";

/**
 * The link codec against two yardsticks measured in the same run: a bare loop that only
 * touches the same bytes (what any decoder must at least do), and the line rate of a
 * 115,200 baud serial port (what the codec must comfortably outpace).
 */
export async function run(): Promise<BenchReport> {
  const update: LinkFrame = {
    address: 3,
    sequence: 7,
    message: {
      type: "value_update",
      keyframeBegin: false,
      keyframeEnd: false,
      values: Array.from({ length: 30 }, (_, i) => ({ channel: i, kind: "float" as const, value: Math.fround(i * 1.5) })),
    },
  };
  const wire = encodeLinkFrame(update);
  const batch = 1000;
  const stream = new Uint8Array(wire.length * batch);
  for (let i = 0; i < batch; i++) stream.set(wire, i * wire.length);

  const encodeRate = opsPerSecond(() => {
    for (let i = 0; i < batch; i++) encodeLinkFrame(update);
  }, batch);

  const decoder = new LinkStreamDecoder({ acceptFrom: "bench" });
  const decodeRate = opsPerSecond(() => {
    decoder.push(stream);
  }, batch);

  let sink = 0;
  const bareRate = opsPerSecond(() => {
    for (let i = 0; i < stream.length; i++) sink = (sink + stream[i]) | 0;
  }, batch);
  if (sink === 0.5) console.log(sink); // keep the loop from being optimised away

  const lineFramesPerSecond = lineBytesPerSecond(115_200) / wire.length;
  return {
    topic: "link",
    rows: [
      { metric: `encode a 30-value update (${wire.length} bytes on the wire)`, value: encodeRate, unit: "frames/s" },
      {
        metric: "stream-decode the same frames",
        value: decodeRate,
        unit: "frames/s",
        baseline: bareRate,
        ratio: decodeRate / bareRate,
        note: "baseline: a bare loop summing the same bytes",
      },
      {
        metric: "decode rate against a 115,200 baud line's frame rate",
        value: decodeRate / lineFramesPerSecond,
        unit: "x line rate",
        note: `the line carries ${lineFramesPerSecond.toFixed(1)} such frames/s`,
        target: ">= 100x (one core can serve many ports)",
        met: decodeRate / lineFramesPerSecond >= 100,
      },
    ],
  };
}
