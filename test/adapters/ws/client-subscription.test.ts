import { describe, expect, it } from 'vitest';
import { ClientSubscription } from '../../../src/adapters/ws/client-subscription.js';

describe('ClientSubscription', () => {
  it('matches everything when no list is given', () => {
    const sub = new ClientSubscription({ health: false });
    expect(sub.matchesEstimate('yard', 'tug-03', 'predicted')).toBe(true);
  });

  it('filters by estimator', () => {
    const sub = new ClientSubscription({ estimators: ['tanks'], health: false });
    expect(sub.matchesEstimate('tanks', 'tank-a', 'filtered')).toBe(true);
    expect(sub.matchesEstimate('yard', 'tug-01', 'filtered')).toBe(false);
  });

  it('filters by entity name and pattern together', () => {
    const sub = new ClientSubscription({ entities: ['tank-a', 'tug-1*'], health: false });
    expect(sub.matchesEstimate('any', 'tank-a', 'filtered')).toBe(true);
    expect(sub.matchesEstimate('any', 'tug-12', 'filtered')).toBe(true);
    expect(sub.matchesEstimate('any', 'tug-02', 'filtered')).toBe(false);
    expect(sub.matchesEstimate('any', 'tank-b', 'filtered')).toBe(false);
  });

  it('filters by kind', () => {
    const sub = new ClientSubscription({ kinds: ['smoothed'], health: false });
    expect(sub.matchesEstimate('yard', 'tug-01', 'smoothed')).toBe(true);
    expect(sub.matchesEstimate('yard', 'tug-01', 'filtered')).toBe(false);
  });

  it('matches nothing for an empty list', () => {
    const sub = new ClientSubscription({ kinds: [], health: true });
    expect(sub.matchesEstimate('yard', 'tug-01', 'filtered')).toBe(false);
  });

  it('wants health only when asked, for matching tracks', () => {
    const sub = new ClientSubscription({ kinds: [], entities: ['tank-*'], health: true });
    expect(sub.matchesHealth('tanks', 'tank-c')).toBe(true);
    expect(sub.matchesHealth('yard', 'tug-01')).toBe(false);
    expect(new ClientSubscription({ health: false }).matchesHealth('tanks', 'tank-c')).toBe(false);
  });
});
