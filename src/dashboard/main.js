/**
 * Wires the page: the WebSocket stream and the JSON API feed the store; requestAnimationFrame
 * passes apply what changed to the list, the alert log and the selected track's charts (the
 * charts at most every CHART_INTERVAL_MS, however many frames arrive meanwhile).
 */
import { AlertLog } from './alert-log.js';
import { fetchTrackDetail, fetchTracks, poll } from './api-client.js';
import { clockTime, healthBadge } from './dom.js';
import { EntityCharts } from './entity-charts.js';
import { renderSensorTable } from './sensor-table.js';
import { StreamConnection } from './stream-connection.js';
import { reasonWords, TrackList } from './track-list.js';
import { TrackStore } from './track-store.js';

const CHART_INTERVAL_MS = 250;
const DETAIL_POLL_MS = 2000;
const LIST_POLL_MS = 15_000;

const $ = (id) => document.getElementById(id);
const store = new TrackStore();
const list = new TrackList($('track-list'), select);
const alertLog = new AlertLog($('alert-list'), $('alert-empty'));
const charts = new EntityCharts($('estimate-charts'), $('consistency-charts'));
let selectedKey = null;
let framePending = false;
let chartsTimer = 0;
let chartsWanted = false;
let lastChartsMs = -Infinity;
let streamStatus = { state: 'connecting', measurements: null };

function select(key) {
  const record = store.tracks.get(key);
  if (record === undefined) return;
  selectedKey = key;
  list.select(key);
  history.replaceState(null, '', `#${encodeURIComponent(key)}`);
  $('selected-name').textContent = record.entity;
  $('selected-estimator').textContent = record.estimator;
  $('track-view').hidden = false;
  $('no-track').hidden = true;
  renderSelectedHealth(record);
  renderSensorTable($('sensor-table'), record);
  charts.show(record);
  renderAsOf(record);
  pollDetailNow();
}

function renderSelectedHealth(record) {
  $('selected-health').replaceChildren(healthBadge(record.health.state));
  $('selected-reasons').textContent = record.health.reasons.map(reasonWords).join(', ');
}

/** The time of the newest estimate on screen (data-t holds it in epoch seconds). */
function renderAsOf(record) {
  const tS = record.filtered?.lastTimeS ?? NaN;
  const node = $('selected-time');
  node.dataset.t = String(tS);
  node.textContent = Number.isFinite(tS) ? `as of ${clockTime(tS)}` : '';
}

function schedule() {
  if (framePending) return;
  framePending = true;
  requestAnimationFrame(frame);
}

/**
 * Asks for the work the store's changes need: a frame now for the list and the alert log, a
 * chart redraw no sooner than CHART_INTERVAL_MS after the last one. Data of tracks not on
 * screen asks for nothing, so a busy fleet does not keep the page drawing.
 */
function requestWork() {
  if (store.listChanged.size > 0 || store.alertsChanged) schedule();
  if (chartsTimer !== 0 || selectedKey === null || !store.dataChanged.has(selectedKey)) return;
  const waitMs = Math.max(0, lastChartsMs + CHART_INTERVAL_MS - performance.now());
  chartsTimer = setTimeout(() => {
    chartsWanted = true;
    schedule();
  }, waitMs);
}

function frame(nowMs) {
  framePending = false;
  const changes = store.takeChanges();
  for (const key of changes.list) list.update(store.tracks.get(key));
  if (selectedKey === null && store.tracks.size > 0) select(preferredKey());
  if (changes.alerts) alertLog.render(store.alerts);
  const selected = selectedKey === null ? undefined : store.tracks.get(selectedKey);
  if (selected === undefined) return;
  if (changes.list.has(selectedKey)) renderSelectedHealth(selected);
  if (!chartsWanted) return;
  chartsWanted = false;
  chartsTimer = 0;
  lastChartsMs = nowMs;
  charts.update();
  renderAsOf(selected);
}

/** The track named in the address (#estimator/entity), else the first in the list. */
function preferredKey() {
  const wanted = decodeURIComponent(location.hash.slice(1));
  if (store.tracks.has(wanted)) return wanted;
  return [...store.tracks.keys()].sort((a, b) => a.localeCompare(b, undefined, { numeric: true }))[0];
}

function onFrame(f) {
  if (f.type === 'estimate') store.applyEstimate(f.data);
  else if (f.type === 'snapshot') for (const p of f.estimates ?? []) store.applyEstimate(p);
  else if (f.type === 'health') store.applyHealthChange(f.data);
  else if (f.type === 'measurement') store.applyMeasurement(f.data);
  else return;
  requestWork();
}

function onStatus(status) {
  streamStatus = status;
  renderConnection();
}

function renderConnection() {
  const s = streamStatus;
  const node = $('connection');
  node.dataset.state = s.state;
  if (s.state === 'live') node.textContent = 'live';
  else if (s.state === 'connecting') node.textContent = 'connecting…';
  else node.textContent = `connection lost · retrying in ${Math.max(0, Math.ceil((s.retryAtMs - Date.now()) / 1000))} s`;
  $('readings-note').textContent = s.measurements === true
    ? 'Readings and their NIS arrive live; statistics refresh every 2 s.'
    : 'This daemon does not stream readings: NIS and rejection counts are polled every 2 s.';
}

async function refreshList() {
  const body = await fetchTracks();
  if (body !== null) {
    store.applyTrackList(body);
    requestWork();
  }
}

let detailInFlight = false;
async function pollDetailNow() {
  const record = selectedKey === null ? undefined : store.tracks.get(selectedKey);
  if (record === undefined || detailInFlight) return;
  detailInFlight = true;
  const detail = await fetchTrackDetail(record.estimator, record.entity);
  detailInFlight = false;
  if (detail === null || selectedKey !== record.key) return;
  store.applyDetail(detail);
  renderSensorTable($('sensor-table'), record);
  requestWork();
}

// ?ws=/path follows a daemon whose http.websocket.path is not the default /ws. Only a path
// on this same host is taken, so a crafted link cannot send the token elsewhere.
const params = new URLSearchParams(location.search);
const wsPath = params.get('ws') ?? '';
const wsUrl = new URL(/^\/(?!\/)[\w./-]*$/.test(wsPath) ? wsPath : '/ws', location.href);
wsUrl.protocol = location.protocol === 'https:' ? 'wss:' : 'ws:';
if (params.has('token')) wsUrl.searchParams.set('token', params.get('token'));

$('window-select').addEventListener('change', (event) => {
  charts.windowS = Number(event.target.value);
  charts.update();
});

new StreamConnection({ url: wsUrl.href, onFrame, onStatus, onLive: refreshList }).start();
poll(refreshList, LIST_POLL_MS);
poll(pollDetailNow, DETAIL_POLL_MS);
setInterval(() => streamStatus.state === 'waiting' && renderConnection(), 1000);
