import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import {
  compileTopicPattern,
  entityKeyOf,
  MAX_CAPTURED_VALUE_LENGTH,
  TopicPatternError,
} from '../../src/engine/topic-pattern.js';

describe('compileTopicPattern', () => {
  it('derives the subscription filter and key names of a one-wildcard pattern', () => {
    const p = compileTopicPattern('yard/{vehicle}/gnss');
    expect(p.pattern).toBe('yard/{vehicle}/gnss');
    expect(p.subscriptionFilter).toBe('yard/+/gnss');
    expect(p.keyNames).toEqual(['vehicle']);
  });

  it('keeps the key names of a two-wildcard pattern in order', () => {
    const p = compileTopicPattern('plant/{site}/{tank}/level');
    expect(p.subscriptionFilter).toBe('plant/+/+/level');
    expect(p.keyNames).toEqual(['site', 'tank']);
  });

  it('accepts a pattern that starts with a wildcard', () => {
    expect(compileTopicPattern('{tank}/level').subscriptionFilter).toBe('+/level');
  });

  it.each([
    ['', 'is empty'],
    ['farm//{tank}', 'level 2 is empty'],
    ['/farm/{tank}', 'level 1 is empty'],
    ['farm/{tank}/', 'level 3 is empty'],
    ['farm/+/level', 'MQTT wildcard'],
    ['farm/{tank}/#', 'MQTT wildcard'],
    ['farm/tank+/{tank}', 'MQTT wildcard'],
    ['farm/{tank}/{tank}', 'repeats'],
    ['farm/{1tank}', 'not an identifier'],
    ['farm/{tank-a}', 'not an identifier'],
    ['farm/{}', 'not an identifier'],
    ['farm/tank-{id}', 'mixes braces'],
    ['farm/{id}x', 'mixes braces'],
    ['farm/{a{b}}', 'mixes braces'],
    ['farm/{tank', 'mixes braces'],
    ['farm/tank}', 'mixes braces'],
    ['farm/tank-a/level', 'no named wildcard'],
    ['farm/\u0007/{tank}', 'control character'],
  ])('rejects %j because it %s', (pattern, problem) => {
    let error: unknown;
    try {
      compileTopicPattern(pattern);
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(TopicPatternError);
    const message = (error as TopicPatternError).message;
    expect(message).toContain(JSON.stringify(pattern));
    expect(message).toContain(problem);
    expect((error as TopicPatternError).pattern).toBe(pattern);
  });
});

describe('TopicPattern.match', () => {
  const gnss = compileTopicPattern('yard/{vehicle}/gnss');
  const level = compileTopicPattern('plant/{site}/{tank}/level');

  it('captures the wildcard level of a matching topic', () => {
    expect(gnss.match('yard/tug-07/gnss')).toEqual(['tug-07']);
  });

  it('captures several wildcard levels in pattern order', () => {
    expect(level.match('plant/north/tank-b/level')).toEqual(['north', 'tank-b']);
  });

  it.each([
    'yard/tug-07/imu',
    'yards/tug-07/gnss',
    'yard/tug-07/gnss/extra',
    'yard/tug-07',
    'yard/tug-07/gnss/',
    'yard/tug-07/gns',
    'yard',
    '',
    '/yard/tug-07/gnss',
  ])('returns null for the non-matching topic %j', (topic) => {
    expect(gnss.match(topic)).toBeNull();
  });

  it('returns null when a wildcard level is empty', () => {
    expect(gnss.match('yard//gnss')).toBeNull();
  });

  it('returns null when a captured value holds a control character', () => {
    expect(gnss.match('yard/tug\u000001/gnss')).toBeNull();
    expect(gnss.match('yard/tug\u009f01/gnss')).toBeNull();
    expect(gnss.match('yard/tug\n01/gnss')).toBeNull();
  });

  it('accepts a captured value of the maximum length and rejects one longer', () => {
    const longest = 'x'.repeat(MAX_CAPTURED_VALUE_LENGTH);
    expect(gnss.match(`yard/${longest}/gnss`)).toEqual([longest]);
    expect(gnss.match(`yard/${longest}x/gnss`)).toBeNull();
  });

  it('captures non-ASCII printable values unchanged', () => {
    expect(gnss.match('yard/schlepper-ü/gnss')).toEqual(['schlepper-ü']);
  });

  it('round-trips any printable, slash-free values through the pattern (property)', () => {
    const levelArb = fc
      .string({ minLength: 1, maxLength: MAX_CAPTURED_VALUE_LENGTH })
      .filter((s) => !/[/\u0000-\u001f\u007f-\u009f]/.test(s));
    fc.assert(
      fc.property(levelArb, levelArb, (site, tank) => {
        expect(level.match(`plant/${site}/${tank}/level`)).toEqual([site, tank]);
      }),
    );
  });
});

describe('entityKeyOf', () => {
  it('joins captured values with a slash', () => {
    expect(entityKeyOf(['north', 'tank-b'])).toBe('north/tank-b');
  });

  it('returns the single value of a one-wildcard pattern unchanged', () => {
    expect(entityKeyOf(['tug-12'])).toBe('tug-12');
  });
});
