import type { EstimateKind } from '../../engine/estimate-message.js';
import { compileEntityGlob, isEntityGlob, type EntityMatcher } from './entity-glob.js';

/**
 * What one client asked for. An absent list matches everything; an empty list matches nothing
 * (so `kinds: []` with `health: true` asks for health changes only).
 */
export interface SubscriptionFilter {
  readonly estimators?: readonly string[];
  /** Entity names or `*` patterns, already validated. */
  readonly entities?: readonly string[];
  readonly kinds?: readonly EstimateKind[];
  /** Push health changes of the matching tracks. */
  readonly health: boolean;
  /** Push each measurement outcome of the matching tracks (for live plots). Default false. */
  readonly measurements?: boolean;
}

/** A client's active subscription, compiled once so matching an event is a few set look-ups. */
export class ClientSubscription {
  private readonly estimators: ReadonlySet<string> | null;
  private readonly kinds: ReadonlySet<EstimateKind> | null;
  /** Exact names, looked up in a set; patterns, tried in turn. Null: every entity. */
  private readonly entityNames: ReadonlySet<string> | null;
  private readonly entityGlobs: readonly EntityMatcher[];
  private readonly health: boolean;
  private readonly measurements: boolean;

  /** Compiles the filter; the patterns must have passed entityGlobProblem. */
  constructor(filter: SubscriptionFilter) {
    this.estimators = filter.estimators === undefined ? null : new Set(filter.estimators);
    this.kinds = filter.kinds === undefined ? null : new Set(filter.kinds);
    if (filter.entities === undefined) {
      this.entityNames = null;
      this.entityGlobs = [];
    } else {
      this.entityNames = new Set(filter.entities.filter((p) => !isEntityGlob(p)));
      this.entityGlobs = filter.entities.filter(isEntityGlob).map(compileEntityGlob);
    }
    this.health = filter.health;
    this.measurements = filter.measurements === true;
  }

  /** True when measurement outcomes of this track are wanted. */
  matchesMeasurement(estimator: string, entity: string): boolean {
    return this.measurements && this.matchesTrack(estimator, entity);
  }

  /** True when an estimate of this track and kind is wanted. */
  matchesEstimate(estimator: string, entity: string, kind: EstimateKind): boolean {
    if (this.kinds !== null && !this.kinds.has(kind)) return false;
    return this.matchesTrack(estimator, entity);
  }

  /** True when a health change of this track (or one of its sensors) is wanted. */
  matchesHealth(estimator: string, entity: string): boolean {
    return this.health && this.matchesTrack(estimator, entity);
  }

  private matchesTrack(estimator: string, entity: string): boolean {
    if (this.estimators !== null && !this.estimators.has(estimator)) return false;
    if (this.entityNames === null || this.entityNames.has(entity)) return true;
    for (let i = 0; i < this.entityGlobs.length; i++) {
      if (this.entityGlobs[i]!(entity)) return true;
    }
    return false;
  }
}
