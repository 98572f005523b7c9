/**
 * Why a measurement was not used: a closed set, so each reason can be a bounded metric label.
 * 'gate': its NIS exceeded the chi-square gate; 'too-late': older than the replay history;
 * 'duplicate': same sensor and time as one already used; 'future': stamped too far ahead of the
 * clock; 'numerics': the update would have produced a non-finite or non-PSD result;
 * 'not-initialized': the track cannot use it before initialization; 'malformed': the values or
 * their covariance are not usable numbers.
 */
export const REJECTION_REASONS = ['gate', 'too-late', 'duplicate', 'future', 'numerics', 'not-initialized', 'malformed'] as const;

/** One of REJECTION_REASONS. */
export type RejectionReason = (typeof REJECTION_REASONS)[number];
