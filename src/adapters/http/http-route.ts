/** The shape every admin HTTP route has: the methods it allows and its handler. */
import type { IncomingMessage, ServerResponse } from 'node:http';

/** A matched route. The server answers 405 with `Allow: <allow>` for any other method. */
export interface HttpRoute {
  /** Allowed methods, upper case (GET routes also list HEAD). */
  readonly allow: readonly string[];
  /** Answers the request; a rejection becomes a 500 INTERNAL. */
  handle(req: IncomingMessage, res: ServerResponse): void | Promise<void>;
}

/** The methods of a read-only route. */
export const READ_METHODS: readonly string[] = ['GET', 'HEAD'];
