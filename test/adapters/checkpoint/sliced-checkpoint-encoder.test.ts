import { describe, expect, it } from 'vitest';
import { checkpointDocument, configFingerprint } from '../../../src/adapters/checkpoint/checkpoint-store.js';
import { decodeCheckpointFile, encodeCheckpointFile } from '../../../src/adapters/checkpoint/checkpoint-file.js';
import { encodeCheckpointInSlices } from '../../../src/adapters/checkpoint/sliced-checkpoint-encoder.js';
import { estimatorsByName, someTracks } from './checkpoint-fixtures.js';

const fingerprint = configFingerprint({ demo: 'yard and tanks' });
const at = new Date('2031-05-04T03:02:01.000Z');

describe('checkpoint encoded in slices', () => {
  it('gives exactly the bytes of the one-pass encoder, whatever the slice size', async () => {
    const estimators = estimatorsByName();
    const tracks = someTracks(estimators);
    // Entity ids JSON must escape, and one that is an Object.prototype key.
    tracks.get('yard')!.set('__proto__', tracks.get('yard')!.get('tug-01')!);
    tracks.get('tanks')!.set('tank "west" \\ ünïcode\n', tracks.get('tanks')!.get('tank-a')!);
    const expected = Buffer.from(encodeCheckpointFile(checkpointDocument(tracks, fingerprint, at)));
    for (const tracksPerSlice of [1, 2, 3, 7, 1000]) {
      const bytes = await encodeCheckpointInSlices(tracks, fingerprint, at, { tracksPerSlice, yieldTurn: async () => undefined });
      expect(Buffer.from(bytes).equals(expected)).toBe(true);
    }
    expect(decodeCheckpointFile(expected)).toHaveProperty('body');
  });

  it('yields between slices, and a track that changes meanwhile is written whole as it was at its turn', async () => {
    const estimators = estimatorsByName();
    const tracks = someTracks(estimators);
    const tug3 = tracks.get('yard')!.get('tug-03')!;
    let yields = 0;
    const bytes = await encodeCheckpointInSlices(tracks, fingerprint, at, {
      tracksPerSlice: 2,
      yieldTurn: async () => {
        yields += 1;
        // The daemon goes on estimating while the file is built.
        if (yields === 1) tug3.ingest(0, [40, -11], null, 112, 1e12);
        tracks.get('yard')!.set(`late-${yields}`, tug3);
      },
    });
    expect(yields).toBe(3); // 6 tracks, 2 per slice
    const decoded = decodeCheckpointFile(bytes);
    if (!('body' in decoded)) throw new Error(decoded.reason);
    const doc = JSON.parse(decoded.body) as { estimators: Record<string, Record<string, { x: number[] }>> };
    // Only the tracks present at the start are in the file, tug-03 with its newest state.
    expect(Object.keys(doc.estimators['yard']!)).toEqual(['tug-01', 'tug-02', 'tug-03']);
    expect(doc.estimators['yard']!['tug-03']!.x).toEqual(Array.from(tug3.x));
  });
});
