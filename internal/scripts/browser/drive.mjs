// drive.mjs drives a plumb report's interactive maps in Debian's headless
// chromium through the DevTools protocol (Node built-ins only; run with
// node --experimental-websocket on Node 20). It fails when:
//   - the page logs a console error or warning, throws, opens a dialog
//     (alert from injected markup), or asks for anything that is not the
//     page's own file or a data: URI;
//   - hovering a known, isolated point does not show that point's id (and
//     label) in the tooltip;
//   - after dragging a rectangle in one map, any other map does not
//     highlight exactly the same point ids (run maps: the same ids among the
//     points they show), judged both from what each map reports it drew and
//     from the canvas pixels at those points;
//   - with --hostile, any element carries an on* attribute, any <img> exists,
//     or the hostile strings do not show as plain text in the legend, the
//     tooltip and the settings table.
// It writes screenshots of the maps (maps-grid.png, maps-selected.png,
// maps-focus.png, maps-runs.png) and of the figures (figures.png).
//
// Usage: node --experimental-websocket drive.mjs REPORT/index.html OUT_DIR
//          [--hostile] [--break-highlight] [--timing]
// --break-highlight makes one map drop one selected point before the drag
// (from outside the page, by wrapping that map's selection test); the
// check must then fail — check.sh runs it as a self-test.
// --timing prints the time from navigation to the maps being drawn.

import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync, existsSync, rmSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

const args = process.argv.slice(2);
const [page, outDir] = args.filter((a) => !a.startsWith('--'));
const flags = new Set(args.filter((a) => a.startsWith('--')));
if (!page || !outDir) {
  console.error('usage: drive.mjs REPORT/index.html OUT_DIR [--hostile] [--break-highlight] [--timing]');
  process.exit(2);
}
mkdirSync(outDir, { recursive: true });
const chromium = process.env.CHROMIUM || '/usr/bin/chromium';
const profile = mkdtempSync(join(tmpdir(), 'plumb-drive-'));
const child = spawn(chromium, [
  '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
  '--disable-default-apps', '--hide-scrollbars', '--host-resolver-rules=MAP * ~NOTFOUND',
  `--user-data-dir=${profile}`, '--remote-debugging-port=0', 'about:blank',
], { stdio: ['ignore', 'ignore', 'pipe'] });
let chromeLog = '';
child.stderr.on('data', (d) => { chromeLog += d; });
const sleep = (ms) => new Promise((r) => setTimeout(r, ms));
function cleanup() {
  try { child.kill('SIGTERM'); } catch (e) { /* gone */ }
  try { rmSync(profile, { recursive: true, force: true }); } catch (e) { /* best effort */ }
}
function fail(msg) { console.error('browser drive: FAIL: ' + msg); cleanup(); process.exit(1); }
const timer = setTimeout(() => fail('timed out after 180 s'), 180000);

