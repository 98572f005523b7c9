/**
 * The error a model throws at construction when its configuration cannot describe a valid model
 * (wrong matrix shape, a covariance that is not positive semi-definite, a non-positive time
 * constant). It is a programmer/config error, never a verdict on measured data, so it is the only
 * exception the estimation core raises.
 */

/** A rejected model configuration; `path` names the offending field or matrix, e.g. `Q` or `tauS[1]`. */
export class ModelConfigError extends Error {
  /** The field or matrix the message is about, e.g. `A`, `Q`, `stateNames`, `tauS[1]`. */
  readonly path: string;

  /** Creates the error; `message` should state what was expected and what was found. */
  constructor(path: string, message: string) {
    super(message);
    this.name = 'ModelConfigError';
    this.path = path;
  }
}
