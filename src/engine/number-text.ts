/**
 * Numbers written as text (bare-number and CSV payloads), held to the JSON number grammar
 * (Bray, "The JavaScript Object Notation (JSON) Data Interchange Format", RFC 8259, 2017, §6)
 * so that what Number() would also accept ('', '0x1f', 'Infinity', '1_000', ' ') is refused.
 */

/**
 * The number written in text[start, end) after trimming ASCII whitespace, or NaN when that is
 * not a JSON number. A grammatical number too large for a double comes back as ±Infinity.
 */
export function parseNumberText(text: string, start: number, end: number): number {
  while (start < end && isSpace(text.charCodeAt(start))) start += 1;
  while (end > start && isSpace(text.charCodeAt(end - 1))) end -= 1;
  if (!isJsonNumber(text, start, end)) return NaN;
  return Number(start === 0 && end === text.length ? text : text.slice(start, end));
}

/** True when text[start, end) is exactly `-? (0 | [1-9][0-9]*) (. [0-9]+)? ([eE] [+-]? [0-9]+)?`. */
function isJsonNumber(text: string, start: number, end: number): boolean {
  let i = start;
  if (i < end && text.charCodeAt(i) === 0x2d) i += 1;
  if (i >= end) return false;
  if (text.charCodeAt(i) === 0x30) {
    i += 1;
  } else {
    const first = i;
    i = skipDigits(text, i, end);
    if (i === first) return false;
  }
  if (i < end && text.charCodeAt(i) === 0x2e) {
    const first = i + 1;
    i = skipDigits(text, first, end);
    if (i === first) return false;
  }
  if (i < end && (text.charCodeAt(i) | 0x20) === 0x65) {
    i += 1;
    if (i < end && (text.charCodeAt(i) === 0x2b || text.charCodeAt(i) === 0x2d)) i += 1;
    const first = i;
    i = skipDigits(text, i, end);
    if (i === first) return false;
  }
  return i === end;
}

function skipDigits(text: string, i: number, end: number): number {
  while (i < end) {
    const c = text.charCodeAt(i);
    if (c < 0x30 || c > 0x39) break;
    i += 1;
  }
  return i;
}

/** Space, tab, line feed and carriage return: the whitespace JSON allows around a value. */
function isSpace(c: number): boolean {
  return c === 0x20 || c === 0x09 || c === 0x0a || c === 0x0d;
}
