/** Types of ring-series.js for the unit tests (the browser loads the JavaScript as is). */
export declare class RingSeries {
  constructor(columnCount: number, capacity: number, maxAgeS: number);
  readonly capacity: number;
  readonly maxAgeS: number;
  readonly length: number;
  readonly lastTimeS: number;
  readonly firstTimeS: number;
  lastValue(column: number): number;
  push(tS: number, values: ArrayLike<number | null | undefined>): boolean;
  clear(): void;
  toArrays(pick?: readonly number[], sinceS?: number): (number | null)[][];
}
