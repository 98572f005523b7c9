/**
 * Which replica a process is, without a server: the ordinal from the config, the host name of a
 * StatefulSet pod or the environment, the partitions p mod N = k it owns, and the checks the
 * scaleOut section makes before any of that runs.
 */
import { describe, expect, it } from 'vitest';
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { parseConfig } from '../../src/config/load-config.js';
import { ownedPartitions, ReplicaOrdinalError, resolveReplicaIdentity } from '../../src/adapters/nats/replica-identity.js';

function scaleOut(section: Record<string, unknown>, env: Record<string, string> = {}) {
  const result = parseConfig({ estimators: [yardEstimatorInput()], scaleOut: section }, env);
  if (!result.ok) throw new Error(result.issues.map((i) => `${i.path}: ${i.message}`).join('; '));
  return result.config.scaleOut!;
}

function issuesOf(section: Record<string, unknown>, env: Record<string, string> = {}): string[] {
  const result = parseConfig({ estimators: [yardEstimatorInput()], scaleOut: section }, env);
  return result.ok ? [] : result.issues.map((i) => `${i.path}: ${i.message}`);
}

describe('replica identity', () => {
  it('takes the ordinal from a StatefulSet pod name ending in -<k>', () => {
    const id = resolveReplicaIdentity(scaleOut({ replicas: 4 }), 'statecast-3', 'abc123');
    expect(id).toEqual({ ordinal: 3, replicas: 4, replica: 'statecast-3-abc123' });
  });

  it('refuses a host name without an ordinal suffix', () => {
    expect(() => resolveReplicaIdentity(scaleOut({ replicas: 2 }), 'yard-host', 'x')).toThrow(ReplicaOrdinalError);
  });

  it('refuses a host-name ordinal that is not below the replica count', () => {
    expect(() => resolveReplicaIdentity(scaleOut({ replicas: 2 }), 'statecast-2', 'x')).toThrow(/not below scaleOut.replicas \(2\)/);
  });

  it('keeps a configured replica id and a fixed ordinal over the host name', () => {
    const id = resolveReplicaIdentity(scaleOut({ replicas: 3, ordinal: 1, replicaId: 'yard-b' }), 'statecast-0', 'x');
    expect(id).toEqual({ ordinal: 1, replicas: 3, replica: 'yard-b' });
  });

  it('turns characters a subject token cannot hold into dashes in the default id', () => {
    expect(resolveReplicaIdentity(scaleOut({ replicas: 2, ordinal: 0 }), 'node.yard.local', 'f00d01').replica).toBe('node-yard-local-f00d01');
  });
});

describe('owned partitions', () => {
  it('are p mod N = k, ascending, and together cover every partition once', () => {
    const all = [0, 1, 2].flatMap((k) => ownedPartitions(64, { ordinal: k, replicas: 3, replica: `r${k}` }));
    expect(ownedPartitions(64, { ordinal: 2, replicas: 3, replica: 'r2' }).slice(0, 4)).toEqual([2, 5, 8, 11]);
    expect(all.sort((a, b) => a - b)).toEqual(Array.from({ length: 64 }, (_, p) => p));
  });

  it('leave a replica beyond the partition count with none', () => {
    expect(ownedPartitions(4, { ordinal: 5, replicas: 8, replica: 'r5' })).toEqual([]);
  });
});

describe('the scaleOut section', () => {
  it('refuses an ordinal not below replicas', () => {
    expect(issuesOf({ replicas: 2, ordinal: 2 })).toEqual(['scaleOut.ordinal: expected less than replicas (2)']);
  });

  it('refuses a renewal interval longer than half the lease', () => {
    expect(issuesOf({ leaseMs: 1000, renewMs: 600 })).toEqual(['scaleOut.renewMs: expected at most half of leaseMs (1000)']);
  });

  it('takes the ordinal and replica count from the environment over the file', () => {
    const s = scaleOut({ replicas: 2, ordinal: 'hostname' }, { STATECAST_SCALE_OUT_ORDINAL: '4', STATECAST_SCALE_OUT_REPLICAS: '6' });
    expect([s.ordinal, s.replicas]).toEqual([4, 6]);
  });

  it('names the variable when an environment ordinal is out of range', () => {
    const issues = issuesOf({ replicas: 2 }, { STATECAST_SCALE_OUT_ORDINAL: '7' });
    expect(issues).toHaveLength(1);
    expect(issues[0]).toMatch(/STATECAST_SCALE_OUT_ORDINAL/);
  });

  it('does not switch scale-out mode on when only the environment names it', () => {
    const result = parseConfig({ estimators: [yardEstimatorInput()] }, { STATECAST_SCALE_OUT_ORDINAL: '1', STATECAST_SCALE_OUT_REPLICAS: '2' });
    expect(result.ok && result.config.scaleOut).toBe(undefined);
  });
});
