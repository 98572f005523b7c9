import type { ChannelFaults } from './fault-plan.js';
import { inAnyWindow } from './fault-plan.js';
import { flatString } from './flat-string.js';
import type { Prng } from './prng.js';
import type { SimulatedMessage } from './simulated-message.js';

/** How one sensor stream reads, formats and is faulted. */
export interface ChannelSpec {
  readonly topic: string;
  readonly faults: ChannelFaults;
  /** Root of this stream's fault decisions, kept apart from its measurement noise. */
  readonly prng: Prng;
  /** Number of values per sample (e.g. 1 for level; 3 for GNSS east, north, hacc). */
  readonly valueCount: number;
  /** True when values[0..1] are east/north metres, so spikes take a random direction. */
  readonly planar: boolean;
  /** 1-sigma noise of this sample in the units of values[0], for bias jumps. */
  sigmaOf(values: Float64Array): number;
  /** JSON payload from the reported time text, the values and the sequence number. */
  format(tText: string, values: Float64Array, seq: number): string;
}

/**
 * One sensor stream between the clean sample and the wire: sequence numbers, then the fault
 * pipeline (bias jump, spikes, stuck, clock skew, duplicates, dropout, late burst). Every
 * random decision draws on every sample, in or out of its window, so switching a fault on
 * never shifts the draws of another fault or of the sensor noise.
 */
export class MeasurementChannel {
  private seq = 0;
  private readonly spec: ChannelSpec;
  private readonly faults: ChannelFaults;
  private readonly clean: boolean;
  // Fault streams are forked only when their fault is present; forks depend on the label
  // alone, so this laziness changes no draw.
  private readonly spikeStreams: Prng[];
  private readonly duplicateStream: Prng | undefined;
  private readonly burstStream: Prng | undefined;
  private readonly last: Float64Array;
  private hasLast = false;
  private backlog: SimulatedMessage[] = [];
  private outageStartS = Infinity;
  private outageEndS = Infinity;

  /** Builds the stream; random outages, if any, are scheduled from elapsed time 0. */
  constructor(spec: ChannelSpec) {
    this.spec = spec;
    const f = spec.faults;
    this.faults = f;
    this.clean =
      f.dropouts.length + f.stuck.length + f.biasJumps.length + f.spikes.length + f.outageWindows.length === 0 &&
      f.duplicateProbability === 0 &&
      f.clockSkewS === 0 &&
      f.randomOutages === undefined;
    this.spikeStreams = f.spikes.map((_, i) => spec.prng.fork(`spikes/${i}`));
    this.duplicateStream = f.duplicateProbability > 0 ? spec.prng.fork('duplicates') : undefined;
    const bursts = f.randomOutages !== undefined || f.outageWindows.length > 0;
    this.burstStream = bursts ? spec.prng.fork('late-burst') : undefined;
    this.last = new Float64Array(spec.valueCount);
    if (f.randomOutages !== undefined) this.scheduleOutage(0);
  }

  /** Number of messages held back by an outage right now. */
  get heldCount(): number {
    return this.backlog.length;
  }

  /**
   * Takes one clean sample at `elapsedS` since start (epoch `epochS`, preformatted `tText`)
   * and appends what goes on the wire to `out`. `values` may be modified.
   */
  emit(out: SimulatedMessage[], elapsedS: number, epochS: number, tText: string, values: Float64Array): void {
    const seq = this.seq;
    this.seq += 1;
    if (this.clean) {
      out.push(message(this.spec.topic, this.spec.format(tText, values, seq), epochS, epochS));
      return;
    }
    const f = this.faults;
    for (const jump of f.biasJumps) {
      if (elapsedS >= jump.fromS && elapsedS < jump.toS) values[0]! += jump.sigmas * this.spec.sigmaOf(values);
    }
    f.spikes.forEach((spike, i) => this.applySpike(values, spike, this.spikeStreams[i]!));
    if (f.stuck.length > 0) {
      if (this.hasLast && inAnyWindow(f.stuck, elapsedS)) values.set(this.last);
      else {
        this.last.set(values);
        this.hasLast = true;
      }
    }
    const reported = f.clockSkewS === 0 ? tText : (epochS + f.clockSkewS).toFixed(3);
    const duplicate = this.duplicateStream !== undefined && this.duplicateStream.nextFloat() < f.duplicateProbability;
    const held = this.inOutage(elapsedS);
    if (!held && this.backlog.length > 0) this.release(out, epochS);
    if (inAnyWindow(f.dropouts, elapsedS)) return;
    const m = message(this.spec.topic, this.spec.format(reported, values, seq), epochS, epochS);
    const sink = held ? this.backlog : out;
    sink.push(m);
    if (duplicate) sink.push(m);
  }

  private applySpike(values: Float64Array, spike: { probability: number; magnitude: number }, prng: Prng): void {
    const hit = prng.nextFloat() < spike.probability;
    const direction = prng.nextFloat();
    if (!hit) return;
    if (this.spec.planar) {
      values[0]! += spike.magnitude * Math.cos(2 * Math.PI * direction);
      values[1]! += spike.magnitude * Math.sin(2 * Math.PI * direction);
    } else {
      values[0]! += direction < 0.5 ? -spike.magnitude : spike.magnitude;
    }
  }

  private inOutage(elapsedS: number): boolean {
    if (this.faults.randomOutages !== undefined) {
      if (elapsedS >= this.outageEndS) {
        // The link is back for this sample, which releases the backlog; the next outage is
        // drawn from now, so two outages never merge into one longer than the maximum.
        this.scheduleOutage(elapsedS);
      } else if (elapsedS >= this.outageStartS) {
        return true;
      }
    }
    return inAnyWindow(this.faults.outageWindows, elapsedS);
  }

  /** Next random outage after `afterS`: exponential gap (mean meanIntervalS), uniform duration. */
  private scheduleOutage(afterS: number): void {
    const o = this.faults.randomOutages!;
    const prng = this.burstStream!;
    const gapS = -o.meanIntervalS * Math.log(1 - prng.nextFloat());
    this.outageStartS = afterS + gapS;
    this.outageEndS = this.outageStartS + prng.nextUniform(o.minDurationS, o.maxDurationS);
  }

  /** Releases the backlog at once in a Fisher–Yates shuffled order, event times unchanged. */
  private release(out: SimulatedMessage[], epochS: number): void {
    const held = this.backlog;
    this.backlog = [];
    for (let i = held.length - 1; i > 0; i -= 1) {
      const j = this.burstStream!.nextInt(i + 1);
      const tmp = held[i]!;
      held[i] = held[j]!;
      held[j] = tmp;
    }
    for (const m of held) out.push(message(m.topic, m.payload, m.eventTimeS, epochS));
  }
}

function message(topic: string, payload: string, eventTimeS: number, publishTimeS: number): SimulatedMessage {
  return { topic, payload: flatString(payload), eventTimeS, publishTimeS, kind: 'measurement' };
}
