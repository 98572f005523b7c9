import type { Prng } from './prng.js';

/**
 * Truth motion of one tow tractor in the invented distribution yard: a random walk on a grid
 * of lanes, in local east/north metres from the yard's south-west corner. Legs are straight
 * at 2–5 m/s; at a junction the tractor either goes straight, turns on a circular arc at
 * walking pace, or stops for a while (after a stop it may leave in any direction). Speed
 * changes within acceleration limits and brakes ahead of each arc and stop.
 */

/** East coordinates (m) of the north–south lanes. */
export const LANE_EAST_M: readonly number[] = [40, 160, 300, 440, 560];
/** North coordinates (m) of the east–west lanes. */
export const LANE_NORTH_M: readonly number[] = [40, 150, 260, 360];
/** Yard extent (m): 600 m east by 400 m north. */
export const YARD_EXTENT_M = { east: 600, north: 400 } as const;
/** Cruise speed range on a leg (m/s). */
export const CRUISE_RANGE_MPS: readonly [number, number] = [2, 5];

const TURN_RADIUS_M = 10;
const TURN_SPEED_MPS = 2; // lateral acceleration v²/r = 0.4 m/s²
const ACCEL_MPS2 = 0.5;
const BRAKE_MPS2 = 0.7;
const STOP_PROBABILITY = 0.2;
const DWELL_RANGE_S: readonly [number, number] = [5, 40];

type Segment =
  | { readonly kind: 'line'; readonly x0: number; readonly y0: number; readonly ux: number; readonly uy: number; readonly lengthM: number; readonly limitMps: number }
  | { readonly kind: 'arc'; readonly cx: number; readonly cy: number; readonly theta0: number; readonly turn: number; readonly lengthM: number; readonly limitMps: number }
  | { readonly kind: 'stop'; readonly x: number; readonly y: number; readonly durationS: number; readonly limitMps: 0 };

const DIRECTIONS: readonly (readonly [number, number])[] = [[1, 0], [0, 1], [-1, 0], [0, -1]];

/** One tractor's truth state, advanced in fixed steps by `step(dtS)`. */
export class YardVehicleMotion {
  /** Position east of the yard corner (m). */
  eastM = 0;
  /** Position north of the yard corner (m). */
  northM = 0;
  /** Velocity east (m/s). */
  vEastMps = 0;
  /** Velocity north (m/s). */
  vNorthMps = 0;
  /** Speed along the path (m/s), the norm of the velocity. */
  speedMps = 0;

  private readonly prng: Prng;
  private readonly queue: Segment[] = [];
  private s = 0; // distance along queue[0], or time spent in a stop
  // Planning state: the leg being planned runs from (fromX, fromY) to lane node (i, j) along (dx, dy).
  private fromX: number;
  private fromY: number;
  private i: number;
  private j: number;
  private dx: number;
  private dy: number;
  private entryTrimM = 0;

  /** Places the tractor at rest part-way along a random lane segment, facing along it. */
  constructor(prng: Prng) {
    this.prng = prng;
    let i: number;
    let j: number;
    let d: readonly [number, number];
    do {
      i = prng.nextInt(LANE_EAST_M.length);
      j = prng.nextInt(LANE_NORTH_M.length);
      d = DIRECTIONS[prng.nextInt(4)]!;
    } while (!this.hasNode(i + d[0], j + d[1]));
    const f = prng.nextUniform(0.2, 0.8); // ≥ 20 m from either junction, so the first line is ≥ 10 m
    this.fromX = LANE_EAST_M[i]! + f * (LANE_EAST_M[i + d[0]]! - LANE_EAST_M[i]!);
    this.fromY = LANE_NORTH_M[j]! + f * (LANE_NORTH_M[j + d[1]]! - LANE_NORTH_M[j]!);
    this.i = i + d[0];
    this.j = j + d[1];
    this.dx = d[0];
    this.dy = d[1];
    this.planLeg();
    this.place();
  }

