/** Types of chart-data.js for the unit tests (the browser loads the JavaScript as is). */
import type { TrackRecord } from './track-store.js';

type Column = (number | null | undefined)[];
type Range = [number, number] | null;

export declare function alignTables(tables: (number | null)[][][]): Column[];
export declare function placeReadings(record: TrackRecord): { byState: Map<string, string[]>; own: string[] };
export declare function stateChartData(record: TrackRecord, i: number, sensors: readonly string[], sinceS: number): { data: Column[]; range: Range };
export declare function readingsChartData(record: TrackRecord, sensor: string, valueIndex: number, sinceS: number): { data: Column[]; range: Range };
export declare function nisChartData(record: TrackRecord, sensor: string, sinceS: number): { data: Column[]; range: [number, number] };
export declare function traceChartData(record: TrackRecord, sinceS: number): { data: Column[] };
export declare function rejectionMarks(record: TrackRecord, sinceS: number): (number | null)[][];
export declare function followRange(values: readonly Column[], sigma: readonly (number | null)[]): Range;
