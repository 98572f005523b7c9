/** Checks `Authorization: Bearer <token>` against the configured token in constant time. */
import { createHash, timingSafeEqual } from 'node:crypto';

/**
 * Returns a check of an Authorization header against `token`. Both sides are hashed to SHA-256
 * first, so the comparison takes the same time whatever the length or content of the guess
 * (timingSafeEqual alone needs equal lengths and would leak the length by refusing early).
 */
export function createBearerCheck(token: string): (authorization: string | undefined) => boolean {
  const expected = digest(token);
  return (authorization) => {
    if (authorization === undefined) return false;
    const match = /^Bearer +(\S+) *$/i.exec(authorization);
    if (match === null) return false;
    return timingSafeEqual(digest(match[1]!), expected);
  };
}

function digest(text: string): Buffer {
  return createHash('sha256').update(text, 'utf8').digest();
}
