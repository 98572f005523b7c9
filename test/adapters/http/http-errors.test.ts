import { describe, expect, it } from 'vitest';
import { HTTP_ERRORS } from '../../../src/adapters/http/http-errors.js';

describe('HTTP_ERRORS', () => {
  it('keys every entry by its own code', () => {
    for (const [key, spec] of Object.entries(HTTP_ERRORS)) expect(spec.code).toBe(key);
  });

  it('gives every entry an error status and a message', () => {
    for (const spec of Object.values(HTTP_ERRORS)) {
      expect(spec.status).toBeGreaterThanOrEqual(400);
      expect(spec.status).toBeLessThan(600);
      expect(spec.message.length).toBeGreaterThan(0);
    }
  });
});
