import { execFileSync } from 'node:child_process';
import { mkdtemp, open, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { MqttClient } from 'mqtt';
import { afterEach, describe, expect, it } from 'vitest';
import { mosquittoBinary, startMosquitto, type TestMosquitto } from '../helpers/mosquitto.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { startSoakDaemon, waitUntil, type SoakDaemon } from '../helpers/soak-daemon.js';
import { firstReadingTimeS, reading, tanksConfig } from './fault-fixtures.js';

const hasMosquitto = mosquittoBinary() !== null;
if (!hasMosquitto) console.warn('mosquitto is not installed: skipping the unwritable checkpoint fault tests');

/** True when this process may mount a tmpfs (root with CAP_SYS_ADMIN, as in the CI container). */
function canMountTmpfs(): boolean {
  if (process.platform !== 'linux' || process.getuid?.() !== 0) return false;
  try {
    execFileSync('mount', ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

const cleanups: (() => Promise<unknown>)[] = [];
afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup().catch(() => undefined);
});

async function tempDir(): Promise<string> {
  const dir = await mkdtemp(join(tmpdir(), 'statecast-state-'));
  cleanups.push(() => rm(dir, { recursive: true, force: true }));
  return dir;
}

/**
 * Runs the daemon with its checkpoint directory at `stateDir` (which cannot be written), feeds
 * it readings and checks that the write failure is logged loudly and estimates keep coming.
 * Returns the logged failure lines.
 */
async function estimatesDespiteFailedCheckpoints(stateDir: string): Promise<{ failures: readonly Record<string, unknown>[]; before: number; after: number }> {
  const broker: TestMosquitto | null = await startMosquitto();
  if (broker === null) throw new Error('mosquitto disappeared');
  cleanups.push(() => broker.stop());
  const daemon: SoakDaemon = await startSoakDaemon({
    config: tanksConfig(broker.url, { checkpoint: { enabled: true, directory: stateDir, intervalS: 0.2 } }),
  });
  cleanups.push(() => daemon.stop());
  await daemon.waitReady();

  const listener: MqttClient = await connectRawClient(broker.url, { protocolVersion: 5 });
  cleanups.push(() => endRawClient(listener));
  let estimates = 0;
  listener.on('message', () => (estimates += 1));
  await listener.subscribeAsync('statecast/tanks/+/estimate', { qos: 0 });

  const publisher: MqttClient = await connectRawClient(broker.url, { protocolVersion: 5 });
  cleanups.push(() => endRawClient(publisher));
  const t0S = firstReadingTimeS();
  let seq = 0;
  const send = async (n: number): Promise<void> => {
    for (const end = seq + n; seq < end; seq++) {
      const { topic, payload } = reading(seq, t0S);
      await publisher.publishAsync(topic, payload, { qos: 1 });
    }
  };

  // Tracks exist, so the checkpoint has something to write; then the periodic write fails.
  await send(30);
  await waitUntil(() => estimates >= 30, '30 estimates before the failure');
  const failures = await daemon.waitForLog('CHECKPOINT WRITE FAILED', 2);
  const before = estimates;
  await send(60);
  await waitUntil(() => estimates >= before + 60, '60 more estimates after the failed writes');
  expect(daemon.running).toBe(true);
  return { failures, before, after: estimates };
}

describe.skipIf(!hasMosquitto)('fault: the checkpoint directory cannot be written', () => {
  it('logs CHECKPOINT WRITE FAILED at error level and keeps estimating when the path runs through a regular file', async () => {
    const dir = await tempDir();
    const blocker = join(dir, 'not-a-directory');
    await writeFile(blocker, 'a regular file where the state directory should be\n');

    const { failures, before, after } = await estimatesDespiteFailedCheckpoints(join(blocker, 'state'));
    expect(failures[0]!['level']).toBe(50);
    expect(JSON.stringify(failures[0]!['err'])).toContain('ENOTDIR');
    expect(after).toBeGreaterThanOrEqual(before + 60);
  });

  it.skipIf(!canMountTmpfs())('logs CHECKPOINT WRITE FAILED and keeps estimating when the state file system is full', async () => {
    const mountPoint = await tempDir();
    execFileSync('mount', ['-t', 'tmpfs', '-o', 'size=64k', 'tmpfs', mountPoint]);
    cleanups.push(async () => execFileSync('umount', ['-l', mountPoint]));
    // Fill it: write until the file system refuses.
    const filler = await open(join(mountPoint, 'filler'), 'w');
    try {
      const block = Buffer.alloc(4096, 0x61);
      for (;;) await filler.write(block);
    } catch (error) {
      expect((error as NodeJS.ErrnoException).code).toBe('ENOSPC');
    } finally {
      await filler.close().catch(() => undefined);
    }

    const { failures, before, after } = await estimatesDespiteFailedCheckpoints(join(mountPoint, 'state'));
    expect(failures[0]!['level']).toBe(50);
    expect(JSON.stringify(failures[0]!['err'])).toContain('ENOSPC');
    expect(after).toBeGreaterThanOrEqual(before + 60);
  });
});
