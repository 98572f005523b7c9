/**
 * Validates client frames at the edge: every refusal names the field and says what was
 * expected, so a dashboard author can fix the request from the error alone.
 */
import type { EstimateKind } from '../../engine/estimate-message.js';
import { entityGlobProblem } from './entity-glob.js';
import { ESTIMATE_KINDS, type ClientRequest, type RequestId } from './ws-protocol.js';

/** Longest string id echoed back (characters). */
export const MAX_REQUEST_ID_LENGTH = 128;

/** What a subscription may contain. */
export interface RequestLimits {
  /** Most estimator names plus entity patterns in one subscription. */
  readonly maxSubscriptions: number;
  /** The configured estimators; any other name is refused. */
  readonly estimatorNames: ReadonlySet<string>;
}

/** A parsed request, or why it was refused (with the id when the id itself was valid). */
export type ParseVerdict =
  | { readonly ok: true; readonly request: ClientRequest }
  | { readonly ok: false; readonly message: string; readonly id?: RequestId };

const SUBSCRIBE_FIELDS = new Set(['op', 'id', 'estimators', 'entities', 'kinds', 'health', 'measurements']);
const PING_FIELDS = new Set(['op', 'id']);
const KIND_SET: ReadonlySet<string> = new Set(ESTIMATE_KINDS);

/** Signals a refused field inside the parser; turned into a verdict before it leaves this file. */
class FieldError extends Error {}

/** Parses one text frame into a request. */
export function parseClientRequest(text: string, limits: RequestLimits): ParseVerdict {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    return { ok: false, message: 'bad JSON: expected one JSON object per text frame' };
  }
  if (typeof value !== 'object' || value === null || Array.isArray(value)) {
    return { ok: false, message: 'expected a JSON object with an "op" field' };
  }
  const fields = value as Record<string, unknown>;
  let id: RequestId | undefined;
  try {
    id = readId(fields['id']);
    const op = fields['op'];
    if (op === 'ping') {
      checkFields(fields, PING_FIELDS);
      return { ok: true, request: id === undefined ? { op } : { op, id } };
    }
    if (op === 'subscribe') {
      checkFields(fields, SUBSCRIBE_FIELDS);
      return { ok: true, request: readSubscribe(fields, id, limits) };
    }
    if (typeof op !== 'string') throw new FieldError('op: expected "subscribe" or "ping"');
    throw new FieldError(`op: unknown op ${JSON.stringify(op.slice(0, 32))}; expected "subscribe" or "ping"`);
  } catch (error) {
    if (!(error instanceof FieldError)) throw error;
    return id === undefined ? { ok: false, message: error.message } : { ok: false, message: error.message, id };
  }
}

function readSubscribe(fields: Record<string, unknown>, id: RequestId | undefined, limits: RequestLimits): ClientRequest {
  const estimators = readList(fields, 'estimators', (name) => {
    if (typeof name !== 'string') return 'expected a string';
    return limits.estimatorNames.has(name) ? null : `no estimator named ${JSON.stringify(name.slice(0, 64))}`;
  });
  const entities = readList(fields, 'entities', entityGlobProblem);
  const kinds = readList(fields, 'kinds', (kind) =>
    typeof kind === 'string' && KIND_SET.has(kind) ? null : `expected one of ${ESTIMATE_KINDS.map((k) => `"${k}"`).join(', ')}`,
  ) as EstimateKind[] | undefined;
  const health = fields['health'];
  if (health !== undefined && typeof health !== 'boolean') throw new FieldError('health: expected true or false');
  const measurements = fields['measurements'];
  if (measurements !== undefined && typeof measurements !== 'boolean') throw new FieldError('measurements: expected true or false');
  const count = (estimators?.length ?? 0) + (entities?.length ?? 0);
  if (count > limits.maxSubscriptions) {
    throw new FieldError(
      `${entities === undefined ? 'estimators' : 'entities'}: at most ${limits.maxSubscriptions} estimator names and entity patterns in one subscription, got ${count}`,
    );
  }
  return {
    op: 'subscribe',
    health: health === true,
    measurements: measurements === true,
    ...(id === undefined ? {} : { id }),
    ...(estimators === undefined ? {} : { estimators }),
    ...(entities === undefined ? {} : { entities }),
    ...(kinds === undefined ? {} : { kinds }),
  };
}

/** An optional array whose items each pass `problem`; throws naming the first bad item. */
function readList(
  fields: Record<string, unknown>, field: string, problem: (item: unknown) => string | null,
): string[] | undefined {
  const value = fields[field];
  if (value === undefined) return undefined;
  if (!Array.isArray(value)) throw new FieldError(`${field}: expected an array`);
  const items: string[] = [];
  for (let i = 0; i < value.length; i++) {
    const item: unknown = value[i];
    const why = problem(item);
    if (why !== null) throw new FieldError(`${field}[${i}]: ${why}`);
    items.push(item as string);
  }
  return items;
}

function readId(value: unknown): RequestId | undefined {
  if (value === undefined) return undefined;
  if (typeof value === 'number' && Number.isFinite(value)) return value;
  if (typeof value === 'string' && value.length <= MAX_REQUEST_ID_LENGTH) return value;
  throw new FieldError(`id: expected a string of at most ${MAX_REQUEST_ID_LENGTH} characters or a finite number`);
}

function checkFields(fields: Record<string, unknown>, allowed: ReadonlySet<string>): void {
  for (const key of Object.keys(fields)) {
    if (!allowed.has(key)) throw new FieldError(`${key.slice(0, 32)}: unknown field`);
  }
}
