/**
 * The logging the HTTP adapter needs: the `(object, message)` call shape of pino, so the
 * composition root passes a pino child logger as is and tests pass a recorder.
 * Nothing logged here carries a request header, a query string or the token.
 */
export interface AdminHttpLogger {
  info(fields: Record<string, unknown>, message: string): void;
  warn(fields: Record<string, unknown>, message: string): void;
  error(fields: Record<string, unknown>, message: string): void;
}
