/** A monotonic source of milliseconds: performance.now() in production, a hand-driven clock in tests. */
export interface WallClock {
  now(): number;
}

export const performanceClock: WallClock = { now: () => performance.now() };

/** A wall clock that moves only when told to: for tests and the synchronous replayer. */
export class ManualClock implements WallClock {
  constructor(private time = 0) {}
  now() {
    return this.time;
  }
  advance(ms: number) {
    if (!(ms >= 0)) throw new RangeError(`a clock only moves forward (asked ${ms} ms)`);
    this.time += ms;
  }
}

export const MIN_SPEED = 0.1;
export const MAX_SPEED = 16;

export function isValidSpeed(speed: number): boolean {
  return Number.isFinite(speed) && speed >= MIN_SPEED && speed <= MAX_SPEED;
}

/**
 * The recording's clock during a replay. Virtual time advances by wall time elapsed times
 * speed, accumulated from an anchor that moves at every speed change, pause and seek, so
 * changing speed never makes the replay drift from where it was.
 */
export class VirtualClock {
  private anchorWall: number;
  private anchorVirtual = 0;
  private currentSpeed = 1;
  private running = false;

  constructor(private readonly wall: WallClock) {
    this.anchorWall = wall.now();
  }

  /** Virtual milliseconds since the recording's start. */
  now(): number {
    if (!this.running) return this.anchorVirtual;
    return this.anchorVirtual + (this.wall.now() - this.anchorWall) * this.currentSpeed;
  }

  get speed() {
    return this.currentSpeed;
  }

  get isRunning() {
    return this.running;
  }

  private reanchor() {
    this.anchorVirtual = this.now();
    this.anchorWall = this.wall.now();
  }

  start() {
    if (this.running) return;
    this.anchorWall = this.wall.now();
    this.running = true;
  }

  pause() {
    if (!this.running) return;
    this.reanchor();
    this.running = false;
  }

  setSpeed(speed: number) {
    if (!isValidSpeed(speed)) throw new RangeError(`speed ${speed} is outside ${MIN_SPEED}x to ${MAX_SPEED}x`);
    this.reanchor();
    this.currentSpeed = speed;
  }

  seek(virtualMs: number) {
    this.anchorVirtual = virtualMs;
    this.anchorWall = this.wall.now();
  }

  /** Wall milliseconds from now until the virtual clock reads `virtualMs` (Infinity when paused). */
  wallDelayUntil(virtualMs: number): number {
    if (!this.running) return Infinity;
    return Math.max(0, (virtualMs - this.now()) / this.currentSpeed);
  }
}
