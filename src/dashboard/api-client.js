/**
 * The JSON API as the page uses it: the track list and one track's detail, each request
 * bounded by a timeout. Answers that fail resolve to null; the next poll tries again.
 */
const TIMEOUT_MS = 5000;

async function getJson(path) {
  try {
    const res = await fetch(path, { signal: AbortSignal.timeout(TIMEOUT_MS), headers: { Accept: 'application/json' } });
    return res.ok ? await res.json() : null;
  } catch {
    return null;
  }
}

/** GET /api/v1/tracks. */
export function fetchTracks() {
  return getJson('/api/v1/tracks');
}

/** GET /api/v1/tracks/:estimator/:entity (each part percent-encoded as one segment). */
export function fetchTrackDetail(estimator, entity) {
  return getJson(`/api/v1/tracks/${encodeURIComponent(estimator)}/${encodeURIComponent(entity)}`);
}

/**
 * Calls `task` every `everyMs`, never two at once: a slow answer delays the next call
 * instead of piling requests up.
 */
export function poll(task, everyMs) {
  let timer = 0;
  let stopped = false;
  const run = async () => {
    await task();
    if (!stopped) timer = setTimeout(run, everyMs);
  };
  run();
  return () => {
    stopped = true;
    clearTimeout(timer);
  };
}
