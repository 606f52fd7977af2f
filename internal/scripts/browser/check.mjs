// check.mjs renders a plumb report in Debian's headless chromium through the
// DevTools protocol (Node built-ins only; run with node --experimental-websocket
// on Node 20), and fails when the page logs a console error or warning, throws,
// asks for anything that is not a local file or a data: URI, lacks its figures
// or settings table, or when the settings table does not sort on click.
// It writes a viewport screenshot and a full-page screenshot.
//
// Usage: node --experimental-websocket check.mjs REPORT/index.html OUT_DIR [--expect-errors]
// --expect-errors inverts the verdict on console errors (used by the
// self-test on a page with a deliberate error, to show the check can fail).

import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync, existsSync, rmSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

const [page, outDir, flag] = process.argv.slice(2);
if (!page || !outDir) {
  console.error('usage: check.mjs REPORT/index.html OUT_DIR [--expect-errors]');
  process.exit(2);
}
const expectErrors = flag === '--expect-errors';
mkdirSync(outDir, { recursive: true });
const chromium = process.env.CHROMIUM || '/usr/bin/chromium';
const profile = mkdtempSync(join(tmpdir(), 'plumb-browser-'));
const child = spawn(chromium, [
  '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
  '--disable-default-apps', '--hide-scrollbars', '--host-resolver-rules=MAP * ~NOTFOUND',
  `--user-data-dir=${profile}`, '--remote-debugging-port=0', 'about:blank',
], { stdio: ['ignore', 'ignore', 'pipe'] });
let chromeLog = '';
child.stderr.on('data', (d) => { chromeLog += d; });

const sleep = (ms) => new Promise((r) => setTimeout(r, ms));
function fail(msg) {
  console.error('browser check: ' + msg);
  cleanup();
  process.exit(1);
}
function cleanup() {
  try { child.kill('SIGTERM'); } catch (e) { /* already gone */ }
  try { rmSync(profile, { recursive: true, force: true }); } catch (e) { /* best effort */ }
}
const timer = setTimeout(() => fail('timed out after 60 s'), 60000);

let portFile = join(profile, 'DevToolsActivePort');
for (let i = 0; i < 200 && !existsSync(portFile); i++) await sleep(100);
if (!existsSync(portFile)) fail('chromium did not start:\n' + chromeLog);
await sleep(100);
const [port, path] = readFileSync(portFile, 'utf8').trim().split('\n');
const ws = new WebSocket(`ws://127.0.0.1:${port}${path}`);
await new Promise((res, rej) => { ws.onopen = res; ws.onerror = () => rej(new Error('websocket')); });

let nextId = 1;
const pending = new Map();
const listeners = [];
ws.onmessage = (ev) => {
  const msg = JSON.parse(ev.data);
  if (msg.id && pending.has(msg.id)) {
    const { res, rej } = pending.get(msg.id);
    pending.delete(msg.id);
    if (msg.error) rej(new Error(JSON.stringify(msg.error))); else res(msg.result);
  } else if (msg.method) {
    for (const l of listeners) l(msg);
  }
};
function send(method, params = {}, sessionId) {
  const id = nextId++;
  ws.send(JSON.stringify({ id, method, params, sessionId }));
  return new Promise((res, rej) => pending.set(id, { res, rej }));
}

const problems = [];
const requests = [];
let loaded = false;
listeners.push((m) => {
  const p = m.params || {};
  switch (m.method) {
    case 'Runtime.consoleAPICalled':
      if (['error', 'warning', 'assert'].includes(p.type)) {
        problems.push(`console.${p.type}: ` + (p.args || []).map((a) => a.value ?? a.description).join(' '));
      }
      break;
    case 'Runtime.exceptionThrown':
      problems.push('exception: ' + (p.exceptionDetails.exception?.description || p.exceptionDetails.text));
      break;
    case 'Log.entryAdded':
      if (['error', 'warning'].includes(p.entry.level)) problems.push(`log ${p.entry.level}: ${p.entry.text} ${p.entry.url || ''}`);
      break;
    case 'Network.requestWillBeSent':
      requests.push(p.request.url);
      break;
    case 'Network.loadingFailed':
      problems.push(`failed to load: ${p.errorText}`);
      break;
    case 'Page.loadEventFired':
      loaded = true;
      break;
  }
});