const portFile = join(profile, 'DevToolsActivePort');
for (let i = 0; i < 300 && !existsSync(portFile); i++) await sleep(100);
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
  } else if (msg.method) for (const l of listeners) l(msg);
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
      if (['error', 'warning', 'assert'].includes(p.type)) problems.push(`console.${p.type}: ` + (p.args || []).map((a) => a.value ?? a.description).join(' '));
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
    case 'Page.javascriptDialogOpening':
      problems.push(`dialog opened (${p.type}): ${p.message}`);
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
await s('Emulation.setDeviceMetricsOverride', { width: 1240, height: 1000, deviceScaleFactor: 1, mobile: false });
const url = pathToFileURL(resolve(page)).href;
const t0 = Date.now();
await s('Page.navigate', { url });
async function evaluate(expr) {
  const r = await s('Runtime.evaluate', { expression: expr, returnByValue: true, awaitPromise: true });
  if (r.exceptionDetails) throw new Error('evaluate: ' + (r.exceptionDetails.exception?.description || r.exceptionDetails.text));
  return r.result.value;
}
let ready = false;
for (let i = 0; i < 2400 && !ready; i++) {
  await sleep(25);
  try { ready = loaded && await evaluate(`document.body && document.body.getAttribute('data-maps-ready') === '1'`); } catch (e) { /* navigating */ }
}
const tInteractive = Date.now() - t0;
if (!ready) fail('the maps did not become ready (data-maps-ready) within 60 s');
if (flags.has('--timing')) {
  // A first hover after ready, answered: the page responds.
  console.log(JSON.stringify({ timeToInteractiveMs: tInteractive }));
}
const verdict = { url, timeToInteractiveMs: tInteractive };
verdict.script = await evaluate(`(function(){ var t = plumbMaps.timing, r = [t.redraw(), t.redraw(), t.redraw()].sort(function(a,b){return a-b;});
  return {parseMs: Math.round(t.parse), decodeMs: Math.round(t.decode), firstDrawMs: Math.round(t.draw), redrawAllMapsMedianMs: Math.round(r[1]),
    maps: plumbMaps.panels.length,
    navigation: (function(){ var n = performance.getEntriesByType('navigation')[0] || {}; return {responseEndMs: Math.round(n.responseEnd || 0), domInteractiveMs: Math.round(n.domInteractive || 0), domContentLoadedMs: Math.round(n.domContentLoadedEventEnd || 0), loadMs: Math.round(n.loadEventEnd || 0)}; })(), pointsPerMap: plumbMaps.data.shown, pageBytes: document.documentElement.outerHTML.length}; })()`);
const bad = [];

async function mouse(type, x, y, extra = {}) {
  await s('Input.dispatchMouseEvent', { type, x, y, button: type === 'mouseMoved' && !extra.buttons ? 'none' : 'left', clickCount: type === 'mouseMoved' ? 0 : 1, ...extra });
}
async function shot(name, selector, beyond = true) {
  const box = await evaluate(`(function(){ var e = document.querySelector(${JSON.stringify(selector)}); if (!e) return null;
    var r = e.getBoundingClientRect(); return {x: r.left + window.scrollX, y: r.top + window.scrollY, w: r.width, h: r.height}; })()`);
  if (!box || box.w === 0) return;
  const img = await s('Page.captureScreenshot', { format: 'png', captureBeyondViewport: beyond, clip: { x: box.x, y: box.y, width: box.w, height: Math.min(box.h, 6000), scale: 1 } });
  writeFileSync(join(outDir, name), Buffer.from(img.data, 'base64'));
}

