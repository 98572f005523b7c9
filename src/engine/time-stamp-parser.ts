/**
 * Time stamps in payloads: epoch numbers and strict ISO 8601 strings, converted to epoch
 * seconds. Failures come back as NaN (never an exception) so the decoder can reject with
 * 'bad-time'. Stamps outside [MIN_TIME_STAMP_S, MAX_TIME_STAMP_S] count as failures: a sensor
 * that reports 1970 or 2200 has a broken clock, and its data would corrupt a track's timeline.
 */

/** 2000-01-01T00:00:00Z in epoch seconds: earlier stamps are rejected. */
export const MIN_TIME_STAMP_S = 946_684_800;
/** 2100-01-01T00:00:00Z in epoch seconds: later stamps are rejected. */
export const MAX_TIME_STAMP_S = 4_102_444_800;
/**
 * Under 'auto', an epoch number of larger magnitude is milliseconds. 1e11 s lies in the year
 * 5138 and 1e11 ms in 1973, both outside the accepted range, so the rule never misreads a
 * plausible stamp.
 */
export const AUTO_MILLISECONDS_ABOVE = 1e11;

/** The stamp in seconds when it lies in the accepted range, NaN otherwise. */
export function inRangeOrNaN(timeS: number): number {
  return timeS >= MIN_TIME_STAMP_S && timeS <= MAX_TIME_STAMP_S ? timeS : NaN;
}

/** An epoch number in seconds, milliseconds or 'auto' (see AUTO_MILLISECONDS_ABOVE) as seconds, or NaN. */
export function epochNumberToSeconds(value: number, unit: 'auto' | 's' | 'ms'): number {
  const isMs = unit === 'ms' || (unit === 'auto' && Math.abs(value) > AUTO_MILLISECONDS_ABOVE);
  return inRangeOrNaN(isMs ? value / 1000 : value);
}

/**
 * Parses `YYYY-MM-DDTHH:MM:SS[.fraction]` followed by `Z` or `±HH:MM`, the RFC 3339 profile of
 * ISO 8601 (Klyne & Newman, "Date and Time on the Internet: Timestamps", RFC 3339, 2002, §5.6),
 * with upper-case T and Z and 1 to 9 fraction digits, from text[start, end). Returns epoch
 * seconds, or NaN for anything else: no date-only or zone-less forms (which Date.parse would
 * read as local or UTC by guess), no leap second 60, no invalid calendar days.
 */
export function parseIsoTimeStampS(text: string, start = 0, end = text.length): number {
  const n = end - start;
  if (n < 20 || n > 35) return NaN;
  const s = start;
  const year = digitsAt(text, s, 4);
  const month = digitsAt(text, s + 5, 2);
  const day = digitsAt(text, s + 8, 2);
  const hour = digitsAt(text, s + 11, 2);
  const minute = digitsAt(text, s + 14, 2);
  const second = digitsAt(text, s + 17, 2);
  if (
    text.charCodeAt(s + 4) !== 0x2d || text.charCodeAt(s + 7) !== 0x2d ||
    text.charCodeAt(s + 10) !== 0x54 || text.charCodeAt(s + 13) !== 0x3a ||
    text.charCodeAt(s + 16) !== 0x3a
  ) {
    return NaN;
  }
  // A non-digit makes its field NaN, which fails these range checks or poisons the final sum.
  if (month < 1 || month > 12 || day < 1 || day > daysInMonth(year, month)) return NaN;
  if (hour > 23 || minute > 59 || second > 59) return NaN;
  let i = s + 19;
  let fractionS = 0;
  if (text.charCodeAt(i) === 0x2e) {
    let scale = 0.1;
    i += 1;
    const first = i;
    while (i < end && isDigit(text.charCodeAt(i))) {
      fractionS += (text.charCodeAt(i) - 0x30) * scale;
      scale /= 10;
      i += 1;
    }
    if (i === first || i - first > 9) return NaN;
  }
  const offsetS = zoneOffsetS(text, i, end);
  if (Number.isNaN(offsetS)) return NaN;
  const dayNumber = daysFromCivil(year, month, day);
  return inRangeOrNaN(dayNumber * 86400 + hour * 3600 + minute * 60 + second - offsetS + fractionS);
}

/** The zone designator text[i, end) (`Z` or `±HH:MM`) in seconds east of UTC, or NaN. */
function zoneOffsetS(text: string, i: number, end: number): number {
  const c = text.charCodeAt(i);
  if (c === 0x5a) return i + 1 === end ? 0 : NaN;
  if ((c !== 0x2b && c !== 0x2d) || i + 6 !== end || text.charCodeAt(i + 3) !== 0x3a) {
    return NaN;
  }
  const hours = digitsAt(text, i + 1, 2);
  const minutes = digitsAt(text, i + 4, 2);
  if (hours > 23 || minutes > 59) return NaN;
  const offsetS = hours * 3600 + minutes * 60;
  return c === 0x2d ? -offsetS : offsetS;
}

/** The decimal number written by `count` ASCII digits at `start`, or NaN if any is not a digit. */
function digitsAt(text: string, start: number, count: number): number {
  let value = 0;
  for (let i = start; i < start + count; i++) {
    const c = text.charCodeAt(i);
    if (!isDigit(c)) return NaN;
    value = value * 10 + (c - 0x30);
  }
  return value;
}

function isDigit(c: number): boolean {
  return c >= 0x30 && c <= 0x39;
}

function daysInMonth(year: number, month: number): number {
  if (month === 2) return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0 ? 29 : 28;
  return month === 4 || month === 6 || month === 9 || month === 11 ? 30 : 31;
}

/**
 * Days since 1970-01-01 of a proleptic Gregorian date, without a Date object
 * (H. Hinnant, "chrono-Compatible Low-Level Date Algorithms", 2013, days_from_civil).
 */
function daysFromCivil(year: number, month: number, day: number): number {
  const y = month <= 2 ? year - 1 : year;
  const era = Math.floor(y / 400);
  const yearOfEra = y - era * 400;
  const dayOfYear = Math.floor((153 * (month + (month > 2 ? -3 : 9)) + 2) / 5) + day - 1;
  const dayOfEra = yearOfEra * 365 + Math.floor(yearOfEra / 4) - Math.floor(yearOfEra / 100) + dayOfYear;
  return era * 146097 + dayOfEra - 719468;
}
