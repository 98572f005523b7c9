/**
 * A small strict parser of the Prometheus text exposition format (version 0.0.4), so tests can
 * check that /metrics output is well formed rather than grep it. It throws on anything the
 * format does not allow: a sample before its TYPE, a family split in two, a sample name that
 * does not fit its family's type, duplicate series or labels, bad escapes, a histogram whose
 * buckets decrease or whose +Inf bucket differs from _count.
 */

/** One sample line. */
export interface PromSample {
  readonly name: string;
  readonly labels: Readonly<Record<string, string>>;
  readonly value: number;
}

/** A metric family: its HELP, TYPE and samples. */
export interface PromFamily {
  readonly name: string;
  help: string | null;
  type: PromType;
  readonly samples: PromSample[];
}

/** The types the format names. */
export type PromType = 'counter' | 'gauge' | 'histogram' | 'summary' | 'untyped';

/** Options of parsePrometheusText. */
export interface ParseOptions {
  /** Every family name must start with it (e.g. `statecast_`). */
  readonly requirePrefix?: string;
}

const METRIC_NAME = /^[a-zA-Z_:][a-zA-Z0-9_:]*$/;
const LABEL_NAME = /^[a-zA-Z_][a-zA-Z0-9_]*$/;
const TYPES: ReadonlySet<string> = new Set(['counter', 'gauge', 'histogram', 'summary', 'untyped']);

/** Parses exposition text into families by name; throws with the line number on any error. */
export function parsePrometheusText(text: string, options: ParseOptions = {}): Map<string, PromFamily> {
  if (text !== '' && !text.endsWith('\n')) throw new Error('the exposition does not end with a newline');
  const families = new Map<string, PromFamily>();
  const seriesSeen = new Set<string>();
  let current: PromFamily | null = null;
  const lines = text.split('\n');
  lines.pop();
  lines.forEach((line, index) => {
    const where = `line ${index + 1}`;
    const family = (name: string): PromFamily => {
      if (!METRIC_NAME.test(name)) throw new Error(`${where}: bad metric name "${name}"`);
      if (options.requirePrefix !== undefined && !name.startsWith(options.requirePrefix)) {
        throw new Error(`${where}: "${name}" lacks the prefix ${options.requirePrefix}`);
      }
      let f = families.get(name);
      if (f === undefined) {
        f = { name, help: null, type: 'untyped', samples: [] };
        families.set(name, f);
      } else if (f !== current) {
        throw new Error(`${where}: family ${name} is split by another family`);
      }
      current = f;
      return f;
    };
    if (line === '') return;
    if (line.startsWith('#')) {
      const m = /^# (HELP|TYPE) (\S+)(?: (.*))?$/.exec(line);
      if (m === null) return; // a plain comment, which the format allows
      const f = family(m[2]!);
      if (m[1] === 'HELP') {
        if (f.help !== null) throw new Error(`${where}: second HELP for ${f.name}`);
        f.help = unescapeHelp(m[3] ?? '', where);
      } else {
        const type = m[3] ?? '';
        if (!TYPES.has(type)) throw new Error(`${where}: unknown type "${type}"`);
        if (f.samples.length > 0) throw new Error(`${where}: TYPE of ${f.name} after its samples`);
        f.type = type as PromType;
      }
      return;
    }
    const sample = parseSampleLine(line, where);
    const f = familyOfSample(sample.name, families, current);
    if (f === null) throw new Error(`${where}: sample ${sample.name} has no TYPE line before it`);
    family(f.name);
    checkSampleFitsFamily(sample, f, where);
    const key = `${sample.name}${JSON.stringify(Object.entries(sample.labels).sort())}`;
    if (seriesSeen.has(key)) throw new Error(`${where}: duplicate series ${key}`);
    seriesSeen.add(key);
    f.samples.push(sample);
  });
  for (const f of families.values()) if (f.type === 'histogram') checkHistogram(f);
  return families;
}

/** The value of the one sample with exactly these labels, or undefined. */
export function sampleValue(
  families: Map<string, PromFamily>, sampleName: string, labels: Record<string, string> = {},
): number | undefined {
  for (const f of families.values()) {
    for (const s of f.samples) {
      if (s.name === sampleName && sameLabels(s.labels, labels)) return s.value;
    }
  }
  return undefined;
}

/** Samples of one name whose labels include `labels`. */
export function samplesOf(
  families: Map<string, PromFamily>, sampleName: string, labels: Record<string, string> = {},
): PromSample[] {
  const out: PromSample[] = [];
  for (const f of families.values()) {
    for (const s of f.samples) {
      if (s.name === sampleName && Object.entries(labels).every(([k, v]) => s.labels[k] === v)) out.push(s);
    }
  }
  return out;
}

function sameLabels(a: Readonly<Record<string, string>>, b: Record<string, string>): boolean {
  const ka = Object.keys(a);
  return ka.length === Object.keys(b).length && ka.every((k) => a[k] === b[k]);
}

