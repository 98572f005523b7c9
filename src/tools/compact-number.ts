/**
 * Nine-significant-digit JSON number text for the bulk numbers of replay output (covariance
 * entries, NIS values). String(v) finds the shortest round-trip text, which costs several
 * hundred nanoseconds per value here and dominated a replay's own time; nine digits (relative
 * error ≤ 5e-9, far below any covariance's own uncertainty) fit a small integer, whose text V8
 * makes cheaply. Same text as String(v) for values that already have ≤ 9 digits, e.g. 0.25.
 * Deterministic: IEEE arithmetic, Math.log10 and Math.round only.
 */

const SMALLEST = 1e-300;
const LARGEST = 1e300;
/** Exact powers of ten 10^0 … 10^22 (each is a double exactly). */
const EXACT = Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));

/** a × 10^k, correctly rounded when |k| ≤ 22 (one exact multiply or divide). */
function scale(a: number, k: number): number {
  if (k >= 0) return k <= 22 ? a * EXACT[k]! : a * Number(`1e${k}`);
  return -k <= 22 ? a / EXACT[-k]! : a / Number(`1e${-k}`);
}

const ZERO = 0x30;
const digitScratch = new Uint8Array(9);

/**
 * Writes the same text as compactNumber(v) as ASCII bytes into out at pos (out must have 32
 * bytes free there) and returns the position after it: no string is made, which keeps the hot
 * output path free of garbage.
 */
export function writeCompactNumber(out: Uint8Array, pos: number, v: number): number {
  if (v === 0) {
    out[pos] = ZERO;
    return pos + 1;
  }
  const a = v < 0 ? -v : v;
  if (v !== v || a === Infinity || a < SMALLEST || a > LARGEST) {
    const s = v !== v || a === Infinity ? 'null' : String(v);
    for (let i = 0; i < s.length; i++) out[pos++] = s.charCodeAt(i);
    return pos;
  }
  if (v < 0) out[pos++] = 0x2d;
  let e = Math.floor(Math.log10(a));
  let r = Math.round(scale(a, 8 - e));
  if (r >= 1e9) r = Math.round(scale(a, 8 - ++e));
  else if (r < 1e8) r = Math.round(scale(a, 8 - --e));
  if (r >= 1e9) {
    r = 1e8;
    e += 1;
  }
  // Below 10^9 < 2^31: int32 arithmetic from here on.
  let m = r | 0;
  let digits = 9;
  let q = (m / 10) | 0;
  while (m === q * 10) {
    m = q;
    q = (m / 10) | 0;
    digits -= 1;
  }
  const d = digitScratch;
  for (let i = digits - 1; i >= 0; i--) {
    const next = (m / 10) | 0;
    d[i] = ZERO + (m - 10 * next);
    m = next;
  }
  if (e >= 0 && e < 21) {
    for (let i = 0; i < digits; i++) {
      if (i === e + 1) out[pos++] = 0x2e;
      out[pos++] = d[i]!;
    }
    for (let i = digits; i <= e; i++) out[pos++] = ZERO;
  } else if (e < 0 && e >= -6) {
    out[pos++] = ZERO;
    out[pos++] = 0x2e;
    for (let i = -1; i > e; i--) out[pos++] = ZERO;
    for (let i = 0; i < digits; i++) out[pos++] = d[i]!;
  } else {
    out[pos++] = d[0]!;
    if (digits > 1) out[pos++] = 0x2e;
    for (let i = 1; i < digits; i++) out[pos++] = d[i]!;
    out[pos++] = 0x65;
    out[pos++] = e > 0 ? 0x2b : 0x2d;
    const x = e > 0 ? e : -e;
    if (x >= 100) out[pos++] = ZERO + Math.floor(x / 100);
    if (x >= 10) out[pos++] = ZERO + (Math.floor(x / 10) % 10);
    out[pos++] = ZERO + (x % 10);
  }
  return pos;
}

/** JSON text of v with at most nine significant digits; null for NaN and ±Infinity. */
export function compactNumber(v: number): string {
  if (v === 0) return '0';
  if (v !== v || v === Infinity || v === -Infinity) return 'null';
  const neg = v < 0;
  const a = neg ? -v : v;
  if (a < SMALLEST || a > LARGEST) return String(v);
  let e = Math.floor(Math.log10(a));
  let m = Math.round(scale(a, 8 - e));
  // log10 can be off by one next to a power of ten, and rounding can carry to 10^9.
  if (m >= 1e9) m = Math.round(scale(a, 8 - ++e));
  else if (m < 1e8) m = Math.round(scale(a, 8 - --e));
  if (m >= 1e9) {
    m = 1e8;
    e += 1;
  }
  let digits = 9;
  while (m % 10 === 0) {
    m /= 10;
    digits -= 1;
  }
  const d = String(m);
  let s: string;
  if (e >= 0 && e < 21) {
    s = e + 1 >= digits ? d + '0'.repeat(e + 1 - digits) : `${d.slice(0, e + 1)}.${d.slice(e + 1)}`;
  } else if (e < 0 && e >= -6) {
    s = `0.${'0'.repeat(-e - 1)}${d}`;
  } else {
    s = `${digits === 1 ? d : `${d[0]!}.${d.slice(1)}`}e${e > 0 ? '+' : ''}${e}`;
  }
  return neg ? `-${s}` : s;
}

/**
 * Writes a time in seconds exactly as String(tS) would, without making a string, for times on
 * a whole millisecond below 10^12 s (every recorded and simulated time stamp): then the digits
 * of the millisecond count with the point three places in, trailing zeros dropped, are the
 * shortest text that reads back as tS (the double spacing there is far below 1 ms). Other
 * values take String(). out must have 32 bytes free at pos; returns the position after it.
 */
export function writeTimeSeconds(out: Uint8Array, pos: number, tS: number): number {
  const ms = Math.round(tS * 1000);
  if (!(tS >= 0 && tS < 1e12) || ms / 1000 !== tS) {
    const s = Number.isFinite(tS) ? String(tS) : 'null';
    for (let i = 0; i < s.length; i++) out[pos++] = s.charCodeAt(i);
    return pos;
  }
  let whole = Math.floor(ms / 1000);
  let frac = ms - whole * 1000;
  const d = timeScratch;
  let n = 0;
  do {
    const next = Math.floor(whole / 10);
    d[n++] = ZERO + (whole - 10 * next);
    whole = next;
  } while (whole > 0);
  while (n > 0) out[pos++] = d[--n]!;
  if (frac > 0) {
    out[pos++] = 0x2e;
    let digits = 3;
    while (frac % 10 === 0) {
      frac /= 10;
      digits -= 1;
    }
    for (let i = digits - 1; i >= 0; i--) {
      const next = Math.floor(frac / 10);
      d[i] = ZERO + (frac - 10 * next);
      frac = next;
    }
    for (let i = 0; i < digits; i++) out[pos++] = d[i]!;
  }
  return pos;
}

const timeScratch = new Uint8Array(24);