const { targetId } = await send('Target.createTarget', { url: 'about:blank' });
const { sessionId } = await send('Target.attachToTarget', { targetId, flatten: true });
const s = (method, params) => send(method, params, sessionId);
for (const d of ['Runtime', 'Log', 'Network', 'Page']) await s(`${d}.enable`);
await s('Emulation.setDeviceMetricsOverride', { width: 1200, height: 1000, deviceScaleFactor: 1, mobile: false });
const url = pathToFileURL(resolve(page)).href;
await s('Page.navigate', { url });
for (let i = 0; i < 300 && !loaded; i++) await sleep(50);
if (!loaded) fail('page did not finish loading');
await sleep(300);

async function evaluate(expr) {
  const r = await s('Runtime.evaluate', { expression: expr, returnByValue: true, awaitPromise: true });
  if (r.exceptionDetails) throw new Error('evaluate: ' + r.exceptionDetails.text);
  return r.result.value;
}
const facts = await evaluate(`({
  title: document.title,
  figures: document.querySelectorAll('figure svg').length,
  rows: document.querySelectorAll('#settings-table tbody tr').length,
  height: document.documentElement.scrollHeight,
  recommended: (document.querySelector('.pick strong') || {}).textContent || ''
})`);
// Sorting: click the trustworthiness heading (or the first numeric score
// column) twice; the column must come out ascending, then descending.
const sort = await evaluate(`(function(){
  var t = document.getElementById('settings-table'); if (!t) return {ok:false, why:'no table'};
  var heads = t.querySelectorAll('th'), col = -1;
  for (var i = 0; i < heads.length; i++) if (heads[i].textContent === 'trustworthiness') col = i;
  if (col < 0) return {ok:false, why:'no trustworthiness column'};
  function vals(){ return Array.prototype.map.call(t.tBodies[0].rows, function(r){ return parseFloat(r.cells[col].getAttribute('data-v')); }); }
  function sorted(v, dir){ for (var i = 1; i < v.length; i++) if (dir*(v[i]-v[i-1]) < 0) return false; return true; }
  heads[col].click(); var a = vals();
  heads[col].click(); var d = vals();
  return {ok: sorted(a, 1) && sorted(d, -1) && a.length > 0, asc: a, desc: d};
})()`);

const top = await s('Page.captureScreenshot', { format: 'png' });
writeFileSync(join(outDir, 'report-top.png'), Buffer.from(top.data, 'base64'));
const full = await s('Page.captureScreenshot', {
  format: 'png', captureBeyondViewport: true,
  clip: { x: 0, y: 0, width: 1200, height: Math.min(facts.height, 16000), scale: 1 },
});
writeFileSync(join(outDir, 'report-full.png'), Buffer.from(full.data, 'base64'));
clearTimeout(timer);

const outside = requests.filter((u) => !u.startsWith('file:') && !u.startsWith('data:'));
const verdict = { url, ...facts, sortOk: sort.ok, requests: requests.length, outside, problems };
console.log(JSON.stringify(verdict, null, 2));
cleanup();
ws.close();

let bad = [];
if (expectErrors) {
  if (problems.length === 0) bad.push('expected console errors on the self-test page, saw none');
} else {
  if (problems.length) bad.push(`${problems.length} console problem(s)`);
  if (outside.length) bad.push('requests beyond local files: ' + outside.join(', '));
  if (facts.figures < 1) bad.push('no inline SVG figures');
  if (facts.rows < 1) bad.push('no rows in the settings table');
  if (!sort.ok) bad.push('settings table does not sort: ' + JSON.stringify(sort));
}
if (bad.length) {
  console.error('browser check: FAIL: ' + bad.join('; '));
  process.exit(1);
}
console.error('browser check: ok');
process.exit(0);
