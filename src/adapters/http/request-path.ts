/**
 * Splits a request target into decoded path segments without normalizing it: `..` stays a
 * segment so the static handler can refuse it, and `%2F` inside a segment stays inside it, so an
 * entity such as `dock/tug-01` travels as one segment `dock%2Ftug-01`.
 */

/** The decoded segments of the path (`/` gives `['']`), or null when the target is unusable. */
export function parseRequestPath(target: string): string[] | null {
  // Only origin-form targets (`/path?query`); absolute-form and `*` have no business here.
  if (!target.startsWith('/')) return null;
  let end = target.length;
  const q = target.indexOf('?');
  if (q >= 0) end = q;
  const h = target.indexOf('#');
  if (h >= 0 && h < end) end = h;
  const segments = target.slice(1, end).split('/');
  try {
    return segments.map((s) => decodeURIComponent(s));
  } catch {
    return null; // malformed percent-encoding
  }
}
