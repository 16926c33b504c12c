import { z } from "zod";

/** GET /api/workshops/:workshopId/bench/serial-ports: the serial ports of the machine the bench runs on. */
export const serialPortView = z.object({
  path: z.string(),
  manufacturer: z.string().nullable(),
  serialNumber: z.string().nullable(),
  vendorId: z.string().nullable(),
  productId: z.string().nullable(),
});
export type SerialPortView = z.infer<typeof serialPortView>;

export const serialPortList = z.object({
  ports: z.array(serialPortView),
  /** Why the list may be short: a pseudo-terminal (socat) or a port on another machine is typed by hand. */
  note: z.string(),
});
export type SerialPortList = z.infer<typeof serialPortList>;
