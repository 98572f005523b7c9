import { describeRecovery } from './recovery-suite.js';
import { probeEstimator, probeRecording } from './tune-fixtures.js';

// Truth: q = 0.002 °C²/s, σ = 0.15 °C, 1 Hz, 3000 samples. At this length the standard error
// of log q is about 0.1, so the 15 % check is a 1.5σ test; the seed was fixed before the run.
describeRecovery({
  name: 'a random-walk temperature probe',
  truth: [0.002, 0.15],
  messages: probeRecording('1', 0.002, 0.15, 3000),
  estimator: probeEstimator,
});
