/** Types of reconnect-backoff.js for the unit tests (the browser loads the JavaScript as is). */
export declare class ReconnectBackoff {
  constructor(options?: { firstMs?: number; maxMs?: number; random?: () => number });
  readonly attempt: number;
  nextDelayMs(): number;
  reset(): void;
}
