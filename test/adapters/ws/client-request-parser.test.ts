import { describe, expect, it } from 'vitest';
import { parseClientRequest, type RequestLimits } from '../../../src/adapters/ws/client-request-parser.js';

const limits: RequestLimits = { maxSubscriptions: 3, estimatorNames: new Set(['yard', 'tanks']) };

function refusal(text: string): string {
  const verdict = parseClientRequest(text, limits);
  if (verdict.ok) throw new Error(`expected a refusal for ${text}`);
  return verdict.message;
}

describe('parseClientRequest', () => {
  it('parses a full subscribe request', () => {
    const text = '{"op":"subscribe","id":"a1","estimators":["yard"],"entities":["tug-*"],"kinds":["filtered"],"health":true,"measurements":true}';
    expect(parseClientRequest(text, limits)).toEqual({
      ok: true,
      request: { op: 'subscribe', id: 'a1', estimators: ['yard'], entities: ['tug-*'], kinds: ['filtered'], health: true, measurements: true },
    });
  });

  it('leaves absent lists out and health and measurements off', () => {
    expect(parseClientRequest('{"op":"subscribe"}', limits)).toEqual({ ok: true, request: { op: 'subscribe', health: false, measurements: false } });
  });

  it('parses a ping with a numeric id', () => {
    expect(parseClientRequest('{"op":"ping","id":7}', limits)).toEqual({ ok: true, request: { op: 'ping', id: 7 } });
  });

  it('refuses bad JSON', () => {
    expect(refusal('{"op":')).toMatch(/^bad JSON/);
  });

  it('refuses a frame that is not an object', () => {
    expect(refusal('["subscribe"]')).toMatch(/JSON object/);
  });

  it('refuses an unknown op, naming it', () => {
    expect(refusal('{"op":"watch"}')).toBe('op: unknown op "watch"; expected "subscribe" or "ping"');
  });

  it('refuses a bad entity pattern, naming the field and index', () => {
    expect(refusal('{"op":"subscribe","entities":["tank-a","tug-0?"]}')).toBe('entities[1]: contains "?"; only "*" is a wildcard');
  });

  it('refuses an unknown estimator', () => {
    expect(refusal('{"op":"subscribe","estimators":["harbour"]}')).toBe('estimators[0]: no estimator named "harbour"');
  });

  it('refuses an unknown kind', () => {
    expect(refusal('{"op":"subscribe","kinds":["raw"]}')).toMatch(/^kinds\[0\]: expected one of "filtered"/);
  });

  it('refuses a field that is not an array', () => {
    expect(refusal('{"op":"subscribe","entities":"tug-*"}')).toBe('entities: expected an array');
  });

  it('refuses a non-boolean health', () => {
    expect(refusal('{"op":"subscribe","health":"yes"}')).toBe('health: expected true or false');
  });

  it('refuses unknown fields', () => {
    expect(refusal('{"op":"subscribe","entity":["tug-01"]}')).toBe('entity: unknown field');
  });

  it('refuses more names and patterns than the limit', () => {
    expect(refusal('{"op":"subscribe","estimators":["yard","tanks"],"entities":["tug-01","tug-02"]}'))
      .toMatch(/^entities: at most 3 .* got 4$/);
  });

  it('refuses an id that is neither a short string nor a number', () => {
    expect(refusal('{"op":"ping","id":{"a":1}}')).toMatch(/^id: /);
  });

  it('returns the id with a refusal when the id was valid', () => {
    expect(parseClientRequest('{"op":"subscribe","id":3,"kinds":["raw"]}', limits)).toMatchObject({ ok: false, id: 3 });
  });
});
