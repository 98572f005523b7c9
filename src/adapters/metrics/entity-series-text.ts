/**
 * Prometheus text exposition (format 0.0.4) of the per-entity series, built as plain strings:
 * one string per family, the `estimator`/`entity` label pair escaped once per track and reused
 * by every sample of it. Escaping follows the format: in label values backslash, double quote
 * and newline; in HELP backslash and newline.
 */
import { ENTITY_FAMILIES, type EntityFamilyKey, type EntitySeriesSink } from './entity-series.js';

/** `value` as a label value inside double quotes, escaped per the text format. */
export function escapeLabelValue(value: string): string {
  return /[\\"\n]/.test(value) ? value.replace(/\\/g, '\\\\').replace(/"/g, '\\"').replace(/\n/g, '\\n') : value;
}

/** `text` escaped for a HELP line. */
export function escapeHelp(text: string): string {
  return text.replace(/\\/g, '\\\\').replace(/\n/g, '\\n');
}

const KEYS = Object.keys(ENTITY_FAMILIES) as EntityFamilyKey[];

/** A sink that accumulates the exposition text; `text()` gives the families, each with HELP and TYPE. */
export class EntitySeriesText implements EntitySeriesSink {
  private readonly bodies = Object.fromEntries(KEYS.map((k) => [k, ''])) as Record<EntityFamilyKey, string>;
  // Sensor names come from the configuration: a small, bounded table.
  private readonly sensorLabels = new Map<string, string>();
  private prefix = '';

  track(estimator: string, entity: string): void {
    this.prefix = `{estimator="${escapeLabelValue(estimator)}",entity="${escapeLabelValue(entity)}"`;
  }

  sample(family: EntityFamilyKey, sensor: string | null, component: number | null, value: number): void {
    let line = ENTITY_FAMILIES[family].name + this.prefix;
    if (family === 'healthState' && sensor === null) line += ',sensor=""';
    else if (sensor !== null) line += this.sensorLabel(sensor);
    if (component !== null) line += `,component="${component}"`;
    this.bodies[family] += `${line}} ${value}\n`;
  }

  omitted(estimator: string, count: number): void {
    const line = `${ENTITY_FAMILIES.omitted.name}{estimator="${escapeLabelValue(estimator)}"} ${count}\n`;
    this.bodies.omitted += line;
  }

  /** The families as exposition text, each ending in a newline; families without samples keep HELP and TYPE. */
  text(): string {
    let out = '';
    for (const key of KEYS) {
      const { name, help } = ENTITY_FAMILIES[key];
      out += `# HELP ${name} ${escapeHelp(help)}\n# TYPE ${name} gauge\n${this.bodies[key]}`;
    }
    return out;
  }

  private sensorLabel(sensor: string): string {
    let label = this.sensorLabels.get(sensor);
    if (label === undefined) this.sensorLabels.set(sensor, (label = `,sensor="${escapeLabelValue(sensor)}"`));
    return label;
  }
}
