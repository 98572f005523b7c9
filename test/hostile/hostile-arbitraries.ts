/**
 * fast-check arbitraries for hostile input: number texts that JSON or Number() treat oddly,
 * values of every wrong type, prototype keys, invalid UTF-8, deep nesting, and JSON documents
 * built around a decoder's own field paths so a fuzz run reaches every branch of the decoder
 * instead of stopping at "not JSON".
 */
import fc from 'fast-check';
import { compileJsonFieldPath } from '../../src/engine/json-field-path.js';

/** Number texts: finite doubles, overflow and underflow, and texts Number() accepts but JSON does not. */
export const hostileNumberText: fc.Arbitrary<string> = fc.oneof(
  fc.double({ noNaN: true, noDefaultInfinity: true }).map(String),
  fc.integer().map(String),
  fc.constantFrom(
    '1e999', '-1e999', '1e-999', '-0', '9'.repeat(400), '0.' + '0'.repeat(400) + '1', '1e308', '-1.7976931348623157e308',
    '0x1F', 'NaN', 'Infinity', '-Infinity', '1_000', ' 1 ', '+1', '.5', '1.', '', '01', '1e', '--1', '1e+', '١٢٣',
    '1767254400', '1767254400123', '4102444800', '946684799', '-1767254400', '9007199254740993',
  ),
);

/** Strings: empty, long, unicode (astral, RTL, NUL), ISO-looking time stamps valid and not. */
export const hostileString: fc.Arbitrary<string> = fc.oneof(
  fc.string({ maxLength: 20 }),
  fc.string({ unit: 'binary', maxLength: 20 }),
  fc.constantFrom(
    '', '\u0000', '\uD800', '𝔱𝔞𝔫𝔨', 'مستوى', 'x'.repeat(5000), '2026-01-12T08:00:00Z', '2026-01-12T08:00:00.123+02:00',
    '2026-02-30T00:00:00Z', '1999-12-31T23:59:59Z', '2100-01-01T00:00:01Z', '2026-01-12 08:00:00', 'T', 'Z', '2026-01-12T25:00:00Z',
  ),
);

/** Keys that reach the prototype chain when code reads properties carelessly. */
export const PROTOTYPE_KEYS = ['__proto__', 'constructor', 'prototype', 'toString', 'valueOf', 'hasOwnProperty'] as const;

