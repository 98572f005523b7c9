/**
 * Encodes a checkpoint file a few hundred tracks at a time, yielding to the event loop between
 * slices. At 10,000 tracks the document is about 50 MB of JSON and building plus stringifying it
 * in one go blocked the daemon for 2 s on a quiet machine (7 s under load): long enough for the
 * broker's keepalive to lapse and redeliver a whole window of QoS 1 readings. The bytes are
 * exactly those of encodeCheckpointFile(checkpointDocument(...)), because JSON.stringify of an
 * object is the concatenation of its members' texts; the hash is fed slice by slice.
 *
 * Tracks keep changing while the slices are written: each track is copied whole at its turn, so
 * every track in the file is consistent in itself (tracks are independent, so nothing more is
 * needed); a track created after the start is left for the next checkpoint.
 */
import { createHash } from 'node:crypto';
import type { Track } from '../../estimation/track.js';
import { trackToCheckpoint } from '../../estimation/track-checkpoint.js';
import { CHECKPOINT_FORMAT, CHECKPOINT_VERSION } from './checkpoint-document.js';
import { CHECKPOINT_TRAILER } from './checkpoint-file.js';

/** Tracks serialized between two yields: about 10 ms for vehicle-yard tracks with 30 entries. */
export const TRACKS_PER_SLICE = 50;

/** Waits one event-loop turn (setImmediate: I/O that arrived meanwhile runs first). */
export function nextTurn(): Promise<void> {
  return new Promise((resolve) => setImmediate(resolve));
}

/** The checkpoint file bytes for the tracks (estimator → entity → track), built in slices. */
export async function encodeCheckpointInSlices(
  estimators: ReadonlyMap<string, ReadonlyMap<string, Track>>,
  fingerprint: string,
  writtenAt: Date = new Date(),
  options: { readonly tracksPerSlice?: number; readonly yieldTurn?: () => Promise<void> } = {},
): Promise<Uint8Array> {
  const perSlice = options.tracksPerSlice ?? TRACKS_PER_SLICE;
  const yieldTurn = options.yieldTurn ?? nextTurn;
  // The membership is fixed now; the maps may change while we yield.
  const plan = Array.from(estimators, ([name, tracks]) => [name, Array.from(tracks)] as const);
  const hash = createHash('sha256');
  const chunks: Buffer[] = [];
  let text = `{"format":${JSON.stringify(CHECKPOINT_FORMAT)},"version":${JSON.stringify(CHECKPOINT_VERSION)},`
    + `"writtenAt":${JSON.stringify(writtenAt.toISOString())},"configFingerprint":${JSON.stringify(fingerprint)},"estimators":{`;
  const flush = (): void => {
    const chunk = Buffer.from(text, 'utf8');
    hash.update(chunk);
    chunks.push(chunk);
    text = '';
  };
  let inSlice = 0;
  for (let e = 0; e < plan.length; e++) {
    const [name, tracks] = plan[e]!;
    text += `${e === 0 ? '' : ','}${JSON.stringify(name)}:{`;
    for (let k = 0; k < tracks.length; k++) {
      const [entity, track] = tracks[k]!;
      text += `${k === 0 ? '' : ','}${JSON.stringify(entity)}:${JSON.stringify(trackToCheckpoint(track))}`;
      if (++inSlice >= perSlice) {
        inSlice = 0;
        flush();
        await yieldTurn();
      }
    }
    text += '}';
  }
  text += '}}';
  flush();
  chunks.push(Buffer.from(`${CHECKPOINT_TRAILER}${hash.digest('hex')}\n`, 'utf8'));
  return Buffer.concat(chunks);
}
