import { describeRecovery } from './recovery-suite.js';
import { levelEstimator, levelRecording } from './tune-fixtures.js';

// Truth: q = 1e-4 m²/s³ (white-noise acceleration), σ = 0.02 m, 1 Hz, 3000 samples; the
// standard error of log q is about 0.06 here. The seed was fixed before the run.
describeRecovery({
  name: 'a constant-velocity tank level',
  truth: [1e-4, 0.02],
  messages: levelRecording('1', 1e-4, 0.02, 3000),
  estimator: levelEstimator,
});
