import { VirtualPanelDevice, type VirtualPanelOptions } from "../../shared/virtual/panel-device";

/**
 * The device emulator (`panelproof device`, the headless run, the tests): the shared virtual
 * panel (shared/virtual/panel-device.ts) on Node's clock. Its hosts are in ./device-runner.ts.
 */
export interface PanelEmulatorOptions extends Omit<VirtualPanelOptions, "speed" | "clock"> {
  /** The replay speed, when known, so that device time follows recording time. */
  timeScale?: number;
  now?: () => number;
}

export class PanelEmulator extends VirtualPanelDevice {
  constructor(options: PanelEmulatorOptions) {
    const { timeScale, now, ...rest } = options;
    super({ ...rest, speed: timeScale, clock: now });
  }
}
