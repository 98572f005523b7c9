import { describe, expect, it } from 'vitest';
import { configJsonSchema } from '../../src/config/load-config.js';

describe('configJsonSchema', () => {
  it('is plain JSON that names draft 2020-12', () => {
    const schema = JSON.parse(JSON.stringify(configJsonSchema())) as Record<string, unknown>;
    expect(schema['$schema']).toBe('https://json-schema.org/draft/2020-12/schema');
  });

  it('lists estimators as the one required top-level key', () => {
    const schema = configJsonSchema() as { properties: Record<string, unknown>; required: string[] };
    expect(Object.keys(schema.properties)).toContain('estimators');
    expect(schema.required).toEqual(['estimators']);
  });

  it('forbids unknown top-level keys', () => {
    expect(configJsonSchema()['additionalProperties']).toBe(false);
  });

  it('describes the input, where rate names are optional', () => {
    const text = JSON.stringify(configJsonSchema());
    expect(text).toContain('"rateNames"');
    expect(text).toContain('"const":"constant-velocity"');
  });
});
