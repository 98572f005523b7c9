/** Types of chart-options.js for the unit tests (the browser loads the JavaScript as is). */
export declare const PALETTE: Readonly<Record<string, string | readonly string[]>>;
export declare function sensorColour(i: number): string;
export declare function tickText(v: number | null | undefined, stepSize: number): string;