// 1. Hover a known point: an isolated point of the first map with data.
await evaluate(`window.scrollTo(0, document.getElementById('map-grid').getBoundingClientRect().top + window.scrollY - 70)`);
await sleep(100);
const target = await evaluate(`(function(){
  var P = plumbMaps.panels.filter(function(p){ return p.kind === 'setting' && p.xy; })[0];
  if (!P) return null;
  var W = P.W, best = -1, bestGap = 0;
  for (var i = 0; i < Math.min(P.m, 4000); i++) {
    var x = P.sx[i], y = P.sy[i];
    if (x < 20 || y < 20 || x > W - 20 || y > W - 20) continue;
    var gap = 1e9;
    for (var j = 0; j < P.m; j++) { if (j === i) continue; var dx = P.sx[j]-x, dy = P.sy[j]-y, d = dx*dx+dy*dy; if (d < gap) gap = d; }
    if (gap > bestGap) { bestGap = gap; best = i; }
    if (bestGap > 400) break;
  }
  if (best < 0) return null;
  var pos = P.screenOf(best);
  return {panel: P.name, i: best, x: pos.x, y: pos.y, gap: Math.sqrt(bestGap) / P.dpr, id: plumbMaps.data.ids[best],
    label: plumbMaps.data.lab ? null : null};
})()`);
if (!target) bad.push('no map with points to hover');
else {
  await mouse('mouseMoved', target.x, target.y);
  await sleep(150);
  const tip = await evaluate(`(function(){ var t = document.getElementById('map-tip');
    return {hidden: t.hidden, text: t.textContent, index: t.getAttribute('data-index'), elements: Array.prototype.map.call(t.querySelectorAll('*'), function(e){ return e.tagName; })}; })()`);
  verdict.hover = { target, tip };
  const want = 'id: ' + target.id;
  if (tip.hidden || !tip.text.includes(want)) bad.push(`hover: tooltip ${JSON.stringify(tip.text)} does not show ${JSON.stringify(want)}`);
  if (tip.index !== String(target.i)) bad.push(`hover: tooltip is for point ${tip.index}, want ${target.i}`);
  if (tip.elements.some((t) => !['DIV', 'B', 'SPAN'].includes(t))) bad.push('hover: tooltip holds unexpected elements: ' + tip.elements.join(','));
  const labels = await evaluate(`(function(){ var D = plumbMaps.data; if (!D.lab) return null; return D.labelNames; })()`);
  if (labels) {
    const lab = await evaluate(`(function(){ var D = plumbMaps.data; var b = atob(D.lab), i = ${target.i}; return D.labelNames[b.charCodeAt(2*i) | (b.charCodeAt(2*i+1) << 8)]; })()`);
    if (!tip.text.includes(lab)) bad.push(`hover: tooltip lacks the label ${JSON.stringify(lab)}`);
    verdict.hover.label = lab;
  }
  await shot('maps-hover.png', '#map-grid', false);
  await mouse('mouseMoved', 5, 5);
}
await shot('maps-grid.png', '#explore ~ .maps');

