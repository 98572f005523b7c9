import { access, mkdtemp, readFile, rm, stat, truncate } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { decodeCheckpointFile } from '../../src/adapters/checkpoint/checkpoint-file.js';
import { mosquittoBinary, startMosquitto, type TestMosquitto } from '../helpers/mosquitto.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { startSoakDaemon, waitUntil } from '../helpers/soak-daemon.js';
import { TANKS, firstReadingTimeS, reading, readingCounts, tanksConfig } from './fault-fixtures.js';

const hasMosquitto = mosquittoBinary() !== null;
if (!hasMosquitto) console.warn('mosquitto is not installed: skipping the truncated checkpoint fault test');

const cleanups: (() => Promise<unknown>)[] = [];
afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup().catch(() => undefined);
});

describe.skipIf(!hasMosquitto)('fault: the checkpoint file is cut short', () => {
  it('starts with a warning, moves the file aside and estimates from scratch', { timeout: 90_000 }, async () => {
    const dir = await mkdtemp(join(tmpdir(), 'statecast-truncated-'));
    cleanups.push(() => rm(dir, { recursive: true, force: true }));
    const stateDir = join(dir, 'state');
    const checkpointPath = join(stateDir, 'tracks.checkpoint.json');
    const broker: TestMosquitto | null = await startMosquitto();
    if (broker === null) throw new Error('mosquitto disappeared');
    cleanups.push(() => broker.stop());
    const config = tanksConfig(broker.url, { checkpoint: { enabled: true, directory: stateDir, intervalS: 3600 } });
    const publisher = await connectRawClient(broker.url, { protocolVersion: 5 });
    cleanups.push(() => endRawClient(publisher));
    const t0S = firstReadingTimeS();

    // A first run writes a real checkpoint of three tracks at shutdown.
    const first = await startSoakDaemon({ config, dir });
    cleanups.push(() => first.stop());
    await first.waitReady();
    for (let seq = 0; seq < 30; seq++) {
      const { topic, payload } = reading(seq, t0S);
      await publisher.publishAsync(topic, payload, { qos: 1 });
    }
    await waitUntil(async () => (await readingCounts(first)).accepted === 30, 'the first run to accept 30 readings');
    expect((await first.stop()).code).toBe(0);
    const whole = await readFile(checkpointPath);
    expect('body' in decodeCheckpointFile(whole)).toBe(true);
    expect(whole.toString('utf8')).toContain(TANKS[2]);

    // Cut it in the middle, as a copy or a torn write would leave it.
    await truncate(checkpointPath, Math.floor(whole.length / 2));

    const second = await startSoakDaemon({ config, dir });
    cleanups.push(() => second.stop());
    const [warning] = await second.waitForLog('checkpoint rejected');
    expect(warning!['level']).toBe(40);
    expect(warning!['problem']).toBe('truncated');
    const movedTo = warning!['movedTo'];
    expect(typeof movedTo).toBe('string');
    expect((await stat(movedTo as string)).size).toBe(Math.floor(whole.length / 2));
    await expect(access(checkpointPath)).rejects.toMatchObject({ code: 'ENOENT' });
    expect(second.find('restored tracks from the checkpoint')).toHaveLength(0);

    // Nothing was restored, and the daemon estimates from the next reading on.
    await second.waitReady();
    const { topic, payload } = reading(30, t0S);
    await publisher.publishAsync(topic, payload, { qos: 1 });
    await waitUntil(async () => (await readingCounts(second)).accepted === 1, 'the second run to accept a reading');
    const tracks = JSON.parse((await second.get('/api/v1/tracks')).body) as unknown;
    expect(JSON.stringify(tracks)).toContain(TANKS[0]);
    expect(JSON.stringify(tracks)).not.toContain(TANKS[1]);
    expect(second.running).toBe(true);
  });
});