/** Any JSON value as text, including huge numbers and prototype keys, nested a little. */
export const hostileJsonValue: fc.Arbitrary<string> = fc.letrec<{ node: string }>((tie) => ({
  node: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    hostileNumberText.filter((t) => isJsonNumberText(t)),
    hostileString.map((s) => JSON.stringify(s)),
    fc.constantFrom('null', 'true', 'false', '[]', '{}'),
    fc.array(tie('node'), { maxLength: 6 }).map((items) => `[${items.join(',')}]`),
    fc.array(fc.tuple(fc.oneof(fc.constantFrom(...PROTOTYPE_KEYS), fc.string({ maxLength: 6 })), tie('node')), { maxLength: 5 })
      .map((entries) => `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${v}`).join(',')}}`),
  ),
})).node;

function isJsonNumberText(text: string): boolean {
  return /^-?(0|[1-9][0-9]*)(\.[0-9]+)?([eE][+-]?[0-9]+)?$/.test(text);
}

/** Byte sequences that are not valid UTF-8 (lone continuation, overlong, surrogate, truncated). */
export const invalidUtf8: fc.Arbitrary<Uint8Array> = fc
  .tuple(fc.string({ maxLength: 10 }), fc.constantFrom([0x80], [0xc0, 0x80], [0xed, 0xa0, 0x80], [0xe2, 0x82], [0xff], [0xf8, 0x88, 0x80, 0x80, 0x80]))
  .map(([text, bad]) => Uint8Array.from([...Buffer.from(text, 'utf8'), ...bad, ...Buffer.from(text, 'utf8')]));

/** Deeply nested arrays or objects (as text). */
export const deepJson: fc.Arbitrary<string> = fc
  .tuple(fc.integer({ min: 100, max: 20_000 }), fc.boolean(), fc.boolean())
  .map(([depth, arrays, closed]) => {
    const open = arrays ? '['.repeat(depth) : '{"a":'.repeat(depth);
    const close = closed ? (arrays ? ']'.repeat(depth) : '}'.repeat(depth)) : '';
    return `${open}${arrays ? '' : '1'}${close}`;
  });

type Node = { kind: 'object'; entries: Map<string, Node> } | { kind: 'array'; items: Node[] } | { kind: 'leaf'; text: string };

function serialize(node: Node): string {
  switch (node.kind) {
    case 'leaf':
      return node.text;
    case 'array':
      return `[${node.items.map(serialize).join(',')}]`;
    case 'object':
      // Written as text: a JavaScript object literal would turn "__proto__" into the prototype.
      return `{${[...node.entries].map(([k, v]) => `${JSON.stringify(k)}:${serialize(v)}`).join(',')}}`;
  }
}

function place(root: Node, segments: readonly (string | number)[], leaf: string): Node {
  if (segments.length === 0) return { kind: 'leaf', text: leaf };
  const [head, ...rest] = segments;
  if (typeof head === 'number') {
    const node: Node = root.kind === 'array' ? root : { kind: 'array', items: [] };
    while (node.items.length <= head) node.items.push({ kind: 'leaf', text: '0' });
    node.items[head] = place(node.items[head]!, rest, leaf);
    return node;
  }
  const node: Node = root.kind === 'object' ? root : { kind: 'object', entries: new Map() };
  node.entries.set(head!, place(node.entries.get(head!) ?? { kind: 'leaf', text: 'null' }, rest, leaf));
  return node;
}

/** What to put at one configured path: a plausible value, a hostile one, or nothing at all. */
const slotText = (plausible: fc.Arbitrary<string>): fc.Arbitrary<string | null> =>
  fc.oneof({ weight: 3, arbitrary: plausible }, { weight: 3, arbitrary: hostileJsonValue }, { weight: 1, arbitrary: fc.constant(null) });

/** The paths of a JSON decoder spec and what a plausible value at each looks like. */
export interface JsonSpecShape {
  readonly values: readonly string[];
  readonly time?: string;
  readonly sigma?: string;
  readonly covariance?: string;
  readonly sequence?: string;
}

/**
 * JSON documents shaped like the spec: each configured path holds a plausible value, a hostile
 * one, or is absent; prototype keys and junk are scattered around them.
 */
export function documentsFor(spec: JsonSpecShape, dim: number): fc.Arbitrary<string> {
  const plausibleNumber = fc.double({ min: -1e6, max: 1e6, noNaN: true }).map(String);
  const plausibleTime = fc.oneof(
    fc.double({ min: 946_684_800, max: 4_102_444_800, noNaN: true }).map(String),
    fc.integer({ min: 946_684_800_000, max: 4_102_444_800_000 }).map(String),
    fc.date({ min: new Date('2000-01-01'), max: new Date('2099-12-31'), noInvalidDate: true }).map((d) => JSON.stringify(d.toISOString())),
  );
  const plausibleSigma = fc.oneof(
    fc.double({ min: 1e-3, max: 1e3, noNaN: true }).map(String),
    fc.array(fc.double({ min: 1e-3, max: 1e3, noNaN: true }), { minLength: dim, maxLength: dim }).map((a) => JSON.stringify(a)),
  );
  const plausibleCovariance = fc.oneof(
    fc.array(fc.double({ min: -10, max: 10, noNaN: true }), { minLength: dim * dim, maxLength: dim * dim }).map((a) => JSON.stringify(a)),
    fc.array(fc.double({ min: 0.01, max: 10, noNaN: true }), { minLength: (dim * (dim + 1)) / 2, maxLength: (dim * (dim + 1)) / 2 }).map((a) => JSON.stringify(a)),
  );
  const plausibleSequence = fc.oneof(fc.nat().map(String), fc.constantFrom('-1', '1.5', '9007199254740993', '"7"'));
  const slots: [string, fc.Arbitrary<string>][] = spec.values.map((path) => [path, plausibleNumber]);
  if (spec.time !== undefined) slots.push([spec.time, plausibleTime]);
  if (spec.sigma !== undefined) slots.push([spec.sigma, plausibleSigma]);
  if (spec.covariance !== undefined) slots.push([spec.covariance, plausibleCovariance]);
  if (spec.sequence !== undefined) slots.push([spec.sequence, plausibleSequence]);
  const junk = fc.array(fc.tuple(fc.oneof(fc.constantFrom(...PROTOTYPE_KEYS), fc.string({ maxLength: 6 })), hostileJsonValue), { maxLength: 4 });
  return fc.tuple(fc.tuple(...slots.map(([, arb]) => slotText(arb))), junk).map(([texts, extra]) => {
    let root: Node = { kind: 'object', entries: new Map() };
    for (const [k, v] of extra) root = place(root, [k], v);
    texts.forEach((text, i) => {
      if (text !== null) root = place(root, compileJsonFieldPath(slots[i]![0]).segments, text);
    });
    return serialize(root);
  });
}

/** One CSV record from hostile fields, with the spec's separator or another one, and odd line endings. */
export function csvRecords(separator: string): fc.Arbitrary<string> {
  const field = fc.oneof(hostileNumberText, fc.string({ maxLength: 12 }), fc.constantFrom('2026-01-12T08:00:00Z', '1767254400.25', '"1"', ''));
  return fc
    .tuple(fc.array(field, { maxLength: 8 }), fc.constantFrom(separator, separator, ',', ';', '\t', ' '), fc.constantFrom('', '', '\n', '\r\n', '\r', '\n1,2'))
    .map(([fields, sep, ending]) => fields.join(sep) + ending);
}

/** Arbitrary bytes, UTF-8 text in any script, or invalid UTF-8. */
export const hostileBytes: fc.Arbitrary<Uint8Array> = fc.oneof(
  fc.uint8Array({ maxLength: 400 }),
  fc.string({ unit: 'binary', maxLength: 200 }).map((s) => Uint8Array.from(Buffer.from(s, 'utf8'))),
  invalidUtf8,
  fc.string({ maxLength: 60 }).map((s) => Uint8Array.from(Buffer.from(`\uFEFF${s}`, 'utf8'))),
);
