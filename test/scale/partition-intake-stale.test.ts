/**
 * The stale-pending repair of a partition's intake, on a fake clock and a fake JetStream client:
 * a partition that has not caught up and hears nothing for 10 s is stale; any message clears it;
 * a restart asks for a new consumer at seq + 1. (No server: the path is about our bookkeeping.)
 */
import type { JsMsg } from '@nats-io/jetstream';
import { describe, expect, it } from 'vitest';
import type { PartitionContext } from '../../src/adapters/nats/partition-context.js';
import { PartitionIntake } from '../../src/adapters/nats/partition-intake.js';

interface FakeJs {
  readonly starts: number[];
  deliver(seq: number, pending: number): void;
}

/** A JetStream client whose consumers report `pending` and deliver what the test hands them. */
function fakeJetStream(pending: number): { js: unknown; fake: FakeJs } {
  const starts: number[] = [];
  let callback: ((msg: JsMsg) => void) | null = null;
  const js = {
    consumers: {
      get: async (_stream: string, opts: { opt_start_seq: number }) => {
        starts.push(opts.opt_start_seq);
        return {
          info: async () => ({ num_pending: pending }),
          consume: async (o: { callback: (msg: JsMsg) => void }) => {
            callback = o.callback;
            return { status: async function* () { /* no status events */ }, close: async () => undefined };
          },
        };
      },
    },
  };
  const fake: FakeJs = {
    starts,
    deliver(seq, left) {
      const msg = { seq, subject: 'p.3.yard.tug-01.gnss', data: new Uint8Array(0), info: { pending: left, timestampNanos: 1e15 } };
      callback?.(msg as unknown as JsMsg);
    },
  };
  return { js, fake };
}

function context(js: unknown, clock: { ms: number }, handled: string[]): PartitionContext {
  return {
    config: { stream: 'yard', readyPendingBelow: 2 },
    batch: 16,
    js,
    router: { filterOf: (p: number) => `p.${p}.>`, route: (subject: string) => ({ topic: subject.split('.').slice(2).join('/'), partition: 3, expected: 3 }) },
    handle: { engine: { handleMessage: (topic: string) => handled.push(topic) } },
    events: { emit: () => undefined, has: () => false },
    counters: { drift: 0, unrouted: 0, snapshots: 0 },
    now: () => clock.ms,
    changed: () => undefined,
  } as unknown as PartitionContext;
}

describe('partition intake: a stale pending count', () => {
  it('is stale after 10 s without news, fresh again on a message, and restarts at seq + 1', async () => {
    const clock = { ms: 1_000_000 };
    const handled: string[] = [];
    const { js, fake } = fakeJetStream(50);
    const intake = new PartitionIntake(3, context(js, clock, handled), (reason) => { throw new Error(reason); });
    await intake.start(41);
    expect(fake.starts).toEqual([41]);
    expect(intake.caughtUp).toBe(false);
    clock.ms += 9_999;
    expect(intake.stale).toBe(false);
    clock.ms += 1;
    expect(intake.stale).toBe(true);
    fake.deliver(41, 30);
    expect(handled).toEqual(['yard/tug-01/gnss']);
    expect(intake.stale).toBe(false);
    clock.ms += 10_000;
    expect(intake.stale).toBe(true);
    await intake.restart();
    expect(fake.starts).toEqual([41, 42]);
    expect(intake.stale).toBe(false);
    // Caught up (fewer than readyPendingBelow waiting): never stale, however long it is quiet.
    fake.deliver(42, 1);
    expect(intake.caughtUp).toBe(true);
    clock.ms += 60_000;
    expect(intake.stale).toBe(false);
    await intake.stop();
  });
});
