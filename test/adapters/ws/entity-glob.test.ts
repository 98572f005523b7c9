import { describe, expect, it } from 'vitest';
import { compileEntityGlob, entityGlobProblem, MAX_ENTITY_PATTERN_LENGTH } from '../../../src/adapters/ws/entity-glob.js';

describe('entity glob', () => {
  it('matches a literal name exactly', () => {
    const match = compileEntityGlob('tank-a');
    expect(match('tank-a')).toBe(true);
    expect(match('tank-ab')).toBe(false);
  });

  it('matches a trailing star against any suffix, including none', () => {
    const match = compileEntityGlob('tug-*');
    expect(['tug-01', 'tug-12', 'tug-'].map(match)).toEqual([true, true, true]);
    expect(match('tank-a')).toBe(false);
  });

  it('matches stars in the middle in order', () => {
    const match = compileEntityGlob('t*-*2');
    expect(match('tug-02')).toBe(true);
    expect(match('tug-12')).toBe(true);
    expect(match('tug-01')).toBe(false);
    expect(match('t-2')).toBe(true);
  });

  it('does not let a middle part overlap the suffix', () => {
    const match = compileEntityGlob('a*bb*b');
    expect(match('abb')).toBe(false);
    expect(match('abbb')).toBe(true);
  });

  it('matches everything with a lone star', () => {
    expect(compileEntityGlob('*')('tug-07')).toBe(true);
  });

  it('accepts plain names and star patterns', () => {
    expect(entityGlobProblem('tug-*')).toBeNull();
    expect(entityGlobProblem('tank-a')).toBeNull();
  });

  it('refuses other glob syntax, naming the character', () => {
    expect(entityGlobProblem('tug-0?')).toBe('contains "?"; only "*" is a wildcard');
    expect(entityGlobProblem('tank-[ab]')).toMatch(/"\["/);
  });

  it('refuses empty, overlong, control-character and non-string patterns', () => {
    expect(entityGlobProblem('')).toMatch(/non-empty/);
    expect(entityGlobProblem('x'.repeat(MAX_ENTITY_PATTERN_LENGTH + 1))).toMatch(/longer than/);
    expect(entityGlobProblem('tug\n')).toMatch(/control/);
    expect(entityGlobProblem(7)).toBe('expected a string');
  });
});
