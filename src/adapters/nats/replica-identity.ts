/**
 * Which replica this process is: its ordinal k (it owns the partitions p with p mod N = k) and
 * the id that names it in owner records.
 */
import type { DeepReadonly } from '../../config/deep-freeze.js';
import type { ScaleOutConfig } from '../../config/scale-out-schema.js';

/** A resolved identity. */
export interface ReplicaIdentity {
  readonly ordinal: number;
  readonly replicas: number;
  readonly replica: string;
}

/** Thrown when `ordinal: hostname` meets a host name without a `-<k>` suffix, or k ≥ N. */
export class ReplicaOrdinalError extends Error {
  override name = 'ReplicaOrdinalError';
}

/**
 * Resolves the identity from the config and the host name (a StatefulSet pod is named
 * `<set>-<k>`). `instance` (random per process by default) makes the default replica id unique
 * per process, so a second process on the same host with the same ordinal is told apart.
 */
export function resolveReplicaIdentity(config: DeepReadonly<ScaleOutConfig>, hostname: string, instance: string): ReplicaIdentity {
  let ordinal: number;
  if (config.ordinal === 'hostname') {
    const m = /-(\d+)$/.exec(hostname);
    if (m === null) throw new ReplicaOrdinalError(`scaleOut.ordinal is "hostname" but host name "${hostname}" does not end in -<ordinal>`);
    ordinal = Number(m[1]);
  } else {
    ordinal = config.ordinal;
  }
  if (ordinal >= config.replicas) throw new ReplicaOrdinalError(`ordinal ${ordinal} is not below scaleOut.replicas (${config.replicas})`);
  const safeHost = hostname.replace(/[^A-Za-z0-9_-]/g, '-');
  return { ordinal, replicas: config.replicas, replica: config.replicaId ?? `${safeHost}-${instance}` };
}

/** The partitions a replica owns: p mod N = k, ascending. */
export function ownedPartitions(partitions: number, identity: ReplicaIdentity): number[] {
  const out: number[] = [];
  for (let p = identity.ordinal; p < partitions; p += identity.replicas) out.push(p);
  return out;
}
