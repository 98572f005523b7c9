import { describe, it, expect } from 'vitest';
import {
  FIELD_MISSING,
  FIELD_NOT_CONTAINER,
  compileJsonFieldPath,
  lookupJsonField,
} from '../../src/engine/json-field-path.js';
import { PayloadDecoderSpecError } from '../../src/engine/payload-decoder-spec.js';

const at = (json: string, path: string): unknown => lookupJsonField(JSON.parse(json), compileJsonFieldPath(path));

describe('compileJsonFieldPath', () => {
  it.each([
    ['lat', ['lat']],
    ['pos.lat', ['pos', 'lat']],
    ['fix[0]', ['fix', 0]],
    ['[2]', [2]],
    ['gnss.fix[1][12].lon', ['gnss', 'fix', 1, 12, 'lon']],
    ['level m', ['level m']],
  ])('splits %j into keys and indices', (path, segments) => {
    expect(compileJsonFieldPath(path).segments).toEqual(segments);
  });

  it.each(['', '.a', 'a.', 'a..b', 'a[', 'a[]', 'a[x]', 'a[01]', 'a[-1]', 'a]', '[0]b', 'a[0]b', 'a[1234567890]'])(
    'rejects %j naming the path',
    (path) => {
      expect(() => compileJsonFieldPath(path)).toThrow(PayloadDecoderSpecError);
      expect(() => compileJsonFieldPath(path)).toThrow(JSON.stringify(path));
    },
  );
});

describe('lookupJsonField', () => {
  it('reads nested keys and array entries', () => {
    expect(at('{"gnss":{"fix":[{"lon":1},{"lon":4.0512}]}}', 'gnss.fix[1].lon')).toBe(4.0512);
  });

  it('reads into a top-level array', () => {
    expect(at('[3, 4, 5]', '[2]')).toBe(5);
  });

  it('reports a key that is absent', () => {
    expect(at('{"lat":1}', 'lon')).toBe(FIELD_MISSING);
  });

  it('reports an index past the end', () => {
    expect(at('{"fix":[1]}', 'fix[1]')).toBe(FIELD_MISSING);
  });

  it('reports an index into an object as the wrong kind', () => {
    expect(at('{"fix":{"0":1}}', 'fix[0]')).toBe(FIELD_NOT_CONTAINER);
  });

  it('reports a key into an array, number or null as the wrong kind', () => {
    expect(at('{"pos":[1]}', 'pos.lat')).toBe(FIELD_NOT_CONTAINER);
    expect(at('{"pos":3}', 'pos.lat')).toBe(FIELD_NOT_CONTAINER);
    expect(at('{"pos":null}', 'pos.lat')).toBe(FIELD_NOT_CONTAINER);
  });

  it.each(['constructor', 'toString', 'hasOwnProperty', '__proto__', 'prototype', 'valueOf'])(
    'does not find the inherited %j on a plain object',
    (key) => {
      expect(at('{"lat":1}', key)).toBe(FIELD_MISSING);
    },
  );

  it('does not find inherited array members such as length', () => {
    expect(at('{"fix":[1,2]}', 'fix.length')).toBe(FIELD_NOT_CONTAINER);
  });

  it('reads a __proto__ key that the payload itself defines without touching Object.prototype', () => {
    expect(at('{"__proto__":{"lat":7}}', '__proto__.lat')).toBe(7);
    expect(({} as Record<string, unknown>)['lat']).toBeUndefined();
  });
});