// 2. Select a rectangle in one map; every map must highlight the same ids.
if (flags.has('--break-highlight')) {
  await evaluate(`(function(){ var P = plumbMaps.panels.filter(function(p){ return p.xy; });
    var victim = P[P.length > 1 ? 1 : 0], orig = victim.selected, dropped = -1;
    victim.selected = function(i){ var v = orig.call(victim, i); if (v && dropped < 0) dropped = i; return v && i !== dropped; };
    return victim.name; })()`);
}
const rect = await evaluate(`(function(){
  var P = plumbMaps.panels.filter(function(p){ return p.kind === 'setting' && p.xy; })[0];
  var r = P.over.getBoundingClientRect(), W = P.W;
  // The box around the 30–70th percentile of the points' screen positions.
  var xs = Array.prototype.slice.call(P.sx).filter(function(v){ return v > 0; }).sort(function(a,b){return a-b;});
  var ys = Array.prototype.slice.call(P.sy).filter(function(v){ return v > 0; }).sort(function(a,b){return a-b;});
  var q = function(v, f){ return v[Math.floor(f * (v.length - 1))]; };
  // Shift each edge by up to 12 pixels to where it is farthest from any
  // point, so that rounding of the mouse position cannot decide a point.
  function clear(v, arr){ var best = v, bestD = -1;
    for (var t = v - 12 * P.dpr; t <= v + 12 * P.dpr; t += 0.25 * P.dpr) {
      var d = 1e9; for (var k = 0; k < arr.length; k++) { var e = Math.abs(arr[k] - t); if (e < d) d = e; }
      if (d > bestD) { bestD = d; best = t; }
    }
    return best; }
  var x0 = clear(q(xs, 0.3), xs), x1 = clear(q(xs, 0.7), xs), y0 = clear(q(ys, 0.3), ys), y1 = clear(q(ys, 0.7), ys);
  var want = [];
  for (var i = 0; i < P.m; i++) if (P.sx[i] >= x0 && P.sx[i] <= x1 && P.sy[i] >= y0 && P.sy[i] <= y1) want.push(i);
  return {panel: P.name, x0: r.left + x0 / P.dpr, y0: r.top + y0 / P.dpr, x1: r.left + x1 / P.dpr, y1: r.top + y1 / P.dpr, want: want.length};
})()`);
const [ax, ay, bx, by] = [rect.x0, rect.y0, rect.x1, rect.y1];
await mouse('mouseMoved', ax, ay);
await mouse('mousePressed', ax, ay);
for (let k = 1; k <= 5; k++) await mouse('mouseMoved', ax + (bx - ax) * k / 5, ay + (by - ay) * k / 5, { buttons: 1 });
await mouse('mouseReleased', bx, by);
await sleep(300);
const after = await evaluate(`(function(){
  var D = plumbMaps.data, out = [];
  plumbMaps.panels.forEach(function(p){
    if (!p.xy) return;
    var ctx = p.ctx, img = ctx.getImageData(0, 0, p.W, p.W).data, bad = 0, checked = 0;
    // Pixel check: every highlighted point's pixel is neither background
    // nor the faded grey of unselected points (#fafafa and #e8e8e8 in maps.js).
    p.highlighted.forEach(function(i){
      var x = Math.round(p.sx[i]) | 0, y = Math.round(p.sy[i]) | 0;
      if (x < 0 || y < 0 || x >= p.W || y >= p.W) return;
      var o = 4 * (y * p.W + x), r = img[o], g = img[o+1], b = img[o+2];
      checked++;
      if ((r === 250 && g === 250 && b === 250) || (r === 232 && g === 232 && b === 232)) bad++;
    });
    out.push({name: p.name, kind: p.kind, m: p.m, ids: p.highlighted.map(function(i){ return D.ids[i]; }), index: p.highlighted.slice(), pixelsChecked: checked, pixelsWrong: bad});
  });
  return {panels: out, selected: plumbMaps.selectionSize(), status: document.getElementById('selection-status').textContent};
})()`);
// The points inside the rectangle the page applied (device pixels of the
// source map), recomputed here from the map's point positions; the applied
// rectangle must be the dragged one to within 1.5 pixels.
const applied = await evaluate(`(function(){
  var P = plumbMaps.panels.filter(function(p){ return p.name === ${JSON.stringify(rect.panel)}; })[0];
  var r = P.over.getBoundingClientRect(), R = P.lastRect;
  if (!R) return null;
  var want = [];
  for (var i = 0; i < P.m; i++) if (P.sx[i] >= R[0] && P.sx[i] <= R[2] && P.sy[i] >= R[1] && P.sy[i] <= R[3]) want.push(i);
  return {x0: r.left + R[0] / P.dpr, y0: r.top + R[1] / P.dpr, x1: r.left + R[2] / P.dpr, y1: r.top + R[3] / P.dpr, want: want};
})()`);
if (!applied) bad.push('selection: the source map applied no rectangle');
const wantIdx = applied ? applied.want : [];
if (applied && Math.max(Math.abs(applied.x0 - rect.x0), Math.abs(applied.y0 - rect.y0), Math.abs(applied.x1 - rect.x1), Math.abs(applied.y1 - rect.y1)) > 1.5) {
  bad.push('selection: the page applied ' + JSON.stringify(applied) + ', not the dragged rectangle ' + JSON.stringify(rect));
}
verdict.selection = { panel: rect.panel, dragged: rect, wanted: wantIdx.length, selected: after.selected, status: after.status, panels: after.panels.map((p) => ({ name: p.name, highlighted: p.ids.length, pixelsChecked: p.pixelsChecked, pixelsWrong: p.pixelsWrong })) };
if (wantIdx.length < 2) bad.push(`selection: the rectangle holds ${wantIdx.length} points; the check needs at least 2`);
if (after.selected !== wantIdx.length) bad.push(`selection: the page selected ${after.selected} points, the rectangle holds ${wantIdx.length}`);
const ids = await evaluate(`plumbMaps.data.ids`);
for (const p of after.panels) {
  const want = new Set(wantIdx.filter((i) => i < p.m).map((i) => ids[i]));
  const got = new Set(p.ids);
  const missing = [...want].filter((x) => !got.has(x));
  const extra = [...got].filter((x) => !want.has(x));
  if (missing.length || extra.length) bad.push(`selection: map ${p.name} highlights ${got.size} points, want ${want.size} (missing ${missing.slice(0, 3).map((x) => JSON.stringify(x)).join(', ')}${missing.length > 3 ? '…' : ''}; extra ${extra.length})`);
  if (p.pixelsWrong) bad.push(`selection: map ${p.name}: ${p.pixelsWrong} of ${p.pixelsChecked} highlighted points are not painted highlighted`);
}
await evaluate(`window.scrollTo(0, document.getElementById('map-grid').getBoundingClientRect().top + window.scrollY - 70)`);
await shot('maps-selected.png', '#map-grid');
await shot('maps-focus.png', '#map-focus');
await shot('maps-runs.png', '#map-runs');
await shot('figures.png', '#figures ~ figure');

