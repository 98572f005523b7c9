/**
 * The daemon's catalogue of coded errors: every failure that ends a command has a code, a
 * message template and an exit code here, documented in the README. A test checks that each
 * key equals its code, so logs and docs can be searched by code.
 */
export const APP_ERRORS = {
  CONFIG_INVALID: { code: 'CONFIG_INVALID', exitCode: 2, message: 'the configuration is invalid' },
  CONFIG_UNREADABLE: { code: 'CONFIG_UNREADABLE', exitCode: 2, message: 'the configuration file cannot be read' },
  USAGE: { code: 'USAGE', exitCode: 2, message: 'the command line is not understood' },
  EMBEDDED_BROKER_PORT_IN_USE: { code: 'EMBEDDED_BROKER_PORT_IN_USE', exitCode: 1, message: 'the embedded broker port is in use' },
  HTTP_PORT_IN_USE: { code: 'HTTP_PORT_IN_USE', exitCode: 1, message: 'the HTTP port is in use' },
  BROKER_REFUSED: { code: 'BROKER_REFUSED', exitCode: 1, message: 'the broker refused the connection' },
  STARTUP_FAILED: { code: 'STARTUP_FAILED', exitCode: 1, message: 'the daemon could not start' },
  SHUTDOWN_TIMEOUT: { code: 'SHUTDOWN_TIMEOUT', exitCode: 1, message: 'the daemon did not stop within its deadline' },
} as const;

/** A code of the catalogue. */
export type AppErrorCode = keyof typeof APP_ERRORS;

/** An error the CLI reports as `CODE: message` and exits with the catalogue's exit code. */
export class AppError extends Error {
  readonly code: AppErrorCode;
  readonly exitCode: number;

  /** Builds the error; `detail` says what exactly went wrong (names a path, port, field). */
  constructor(code: AppErrorCode, detail: string, options?: { cause?: unknown }) {
    super(`${APP_ERRORS[code].message}: ${detail}`, options);
    this.name = 'AppError';
    this.code = code;
    this.exitCode = APP_ERRORS[code].exitCode;
  }
}
