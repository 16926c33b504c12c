/**
 * Time-optimal point-to-point moves of a stepper pointer under a speed limit and an acceleration
 * limit (bang-bang control): accelerate at the limit, cruise at top speed if the move is long
 * enough (trapezoidal profile) or turn straight into braking if not (triangular profile), and brake
 * at the limit to stop exactly on the target. Positions are in steps, speeds in steps/s,
 * accelerations in steps/s^2; any consistent unit works (degrees, degrees/s, degrees/s^2).
 */

export interface MoveLimits {
  /** Top speed, > 0. */
  maxSpeed: number;
  /** Acceleration and braking, > 0. */
  acceleration: number;
}

/** A stretch of constant acceleration. */
export interface MovePhase {
  startTime: number;
  duration: number;
  startPosition: number;
  startVelocity: number;
  acceleration: number;
}

export interface MovePlan {
  from: number;
  to: number;
  initialVelocity: number;
  /** Time from the start of the move until the pointer rests on the target. */
  duration: number;
  /** Highest speed reached (magnitude). */
  peakSpeed: number;
  phases: MovePhase[];
}

function assertLimits(limits: MoveLimits): void {
  if (!(Number.isFinite(limits.maxSpeed) && limits.maxSpeed > 0)) {
    throw new RangeError(`maxSpeed must be a finite number above 0, got ${limits.maxSpeed}`);
  }
  if (!(Number.isFinite(limits.acceleration) && limits.acceleration > 0)) {
    throw new RangeError(`acceleration must be a finite number above 0, got ${limits.acceleration}`);
  }
}

/**
 * The fastest way from `from` (moving at `initialVelocity`) to rest on `to`.
 *
 * From rest over a distance d with top speed v and acceleration a:
 *  - if d >= v^2 / a (room to reach top speed and brake, each taking v^2 / 2a), a trapezoid lasting
 *    d / v + v / a;
 *  - otherwise a triangle peaking at sqrt(a d) and lasting 2 sqrt(d / a).
 * A pointer already moving first sheds any speed above the limit; if it is moving away from the
 * target, or too fast to stop before it, it brakes to a stop first and then moves from rest.
 */
export function planMove(from: number, to: number, limits: MoveLimits, initialVelocity = 0): MovePlan {
  assertLimits(limits);
  const { maxSpeed, acceleration } = limits;
  const phases: MovePhase[] = [];
  let time = 0;
  let position = from;
  let velocity = initialVelocity;
  let peakSpeed = Math.abs(initialVelocity);
  const addPhase = (duration: number, phaseAcceleration: number) => {
    if (!(duration > 0)) return;
    phases.push({ startTime: time, duration, startPosition: position, startVelocity: velocity, acceleration: phaseAcceleration });
    position += velocity * duration + 0.5 * phaseAcceleration * duration * duration;
    velocity += phaseAcceleration * duration;
    time += duration;
    peakSpeed = Math.max(peakSpeed, Math.abs(velocity));
  };

  if (Math.abs(velocity) > maxSpeed) {
    const sign = Math.sign(velocity);
    addPhase((Math.abs(velocity) - maxSpeed) / acceleration, -sign * acceleration);
    velocity = sign * maxSpeed;
  }
  const remaining = to - position;
  const stoppingDistance = (velocity * velocity) / (2 * acceleration);
  if (velocity !== 0 && (Math.sign(velocity) !== Math.sign(remaining) || stoppingDistance > Math.abs(remaining))) {
    addPhase(Math.abs(velocity) / acceleration, -Math.sign(velocity) * acceleration);
    velocity = 0;
  }

  const distance = Math.abs(to - position);
  const direction = Math.sign(to - position);
  const speed = Math.abs(velocity);
  if (distance > 0) {
    // Accelerating from `speed` to a peak and braking to rest covers (peak^2 - speed^2)/2a + peak^2/2a.
    const triangularPeak = Math.sqrt(acceleration * distance + (speed * speed) / 2);
    if (triangularPeak <= maxSpeed) {
      addPhase((triangularPeak - speed) / acceleration, direction * acceleration);
      addPhase(triangularPeak / acceleration, -direction * acceleration);
    } else {
      const rampDistance = (maxSpeed * maxSpeed - speed * speed) / (2 * acceleration) + (maxSpeed * maxSpeed) / (2 * acceleration);
      addPhase((maxSpeed - speed) / acceleration, direction * acceleration);
      addPhase((distance - rampDistance) / maxSpeed, 0);
      addPhase(maxSpeed / acceleration, -direction * acceleration);
    }
  }
  return { from, to, initialVelocity, duration: time, peakSpeed, phases };
}

function phaseAt(plan: MovePlan, t: number): MovePhase | undefined {
  for (let i = plan.phases.length - 1; i >= 0; i--) {
    if (t >= plan.phases[i].startTime) return plan.phases[i];
  }
  return undefined;
}

/** Where the pointer is `t` seconds after the move starts; exactly the target once the move is done. */
export function positionAt(plan: MovePlan, t: number): number {
  if (t <= 0) return plan.from;
  if (t >= plan.duration) return plan.to;
  const phase = phaseAt(plan, t);
  if (!phase) return plan.from;
  const dt = t - phase.startTime;
  return phase.startPosition + phase.startVelocity * dt + 0.5 * phase.acceleration * dt * dt;
}

/** The pointer's velocity `t` seconds after the move starts. */
export function velocityAt(plan: MovePlan, t: number): number {
  if (t <= 0) return plan.initialVelocity;
  if (t >= plan.duration) return 0;
  const phase = phaseAt(plan, t);
  if (!phase) return plan.initialVelocity;
  return phase.startVelocity + phase.acceleration * (t - phase.startTime);
}

export interface TargetSample {
  /** Seconds, non-decreasing. */
  time: number;
  /** Where the pointer is told to go from this time on. */
  target: number;
}

export interface FollowPoint {
  time: number;
  /** The target the pointer was chasing up to this instant (the previous sample's). */
  target: number;
  position: number;
  velocity: number;
  /** target - position: how far the motor is behind what it was told. */
  lag: number;
}

export interface FollowOptions {
  initialPosition?: number;
  initialVelocity?: number;
}

/**
 * Predicts a stepper pointer chasing a stream of targets, as firmware that re-plans a time-optimal
 * move whenever a new target arrives would drive it. One point per sample: at each sample's time,
 * where the pointer is and how far it lags the target it was last given (a perfect motor lags 0;
 * the stream's own sampling delay is not counted here).
 */
export function followTargets(samples: readonly TargetSample[], limits: MoveLimits, options: FollowOptions = {}): FollowPoint[] {
  assertLimits(limits);
  const points: FollowPoint[] = [];
  if (samples.length === 0) return points;
  let position = options.initialPosition ?? samples[0].target;
  let velocity = options.initialVelocity ?? 0;
  let chasing = position;
  for (let i = 0; i < samples.length; i++) {
    const { time, target } = samples[i];
    if (i > 0) {
      const elapsed = time - samples[i - 1].time;
      if (elapsed < 0) throw new RangeError(`sample ${i}: time ${time} is before the previous sample's ${samples[i - 1].time}`);
      const plan = planMove(position, chasing, limits, velocity);
      position = positionAt(plan, elapsed);
      velocity = velocityAt(plan, elapsed);
    }
    points.push({ time, target: chasing, position, velocity, lag: chasing - position });
    chasing = target;
  }
  return points;
}
