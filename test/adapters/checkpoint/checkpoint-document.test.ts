import { describe, expect, it } from 'vitest';
import {
  checkpointDocument,
  configFingerprint,
  restoreFromDocument,
  type CheckpointDocument,
} from '../../../src/adapters/checkpoint/checkpoint-store.js';
import { estimatorsByName, someTracks, tankEstimator } from './checkpoint-fixtures.js';

const fingerprint = configFingerprint({ demo: 'yard and tanks' });

function throughJson(doc: CheckpointDocument): CheckpointDocument {
  return JSON.parse(JSON.stringify(doc)) as CheckpointDocument;
}

describe('checkpoint document', () => {
  it('lists every track by estimator and entity with the envelope fields', () => {
    const doc = checkpointDocument(someTracks(estimatorsByName()), fingerprint, new Date('2031-05-04T03:02:01.000Z'));
    expect(doc).toMatchObject({ format: 'statecast-checkpoint', version: 1, writtenAt: '2031-05-04T03:02:01.000Z', configFingerprint: fingerprint });
    expect(Object.keys(doc.estimators)).toEqual(['yard', 'tanks']);
    expect(Object.keys(doc.estimators['yard']!)).toEqual(['tug-01', 'tug-02', 'tug-03']);
  });

  it('restores every track to the state it was saved in', () => {
    const estimators = estimatorsByName();
    const tracks = someTracks(estimators);
    const summary = restoreFromDocument(throughJson(checkpointDocument(tracks, fingerprint)), estimators);
    expect(summary.restored).toBe(6);
    expect(summary.skipped).toEqual([]);
    for (const [name, byEntity] of tracks) {
      for (const [entity, track] of byEntity) {
        const copy = summary.tracks.get(name)?.get(entity);
        expect(copy?.x).toEqual(track.x);
        expect(copy?.P).toEqual(track.P);
      }
    }
  });

  it('skips the tracks of an estimator the configuration no longer has', () => {
    const estimators = estimatorsByName();
    const doc = throughJson(checkpointDocument(someTracks(estimators), fingerprint));
    estimators.delete('tanks');
    const summary = restoreFromDocument(doc, estimators);
    expect(summary.restored).toBe(3);
    expect(summary.skipped.map((s) => `${s.estimator}/${s.entity}`)).toEqual(['tanks/tank-a', 'tanks/tank-b', 'tanks/tank-c']);
    expect(summary.skipped[0]!.reason).toContain('no estimator named "tanks"');
  });

  it('skips a track that does not fit its estimator and restores the others', () => {
    const estimators = estimatorsByName();
    const doc = throughJson(checkpointDocument(someTracks(estimators), fingerprint));
    (doc.estimators['yard']!['tug-02'] as unknown as { x: unknown[] }).x.push(0);
    const summary = restoreFromDocument(doc, estimators);
    expect(summary.restored).toBe(5);
    expect(summary.skipped).toEqual([{ estimator: 'yard', entity: 'tug-02', reason: 'x.length must be 4, got 5' }]);
    expect(summary.tracks.get('yard')?.has('tug-02')).toBe(false);
  });

  it('skips tracks restored into an estimator of another shape', () => {
    const estimators = estimatorsByName();
    const doc = throughJson(checkpointDocument(someTracks(estimators), fingerprint));
    const summary = restoreFromDocument(doc, new Map([['yard', tankEstimator()]]));
    expect(summary.restored).toBe(0);
    expect(summary.skipped).toHaveLength(6);
  });

  it('keeps an entity whose id is an object key of JavaScript', () => {
    const estimators = estimatorsByName();
    const track = estimators.get('tanks')!.createTrack();
    track.ingest(0, [1.5], null, 10, 1e12);
    const doc = throughJson(checkpointDocument(new Map([['tanks', new Map([['__proto__', track]])]]), fingerprint));
    const summary = restoreFromDocument(doc, estimators);
    expect(summary.tracks.get('tanks')?.get('__proto__')?.x).toEqual(track.x);
  });
});

describe('config fingerprint', () => {
  it('is the same whatever the order of the keys', () => {
    const a = configFingerprint({ yard: { horizonS: 120, sensors: [{ name: 'fix', sigmaM: 3 }] }, tanks: { horizonS: 600 } });
    const b = configFingerprint({ tanks: { horizonS: 600 }, yard: { sensors: [{ sigmaM: 3, name: 'fix' }], horizonS: 120 } });
    expect(a).toBe(b);
    expect(a).toMatch(/^[0-9a-f]{64}$/);
  });

  it('changes when a value changes', () => {
    expect(configFingerprint({ yard: { horizonS: 120 } })).not.toBe(configFingerprint({ yard: { horizonS: 121 } }));
  });

  it('changes when the order of an array changes', () => {
    expect(configFingerprint({ sensors: ['fix', 'odometry'] })).not.toBe(configFingerprint({ sensors: ['odometry', 'fix'] }));
  });

  it('tells non-finite numbers apart', () => {
    expect(configFingerprint({ maxCoastS: Number.POSITIVE_INFINITY })).not.toBe(configFingerprint({ maxCoastS: Number.NaN }));
  });

  it('refuses a cyclic value', () => {
    const cyclic: Record<string, unknown> = {};
    cyclic['self'] = cyclic;
    expect(() => configFingerprint(cyclic)).toThrow(TypeError);
  });
});
