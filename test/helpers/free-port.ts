import { createServer } from 'node:net';

/**
 * A TCP port on 127.0.0.1 that nothing listens on right now, found by letting the kernel pick
 * one for a throw-away server. Another process may take it before the caller binds it, which
 * is rare enough for tests; a broker that then fails to start reports the port it tried.
 */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.unref();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const address = server.address();
      if (address === null || typeof address === 'string') {
        server.close();
        reject(new Error('the kernel gave no TCP port'));
        return;
      }
      const { port } = address;
      server.close((err) => (err ? reject(err) : resolve(port)));
    });
  });
}