function parseSampleLine(line: string, where: string): PromSample {
  const nameMatch = /^[a-zA-Z_:][a-zA-Z0-9_:]*/.exec(line);
  if (nameMatch === null) throw new Error(`${where}: no metric name in "${line}"`);
  const name = nameMatch[0];
  let i = name.length;
  const labels: Record<string, string> = {};
  if (line[i] === '{') {
    i++;
    while (line[i] !== '}') {
      const lm = /^[a-zA-Z_][a-zA-Z0-9_]*/.exec(line.slice(i));
      if (lm === null || !LABEL_NAME.test(lm[0])) throw new Error(`${where}: bad label name at column ${i + 1}`);
      const labelName = lm[0];
      i += labelName.length;
      if (line[i] !== '=' || line[i + 1] !== '"') throw new Error(`${where}: expected ="value" after ${labelName}`);
      i += 2;
      let value = '';
      for (;;) {
        const c = line[i];
        if (c === undefined) throw new Error(`${where}: unterminated label value`);
        i++;
        if (c === '"') break;
        if (c === '\\') {
          const e = line[i++];
          if (e === '\\') value += '\\';
          else if (e === '"') value += '"';
          else if (e === 'n') value += '\n';
          else throw new Error(`${where}: bad escape \\${e ?? ''} in a label value`);
        } else value += c;
      }
      if (Object.hasOwn(labels, labelName)) throw new Error(`${where}: label ${labelName} given twice`);
      labels[labelName] = value;
      if (line[i] === ',') i++;
      else if (line[i] !== '}') throw new Error(`${where}: expected , or } at column ${i + 1}`);
    }
    i++;
  }
  const rest = line.slice(i);
  const vm = /^ (\S+)(?: (-?\d+))?$/.exec(rest);
  if (vm === null) throw new Error(`${where}: expected " value [timestamp]" but found "${rest}"`);
  return { name, labels, value: parseValue(vm[1]!, where) };
}

/**
 * Prometheus reads values with Go's ParseFloat, which accepts NaN and Inf in any letter case
 * (prom-client writes "Nan"); anything else must be a plain decimal or exponent number.
 */
function parseValue(text: string, where: string): number {
  const lower = text.toLowerCase();
  if (lower === 'nan') return Number.NaN;
  if (lower === '+inf' || lower === 'inf') return Number.POSITIVE_INFINITY;
  if (lower === '-inf') return Number.NEGATIVE_INFINITY;
  if (!/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(text)) throw new Error(`${where}: bad value "${text}"`);
  return Number(text);
}

function unescapeHelp(text: string, where: string): string {
  return text.replace(/\\(.?)/g, (_, e: string) => {
    if (e === '\\') return '\\';
    if (e === 'n') return '\n';
    throw new Error(`${where}: bad escape \\${e} in HELP`);
  });
}

function familyOfSample(
  sampleName: string, families: Map<string, PromFamily>, current: PromFamily | null,
): PromFamily | null {
  const exact = families.get(sampleName);
  if (exact !== undefined) return exact;
  for (const suffix of ['_bucket', '_sum', '_count']) {
    if (!sampleName.endsWith(suffix)) continue;
    const f = families.get(sampleName.slice(0, -suffix.length));
    if (f !== undefined && (f.type === 'histogram' || (f.type === 'summary' && suffix !== '_bucket'))) return f;
  }
  return current !== null && current.name === sampleName ? current : null;
}

function checkSampleFitsFamily(s: PromSample, f: PromFamily, where: string): void {
  const suffix = s.name.slice(f.name.length);
  switch (f.type) {
    case 'counter':
    case 'gauge':
    case 'untyped':
      if (suffix !== '') throw new Error(`${where}: ${s.name} in ${f.type} family ${f.name}`);
      break;
    case 'histogram':
      if (suffix === '_bucket') {
        if (s.labels['le'] === undefined) throw new Error(`${where}: bucket without le`);
        parseValue(s.labels['le'], where);
      } else if (suffix !== '_sum' && suffix !== '_count') {
        throw new Error(`${where}: ${s.name} in histogram ${f.name}`);
      } else if (s.labels['le'] !== undefined) throw new Error(`${where}: le on ${s.name}`);
      break;
    case 'summary':
      if (suffix === '' && s.labels['quantile'] === undefined) throw new Error(`${where}: summary sample without quantile`);
      break;
    default: {
      const never: never = f.type;
      throw new Error(`unknown type ${String(never)}`);
    }
  }
  if (f.type === 'counter' && !(s.value >= 0)) throw new Error(`${where}: counter ${s.name} is ${s.value}`);
}

function checkHistogram(f: PromFamily): void {
  const groups = new Map<string, { buckets: [number, number][]; count?: number }>();
  for (const s of f.samples) {
    const { le, ...rest } = s.labels;
    const key = JSON.stringify(Object.entries(rest).sort());
    let g = groups.get(key);
    if (g === undefined) groups.set(key, (g = { buckets: [] }));
    if (s.name.endsWith('_bucket')) g.buckets.push([parseValue(le!, f.name), s.value]);
    else if (s.name.endsWith('_count')) g.count = s.value;
  }
  for (const [key, g] of groups) {
    g.buckets.sort((a, b) => a[0] - b[0]);
    for (let i = 1; i < g.buckets.length; i++) {
      if (g.buckets[i]![1] < g.buckets[i - 1]![1]) throw new Error(`${f.name}${key}: buckets decrease`);
    }
    const last = g.buckets[g.buckets.length - 1];
    if (last === undefined || last[0] !== Number.POSITIVE_INFINITY) throw new Error(`${f.name}${key}: no +Inf bucket`);
    if (g.count !== last[1]) throw new Error(`${f.name}${key}: _count ${g.count} differs from the +Inf bucket ${last[1]}`);
  }
}
