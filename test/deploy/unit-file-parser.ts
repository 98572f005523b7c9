/**
 * A small reader of systemd unit files (the INI-like syntax of systemd.syntax(7)): `[Section]`
 * headers, `Key=Value` lines (a key may repeat, e.g. Environment=), `#` and `;` comments,
 * and a trailing backslash continuing a line. It throws on a line it cannot place.
 */

/** The entries of each section in file order; values keep their inner spacing. */
export type UnitFile = ReadonlyMap<string, readonly (readonly [string, string])[]>;

/** Parses a unit file's text. */
export function parseUnitFile(text: string): UnitFile {
  const sections = new Map<string, [string, string][]>();
  let current: [string, string][] | null = null;
  const lines = text.replace(/\\\r?\n/g, ' ').split(/\r?\n/);
  lines.forEach((raw, i) => {
    const line = raw.trim();
    if (line === '' || line.startsWith('#') || line.startsWith(';')) return;
    const header = /^\[([A-Za-z][A-Za-z0-9-]*)\]$/.exec(line);
    if (header !== null) {
      if (sections.has(header[1]!)) throw new Error(`line ${i + 1}: section [${header[1]}] appears twice`);
      current = [];
      sections.set(header[1]!, current);
      return;
    }
    const entry = /^([A-Za-z][A-Za-z0-9]*)\s*=\s*(.*)$/.exec(line);
    if (entry === null || current === null) throw new Error(`line ${i + 1}: expected [Section] or Key=Value, got ${line}`);
    current.push([entry[1]!, entry[2]!]);
  });
  return sections;
}

/** Every value of `key` in `section` (empty when absent). */
export function unitValues(unit: UnitFile, section: string, key: string): string[] {
  return (unit.get(section) ?? []).filter(([k]) => k === key).map(([, v]) => v);
}

/** The single value of `key` in `section`; throws when absent or repeated. */
export function unitValue(unit: UnitFile, section: string, key: string): string {
  const values = unitValues(unit, section, key);
  if (values.length !== 1) throw new Error(`[${section}] ${key}: expected one value, found ${values.length}`);
  return values[0]!;
}