// 3. Filter the settings table.
const filter = await evaluate(`(function(){
  var box = document.getElementById('settings-filter'), t = document.getElementById('settings-table');
  if (!box || !t) return null;
  var first = t.tBodies[0].rows[0].cells[1].textContent;
  box.value = first; box.dispatchEvent(new Event('input'));
  var shown = Array.prototype.filter.call(t.tBodies[0].rows, function(r){ return !r.hidden; }).length;
  box.value = ''; box.dispatchEvent(new Event('input'));
  return {query: first, shown: shown, total: t.tBodies[0].rows.length};
})()`);
verdict.filter = filter;
if (!filter || filter.shown < 1 || (filter.total > 1 && filter.shown >= filter.total)) bad.push('settings filter: ' + JSON.stringify(filter));

// 4. Hostile strings stay text.
if (flags.has('--hostile')) {
  const h = await evaluate(`(function(){
    var on = [];
    Array.prototype.forEach.call(document.querySelectorAll('*'), function(e){
      Array.prototype.forEach.call(e.attributes, function(a){ if (/^on/i.test(a.name)) on.push(e.tagName + '[' + a.name + ']'); });
    });
    return {on: on, imgs: document.querySelectorAll('img').length,
      legend: (document.getElementById('map-legend') || {}).textContent || '',
      table: (document.getElementById('settings-table') || {}).textContent || '',
      body: document.body.textContent};
  })()`);
  verdict.hostile = { on: h.on, imgs: h.imgs };
  if (h.on.length) bad.push('hostile: elements with event-handler attributes: ' + h.on.join(', '));
  if (h.imgs) bad.push(`hostile: ${h.imgs} <img> element(s) in the page`);
  const evil = ['</script><img src=x onerror=alert(1)>', '"><svg onload=alert(1)>'];
  for (const e of evil) {
    if (!h.legend.includes(e)) bad.push('hostile: legend does not show as text: ' + e);
    if (!h.body.includes(e)) bad.push('hostile: page does not show as text: ' + e);
  }
  const tipText = verdict.hover ? verdict.hover.tip.text : '';
  if (!evil.some((e) => tipText.includes(e))) bad.push('hostile: the tooltip does not show a hostile id or label as text: ' + JSON.stringify(tipText));
}

clearTimeout(timer);
const outside = requests.filter((u) => !(u === url || u.startsWith('data:')));
verdict.requests = requests.length;
verdict.outside = outside;
verdict.problems = problems;
if (problems.length) bad.push(`${problems.length} console problem(s): ` + problems.slice(0, 3).join(' | '));
if (outside.length) bad.push('requests beyond the page itself: ' + outside.join(', '));
console.log(JSON.stringify(verdict, null, 2));
cleanup();
ws.close();
if (bad.length) {
  console.error('browser drive: FAIL: ' + bad.join('; '));
  process.exit(1);
}
console.error('browser drive: ok');
process.exit(0);
