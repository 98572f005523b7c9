/** Reading a request body with a size limit, so no client can make the daemon buffer much. */
import type { IncomingMessage } from 'node:http';

/** Largest request body accepted, in bytes (16 KiB); larger ones get 413. */
export const MAX_REQUEST_BODY_BYTES = 16 * 1024;

/** True when the declared Content-Length is already above `limitBytes`. */
export function declaredBodyTooLarge(req: IncomingMessage, limitBytes = MAX_REQUEST_BODY_BYTES): boolean {
  const header = req.headers['content-length'];
  return header !== undefined && Number(header) > limitBytes;
}

/**
 * Reads the whole body, or stops at `limitBytes` and resolves null (the caller answers 413 and
 * closes the connection, which discards the rest). Rejects if the client aborts.
 */
export function readRequestBody(req: IncomingMessage, limitBytes = MAX_REQUEST_BODY_BYTES): Promise<Buffer | null> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    const cleanup = () => {
      req.off('data', onData);
      req.off('end', onEnd);
      req.off('error', onError);
    };
    const onData = (chunk: Buffer) => {
      size += chunk.length;
      if (size > limitBytes) {
        cleanup();
        req.pause();
        resolve(null);
        return;
      }
      chunks.push(chunk);
    };
    const onEnd = () => {
      cleanup();
      resolve(Buffer.concat(chunks));
    };
    const onError = (error: Error) => {
      cleanup();
      reject(error);
    };
    req.on('data', onData);
    req.on('end', onEnd);
    req.on('error', onError);
  });
}
