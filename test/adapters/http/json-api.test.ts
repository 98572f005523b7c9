import { request } from 'node:http';
import { afterEach, describe, expect, it } from 'vitest';
import { ADVISORY_NOTICE } from '../../../src/adapters/http/json-api-routes.js';
import { recordingLogger, startAdmin, stopAllAdmins, TEST_TOKEN } from './http-fixture.js';

afterEach(stopAllAdmins);

const errorCode = async (res: Response) => ((await res.json()) as { error: { code: string } }).error.code;
const resetUrl = (base: string, entity = 'tug-07') => `${base}/api/v1/tracks/yard/${encodeURIComponent(entity)}/reset`;

describe('JSON API: reading', () => {
  it('lists every track with its health and the advisory notice', async () => {
    const { base } = await startAdmin();
    const body = (await (await fetch(`${base}/api/v1/tracks`)).json()) as {
      notice: string; tracks: { estimator: string; entity: string; health: { state: string } }[];
    };
    expect(body.notice).toBe(ADVISORY_NOTICE);
    const names = body.tracks.map((t) => `${t.estimator}/${t.entity}`);
    expect(names).toEqual(['tanks/tank-a', 'yard/tug-07', 'yard/dock/tug-12']);
    expect(body.tracks[0]?.health).toEqual({ state: 'ok', reasons: [] });
  });

  it('returns one track\'s detail with its sensors', async () => {
    const { base } = await startAdmin();
    const res = await fetch(`${base}/api/v1/tracks/yard/tug-07`);
    expect(res.status).toBe(200);
    const body = (await res.json()) as { entity: string; sensors: { name: string }[]; covariance: number[][] };
    expect(body.entity).toBe('tug-07');
    expect(body.sensors.map((s) => s.name)).toEqual(['gnss']);
  });

  it('decodes an entity holding / sent as one encoded segment', async () => {
    const { base } = await startAdmin();
    const res = await fetch(`${base}/api/v1/tracks/yard/dock%2Ftug-12`);
    expect(res.status).toBe(200);
    expect(((await res.json()) as { entity: string }).entity).toBe('dock/tug-12');
  });

  it('writes a NaN figure as null', async () => {
    const { base, view } = await startAdmin();
    view.tracks[0] = { ...view.tracks[0]!, tS: Number.NaN };
    const body = (await (await fetch(`${base}/api/v1/tracks/tanks/tank-a`)).json()) as { tS: unknown };
    expect(body.tS).toBeNull();
  });

  it('answers an unknown track with TRACK_NOT_FOUND', async () => {
    const { base } = await startAdmin();
    const res = await fetch(`${base}/api/v1/tracks/tanks/tank-z`);
    expect(res.status).toBe(404);
    expect(await errorCode(res)).toBe('TRACK_NOT_FOUND');
  });

  it('lists the estimators with their track counts', async () => {
    const { base } = await startAdmin();
    const body = (await (await fetch(`${base}/api/v1/estimators`)).json()) as { estimators: unknown };
    expect(body.estimators).toEqual([{ name: 'tanks', tracks: 1 }, { name: 'yard', tracks: 2 }]);
  });
});

describe('JSON API: reset', () => {
  it('refuses a reset with RESET_DISABLED when no token is configured', async () => {
    const { base, view } = await startAdmin();
    const res = await fetch(resetUrl(base), { method: 'POST', headers: { Authorization: `Bearer ${TEST_TOKEN}` } });
    expect(res.status).toBe(403);
    expect(await errorCode(res)).toBe('RESET_DISABLED');
    expect(view.resets).toEqual([]);
  });

  it('refuses a reset without an Authorization header with 401', async () => {
    const { base, view } = await startAdmin({ token: TEST_TOKEN });
    const res = await fetch(resetUrl(base), { method: 'POST' });
    expect(await errorCode(res)).toBe('UNAUTHORIZED');
    expect(res.status).toBe(401);
    expect(res.headers.get('www-authenticate')).toBe('Bearer');
    expect(view.resets).toEqual([]);
  });

  it.each([
    ['a wrong token', `Bearer ${TEST_TOKEN}x`],
    ['a token prefix', `Bearer ${TEST_TOKEN.slice(0, 8)}`],
    ['another scheme', `Basic ${TEST_TOKEN}`],
  ])('refuses a reset with %s with 401', async (_, authorization) => {
    const { base, view } = await startAdmin({ token: TEST_TOKEN });
    const res = await fetch(resetUrl(base), { method: 'POST', headers: { Authorization: authorization } });
    expect(res.status).toBe(401);
    expect(await errorCode(res)).toBe('UNAUTHORIZED');
    expect(view.resets).toEqual([]);
  });

  it('resets the track with the right token', async () => {
    const { base, view } = await startAdmin({ token: TEST_TOKEN });
    const init = { method: 'POST', headers: { Authorization: `Bearer ${TEST_TOKEN}` } };
    const res = await fetch(resetUrl(base, 'dock/tug-12'), init);
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ reset: true, estimator: 'yard', entity: 'dock/tug-12' });
    expect(view.resets).toEqual([{ estimator: 'yard', entity: 'dock/tug-12' }]);
  });

  it('answers a reset of an unknown track with TRACK_NOT_FOUND', async () => {
    const { base } = await startAdmin({ token: TEST_TOKEN });
    const init = { method: 'POST', headers: { Authorization: `Bearer ${TEST_TOKEN}` } };
    const res = await fetch(resetUrl(base, 'tug-99'), init);
    expect(res.status).toBe(404);
    expect(await errorCode(res)).toBe('TRACK_NOT_FOUND');
  });

  it('refuses GET on the reset route with 405 Allow: POST', async () => {
    const { base } = await startAdmin({ token: TEST_TOKEN });
    const res = await fetch(resetUrl(base));
    expect(await errorCode(res)).toBe('METHOD_NOT_ALLOWED');
    expect(res.status).toBe(405);
    expect(res.headers.get('allow')).toBe('POST');
  });

  it('refuses a chunked reset body past 16 KiB with 413 and leaves the track alone', async () => {
    const { base, view } = await startAdmin({ token: TEST_TOKEN });
    const { hostname, port } = new URL(base);
    const status = await new Promise<number>((resolve, reject) => {
      const req = request({
        host: hostname, port, method: 'POST', path: '/api/v1/tracks/yard/tug-07/reset', agent: false,
        headers: { Authorization: `Bearer ${TEST_TOKEN}`, 'Transfer-Encoding': 'chunked' },
      }, (res) => {
        res.resume();
        resolve(res.statusCode ?? 0);
      });
      req.on('error', reject);
      req.write('x'.repeat(10 * 1024));
      req.write('x'.repeat(10 * 1024));
    });
    expect(status).toBe(413);
    expect(view.resets).toEqual([]);
  });

  it('never writes the token or the Authorization header to the log', async () => {
    const logger = recordingLogger();
    const { base } = await startAdmin({ token: TEST_TOKEN, logger });
    for (const authorization of [`Bearer ${TEST_TOKEN}`, `Bearer ${TEST_TOKEN}-wrong`]) {
      await (await fetch(resetUrl(base), { method: 'POST', headers: { Authorization: authorization } })).text();
    }
    expect(logger.lines.some((l) => l.message.includes('reset'))).toBe(true);
    expect(JSON.stringify(logger.lines)).not.toContain(TEST_TOKEN);
  });
});