  /** Advances the motion by `dtS` seconds. */
  step(dtS: number): void {
    while (this.queue.length < 2) this.planLeg();
    let current = this.queue[0]!;
    if (current.kind === 'stop') {
      this.s += dtS;
      if (this.s >= current.durationS) this.advanceSegment();
      this.place();
      return;
    }
    const remainingM = current.lengthM - this.s;
    const nextLimit = this.queue[1]!.limitMps;
    // Brake ahead: the fastest end-of-step speed v from which the next segment's limit is still
    // reachable at the braking rate a after this step's distance h(v0 + v), h = dt/2:
    // v² = v_next² + 2a(d − h(v0 + v)), solved for v. Arrival at a stop then jumps to zero
    // from below 2ah = 0.07 m/s, the residue of discrete time.
    const h = 0.5 * dtS;
    const slackM = Math.max(0, remainingM - h * this.speedMps);
    const brakeLimit = -BRAKE_MPS2 * h + Math.sqrt((BRAKE_MPS2 * h) ** 2 + nextLimit * nextLimit + 2 * BRAKE_MPS2 * slackM);
    const v = Math.min(this.speedMps + ACCEL_MPS2 * dtS, current.limitMps, brakeLimit);
    this.s += h * (this.speedMps + v);
    this.speedMps = v;
    while (this.s >= current.lengthM) {
      const carryM = this.s - current.lengthM;
      this.advanceSegment();
      current = this.queue[0]!;
      if (current.kind === 'stop') {
        this.speedMps = 0;
        break;
      }
      this.s = carryM;
    }
    this.place();
  }

  private advanceSegment(): void {
    this.queue.shift();
    this.s = 0;
    while (this.queue.length < 2) this.planLeg();
  }

  private hasNode(i: number, j: number): boolean {
    return i >= 0 && i < LANE_EAST_M.length && j >= 0 && j < LANE_NORTH_M.length;
  }

  /** Appends the segments of the current leg and decides what happens at its end junction. */
  private planLeg(): void {
    const nodeX = LANE_EAST_M[this.i]!;
    const nodeY = LANE_NORTH_M[this.j]!;
    const cruise = this.prng.nextUniform(CRUISE_RANGE_MPS[0], CRUISE_RANGE_MPS[1]);
    const stop = this.prng.nextFloat() < STOP_PROBABILITY;
    const exits = DIRECTIONS.filter(
      ([ex, ey]) => this.hasNode(this.i + ex, this.j + ey) && (stop || ex !== -this.dx || ey !== -this.dy),
    );
    const [ex, ey] = exits[this.prng.nextInt(exits.length)]!;
    const turning = !stop && (ex !== this.dx || ey !== this.dy);
    const exitTrimM = turning ? TURN_RADIUS_M : 0;
    const x0 = this.fromX + this.dx * this.entryTrimM;
    const y0 = this.fromY + this.dy * this.entryTrimM;
    const lengthM = Math.abs(nodeX - x0) + Math.abs(nodeY - y0) - exitTrimM; // axis-aligned leg
    this.queue.push({ kind: 'line', x0, y0, ux: this.dx, uy: this.dy, lengthM, limitMps: cruise });
    if (stop) {
      const durationS = this.prng.nextUniform(DWELL_RANGE_S[0], DWELL_RANGE_S[1]);
      this.queue.push({ kind: 'stop', x: nodeX, y: nodeY, durationS, limitMps: 0 });
    } else if (turning) {
      // Fillet tangent to both lanes: centre at node − r·d + r·d', start angle of −d'.
      const turn = this.dx * ey - this.dy * ex; // +1 left (counter-clockwise), −1 right
      this.queue.push({
        kind: 'arc',
        cx: nodeX - TURN_RADIUS_M * (this.dx - ex),
        cy: nodeY - TURN_RADIUS_M * (this.dy - ey),
        theta0: Math.atan2(-ey, -ex),
        turn,
        lengthM: (TURN_RADIUS_M * Math.PI) / 2,
        limitMps: TURN_SPEED_MPS,
      });
    }
    this.entryTrimM = exitTrimM;
    this.fromX = nodeX;
    this.fromY = nodeY;
    this.i += ex;
    this.j += ey;
    this.dx = ex;
    this.dy = ey;
  }

  /** Sets position and velocity from the current segment and distance along it. */
  private place(): void {
    const seg = this.queue[0]!;
    if (seg.kind === 'stop') {
      this.eastM = seg.x;
      this.northM = seg.y;
      this.vEastMps = 0;
      this.vNorthMps = 0;
      return;
    }
    if (seg.kind === 'line') {
      this.eastM = seg.x0 + seg.ux * this.s;
      this.northM = seg.y0 + seg.uy * this.s;
      this.vEastMps = this.speedMps * seg.ux;
      this.vNorthMps = this.speedMps * seg.uy;
      return;
    }
    const theta = seg.theta0 + (seg.turn * this.s) / TURN_RADIUS_M;
    const c = Math.cos(theta);
    const sn = Math.sin(theta);
    this.eastM = seg.cx + TURN_RADIUS_M * c;
    this.northM = seg.cy + TURN_RADIUS_M * sn;
    this.vEastMps = -this.speedMps * seg.turn * sn;
    this.vNorthMps = this.speedMps * seg.turn * c;
  }
}
