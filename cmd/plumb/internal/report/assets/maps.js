// maps.js: the report's linked, interactive maps. It reads the page's data
// from <script id="plumb-data" type="application/json">, draws every panel
// into a canvas (pixels written directly, so 100,000 points per panel stay
// quick), and links them: hover shows a point's id, label and per-point
// stability and rings the same point everywhere; a dragged rectangle
// selects points in any panel and every panel highlights the same points;
// the wheel zooms and "pan" mode drags the shared view. Text from the data
// is only ever set with textContent, never parsed as markup. No network.
(function () {
  'use strict';
  var holder = document.getElementById('plumb-data');
  if (!holder) return;
  var t0 = performance.now();
  var D = JSON.parse(holder.textContent);
  var tParsed = performance.now();
  var S = D.shown;

  function bytes(s) {
    var bin = atob(s || ''), u = new Uint8Array(bin.length);
    for (var i = 0; i < bin.length; i++) u[i] = bin.charCodeAt(i);
    return u;
  }
  function u16(s) {
    var b = bytes(s), out = new Uint16Array(b.length >> 1);
    for (var i = 0; i < out.length; i++) out[i] = b[2 * i] | (b[2 * i + 1] << 8);
    return out;
  }
  function hexRGB(h) { return [parseInt(h.substr(1, 2), 16), parseInt(h.substr(3, 2), 16), parseInt(h.substr(5, 2), 16)]; }
  function packed(rgb) { return (255 << 24 | rgb[2] << 16 | rgb[1] << 8 | rgb[0]) >>> 0; } // little-endian ABGR
  var little = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1;
  if (!little) return; // every browser in use is little-endian

  var lab = D.lab ? u16(D.lab) : null;
  var labelPix = (D.labelColors || []).map(function (c) { return packed(hexRGB(c)); });
  var rampRGB = D.ramp.map(hexRGB);
  function rampAt(t) {
    t = Math.max(0, Math.min(1, t));
    var pos = t * (rampRGB.length - 1), i = Math.min(Math.floor(pos), rampRGB.length - 2), f = pos - i;
    var a = rampRGB[i], b = rampRGB[i + 1];
    return [Math.round(a[0] + (b[0] - a[0]) * f), Math.round(a[1] + (b[1] - a[1]) * f), Math.round(a[2] + (b[2] - a[2]) * f)];
  }
  var rampPix = new Uint32Array(256);
  for (var k = 0; k < 255; k++) rampPix[k] = packed(rampAt(k / 254));
  rampPix[255] = packed([200, 200, 200]);
  var catPix = D.categorical.map(function (c) { return packed(hexRGB(c)); });
  var otherPix = packed(hexRGB(D.other));
  var fadePix = packed([232, 232, 232]);
  var inkPix = packed([20, 20, 20]);
  var bgPix = packed([250, 250, 250]);
  var basePix = catPix[0];

  var settings = D.settings.map(function (s) {
    return {
      s: s,
      xy: s.xy ? u16(s.xy) : null,
      u: s.u ? bytes(s.u) : null,
      clusters: s.clusters ? u16(s.clusters) : null,
      runs: (s.runs || []).map(function (r) { return { r: r, xy: u16(r.xy), clusters: r.clusters ? u16(r.clusters) : null }; })
    };
  });

  // Shared state: one selection, one hovered point, one view for every
  // panel (all layouts are rotated onto one frame).
  var sel = new Uint8Array(S), nsel = 0;
  var hover = -1;
  var view = { x0: D.view[0], x1: D.view[1], y0: D.view[2], y1: D.view[3] };
  var home = { x0: view.x0, x1: view.x1, y0: view.y0, y1: view.y1 };
  var mode = 'select';
  var colourBy = lab ? 'label' : 'stability';
  var panels = [];

  function stabilityText(u) {
    if (u === 255) return 'not measured';
    var st = D.stability, v = u / 254 * st.Max;
    if (st.Invert) return (1 - v).toFixed(3) + ' (1 = stable, 0 = unstable)';
    return (u === 254 ? '≥ ' : '') + v.toFixed(3) + ' of the map\'s RMS radius';
  }
  function fmtLabel(i) {
    if (!lab) return null;
    return D.labelNames[lab[i]];
  }

  // A panel draws one layout (xy over its first m shown points).
  function Panel(host, opt) {
    var p = this;
    p.name = opt.name; p.kind = opt.kind; p.setting = opt.setting; p.xy = opt.xy; p.m = opt.m;
    p.u = opt.u; p.clusters = opt.clusters; p.colour = opt.colour || null; p.size = opt.size || 220;
    p.highlighted = []; p.selected = function (i) { return sel[i] === 1; };
    var box = document.createElement('div'); box.className = 'panel' + (opt.recommended ? ' recommended' : '');
    box.setAttribute('data-panel', p.name);
    var title = document.createElement('div'); title.className = 'ptitle'; title.textContent = opt.title;
    title.title = opt.title;
    box.appendChild(title);
    var stack = document.createElement('div'); stack.className = 'stack';
    stack.style.width = p.size + 'px'; stack.style.height = p.size + 'px';
    p.base = document.createElement('canvas'); p.over = document.createElement('canvas');
    var dpr = Math.min(window.devicePixelRatio || 1, 2);
    [p.base, p.over].forEach(function (c) { c.width = Math.round(p.size * dpr); c.height = Math.round(p.size * dpr); c.style.width = p.size + 'px'; c.style.height = p.size + 'px'; stack.appendChild(c); });
    p.dpr = dpr; p.W = p.base.width;
    box.appendChild(stack);
    host.appendChild(box);
    p.box = box;
    p.ctx = p.base.getContext('2d'); p.octx = p.over.getContext('2d');
    p.img = p.ctx.createImageData(p.W, p.W); p.buf = new Uint32Array(p.img.data.buffer);
    p.sx = new Float32Array(p.m); p.sy = new Float32Array(p.m);
    attach(p);
  }
  Panel.prototype.pixelOf = function (i) {
    var mode = this.colour || colourBy;
    if (mode === 'label' && lab) return labelPix[lab[i]];
    if (mode === 'stability' && this.u) return rampPix[this.u[i]];
    if (mode === 'cluster' && this.clusters) { var c = this.clusters[i]; return c === 0 ? otherPix : catPix[(c - 1) % catPix.length]; }
    return basePix;
  };
  // project fills the panel's screen positions (device pixels); points
  // outside the home view are pinned to the frame, as in the figures.
  Panel.prototype.project = function () {
    var W = this.W, pad = 6 * this.dpr, span = Math.max(view.x1 - view.x0, view.y1 - view.y0);
    var k = (W - 2 * pad) / span, cx = (view.x0 + view.x1) / 2, cy = (view.y0 + view.y1) / 2;
    var atHome = view.x0 === home.x0 && view.x1 === home.x1 && view.y0 === home.y0 && view.y1 === home.y1;
    var lo = 2, hi = W - 3;
    for (var i = 0; i < this.m; i++) {
      var qx = this.xy[2 * i], qy = this.xy[2 * i + 1];
      if (qx === 65535) { this.sx[i] = -1e9; this.sy[i] = -1e9; continue; }
      var x = W / 2 + (qx - cx) * k, y = W / 2 - (qy - cy) * k;
      if (atHome) { x = Math.max(lo, Math.min(hi, x)); y = Math.max(lo, Math.min(hi, y)); }
      this.sx[i] = x; this.sy[i] = y;
    }
    this.k = k; this.cx = cx; this.cy = cy;
  };
  Panel.prototype.draw = function () {
    if (!this.xy) return;
    this.project();
    var W = this.W, buf = this.buf, m = this.m;
    buf.fill(bgPix);
    var r = m > 30000 ? 1 : (m > 5000 ? 2 : (m > 1000 ? 3 : 4));
    r = Math.max(1, Math.round(r * this.dpr));
    // A dot is a disc of radius rad device pixels (a square at rad 1).
    function dot(x, y, pix, rad) {
      x = x | 0; y = y | 0;
      var r2 = (rad - 0.5) * (rad - 0.5) + 0.5;
      for (var dy = 1 - rad; dy < rad; dy++) {
        var yy = y + dy; if (yy < 0 || yy >= W) continue;
        var row = yy * W;
        for (var dx = 1 - rad; dx < rad; dx++) {
          var xx = x + dx; if (xx < 0 || xx >= W || (rad > 1 && dx * dx + dy * dy > r2)) continue;
          buf[row + xx] = pix;
        }
      }
    }
    var hi = [];
    var faded = nsel > 0;
    for (var i = 0; i < m; i++) {
      var x = this.sx[i], y = this.sy[i];
      if (x < 0 || y < 0 || x >= W || y >= W) continue;
      if (faded && this.selected(i)) continue;
      dot(x, y, faded ? fadePix : this.pixelOf(i), r);
    }
    if (faded) {
      for (var j = 0; j < m; j++) {
        var xj = this.sx[j], yj = this.sy[j];
        if (xj < 0 || yj < 0 || xj >= W || yj >= W || !this.selected(j)) continue;
        dot(xj, yj, inkPix, r + 2);
        dot(xj, yj, this.pixelOf(j), r + 1);
        hi.push(j);
      }
    }
    this.highlighted = hi;
    this.ctx.putImageData(this.img, 0, 0);
    this.overlay();
  };
  Panel.prototype.overlay = function (rect) {
    var c = this.octx, W = this.W;
    c.clearRect(0, 0, W, W);
    c.lineWidth = this.dpr;
    c.strokeStyle = this.box.classList.contains('recommended') ? '#222' : '#ccc';
    c.strokeRect(0.5, 0.5, W - 1, W - 1);
    if (hover >= 0 && hover < this.m && this.xy && this.xy[2 * hover] !== 65535) {
      c.strokeStyle = '#000'; c.lineWidth = 2 * this.dpr;
      c.beginPath(); c.arc(this.sx[hover], this.sy[hover], 7 * this.dpr, 0, 2 * Math.PI); c.stroke();
    }
    if (rect) {
      c.strokeStyle = '#1e50a0'; c.lineWidth = this.dpr; c.setLineDash([4 * this.dpr, 3 * this.dpr]);
      c.strokeRect(rect[0], rect[1], rect[2] - rect[0], rect[3] - rect[1]); c.setLineDash([]);
    }
  };
  Panel.prototype.nearest = function (x, y, within) {
    var best = -1, bd = within * within;
    for (var i = 0; i < this.m; i++) {
      var dx = this.sx[i] - x, dy = this.sy[i] - y, d = dx * dx + dy * dy;
      if (d < bd) { bd = d; best = i; }
    }
    return best;
  };
  // Screen (CSS pixel, page-relative) position of shown point i; for tests.
  Panel.prototype.screenOf = function (i) {
    var r = this.over.getBoundingClientRect();
    return { x: r.left + this.sx[i] / this.dpr, y: r.top + this.sy[i] / this.dpr };
  };

  var tip = document.getElementById('map-tip');
  function showTip(p, i, ev) {
    if (!tip) return;
    while (tip.firstChild) tip.removeChild(tip.firstChild);
    var lines = [['id', D.ids[i]]];
    if (lab) lines.push([D.labelColumn || 'label', fmtLabel(i)]);
    lines.push(['map', p.tipName]);
    if (p.u) lines.push([D.stability.Name, stabilityText(p.u[i])]);
    if (p.clusters) lines.push(['map cluster', p.clusters[i] === 0 ? 'none' : String(p.clusters[i] - 1)]);
    lines.forEach(function (l) {
      var row = document.createElement('div');
      var b = document.createElement('b'); b.textContent = l[0] + ': ';
      var v = document.createElement('span'); v.textContent = l[1];
      row.appendChild(b); row.appendChild(v); tip.appendChild(row);
    });
    tip.style.left = (ev.pageX + 14) + 'px'; tip.style.top = (ev.pageY + 12) + 'px';
    tip.hidden = false;
    tip.setAttribute('data-index', String(i));
  }
  function hideTip() { if (tip) { tip.hidden = true; tip.removeAttribute('data-index'); } }

  function redrawAll() { panels.forEach(function (p) { p.draw(); }); updateStatus(); }
  var pending = false;
  function redrawSoon() { if (pending) return; pending = true; requestAnimationFrame(function () { pending = false; redrawAll(); }); }
  function overlays() { panels.forEach(function (p) { if (p.xy) p.overlay(); }); }

  function attach(p) {
    var o = p.over, drag = null;
    function pos(ev) { var r = o.getBoundingClientRect(); return [(ev.clientX - r.left) * p.dpr, (ev.clientY - r.top) * p.dpr]; }
    o.addEventListener('mousemove', function (ev) {
      if (!p.xy) return;
      var q = pos(ev);
      if (drag && mode === 'pan') {
        var dx = (q[0] - drag[0]) / p.k, dy = (q[1] - drag[1]) / p.k;
        view.x0 -= dx; view.x1 -= dx; view.y0 += dy; view.y1 += dy; drag = q; redrawSoon(); return;
      }
      if (drag) { p.overlay([Math.min(drag[0], q[0]), Math.min(drag[1], q[1]), Math.max(drag[0], q[0]), Math.max(drag[1], q[1])]); return; }
      var i = p.nearest(q[0], q[1], 8 * p.dpr);
      if (i !== hover) { hover = i; overlays(); }
      if (i >= 0) showTip(p, i, ev); else hideTip();
    });
    o.addEventListener('mouseleave', function () { if (!drag) { hover = -1; overlays(); hideTip(); } });
    o.addEventListener('mousedown', function (ev) { if (!p.xy || ev.button !== 0) return; ev.preventDefault(); drag = pos(ev); hideTip(); });
    window.addEventListener('mouseup', function (ev) {
      if (!drag) return;
      var a = drag; drag = null;
      if (mode !== 'select') return;
      var r = o.getBoundingClientRect(), b = [(ev.clientX - r.left) * p.dpr, (ev.clientY - r.top) * p.dpr];
      var x0 = Math.min(a[0], b[0]), x1 = Math.max(a[0], b[0]), y0 = Math.min(a[1], b[1]), y1 = Math.max(a[1], b[1]);
      p.lastRect = [x0, y0, x1, y1];
      if (!ev.shiftKey) { sel.fill(0); }
      if (x1 - x0 >= 2 || y1 - y0 >= 2) {
        for (var i = 0; i < p.m; i++) {
          if (p.sx[i] >= x0 && p.sx[i] <= x1 && p.sy[i] >= y0 && p.sy[i] <= y1) sel[i] = 1;
        }
      }
      nsel = 0; for (var j = 0; j < S; j++) nsel += sel[j];
      redrawAll();
    });
    o.addEventListener('wheel', function (ev) {
      if (!p.xy) return;
      ev.preventDefault();
      var q = pos(ev), f = Math.exp(ev.deltaY * 0.0015);
      var wx = p.cx + (q[0] - p.W / 2) / p.k, wy = p.cy - (q[1] - p.W / 2) / p.k;
      view.x0 = wx + (view.x0 - wx) * f; view.x1 = wx + (view.x1 - wx) * f;
      view.y0 = wy + (view.y0 - wy) * f; view.y1 = wy + (view.y1 - wy) * f;
      redrawSoon();
    }, { passive: false });
    o.addEventListener('dblclick', function () { resetView(); });
  }
  function resetView() { view.x0 = home.x0; view.x1 = home.x1; view.y0 = home.y0; view.y1 = home.y1; redrawAll(); }

  function settingPanel(host, i, size, extra) {
    var st = settings[i];
    var title = '#' + st.s.number + ' ' + st.s.short + (i === D.recommended ? ' (recommended)' : '');
    var p = new Panel(host, {
      name: extra && extra.name || 'setting-' + i, kind: extra && extra.kind || 'setting', setting: i, xy: st.xy, m: st.xy ? S : 0,
      u: st.u, clusters: st.clusters, title: title, recommended: i === D.recommended, size: size, colour: extra && extra.colour
    });
    p.tipName = st.s.label;
    if (!st.xy) { var e = document.createElement('div'); e.className = 'empty'; e.textContent = 'no finished runs'; p.box.appendChild(e); }
    return p;
  }

  // The grid of settings.
  var grid = document.getElementById('map-grid');
  if (!grid) return;
  var small = settings.length > 8 ? 200 : 240;
  settings.forEach(function (st, i) { panels.push(settingPanel(grid, i, small)); });

  // The per-point map: one setting, larger, coloured by stability.
  var focusHost = document.getElementById('map-focus'), focusSel = document.getElementById('focus-setting');
  var focusColour = document.getElementById('focus-colour');
  var focus = null;
  function buildFocus() {
    if (!focusHost) return;
    if (focus) { panels.splice(panels.indexOf(focus), 1); focusHost.removeChild(focus.box); }
    var i = parseInt(focusSel.value, 10);
    focus = settingPanel(focusHost, i, 460, { name: 'focus', kind: 'focus', colour: focusColour ? focusColour.value : 'stability' });
    panels.push(focus);
    focus.draw();
  }
  function fillSettingSelect(el, def) {
    if (!el) return;
    settings.forEach(function (st, i) {
      var o = document.createElement('option'); o.value = String(i); o.textContent = '#' + st.s.number + ' ' + st.s.label + (i === D.recommended ? ' (recommended)' : '');
      if (!st.xy) o.disabled = true;
      el.appendChild(o);
    });
    el.value = String(def);
  }
  var first = D.recommended >= 0 ? D.recommended : Math.max(0, D.reference);
  fillSettingSelect(focusSel, first);

  // The runs of one setting, side by side.
  var runsHost = document.getElementById('map-runs'), runsSel = document.getElementById('runs-setting');
  var runPanels = [];
  function buildRuns() {
    if (!runsHost) return;
    runPanels.forEach(function (p) { panels.splice(panels.indexOf(p), 1); });
    runPanels = [];
    while (runsHost.firstChild) runsHost.removeChild(runsHost.firstChild);
    var i = parseInt(runsSel.value, 10), st = settings[i];
    if (!st.runs.length) { var e = document.createElement('p'); e.textContent = 'No run layouts of this setting are in the report.'; runsHost.appendChild(e); return; }
    st.runs.forEach(function (r, k) {
      var p = new Panel(runsHost, { name: 'run-' + i + '-' + k, kind: 'run', setting: i, xy: r.xy, m: D.runShown, u: null, clusters: r.clusters,
        title: 'seed ' + r.r.seed + ' (run ' + r.r.id + ')', size: 200 });
      p.tipName = st.s.label + ', seed ' + r.r.seed;
      runPanels.push(p); panels.push(p); p.draw();
    });
  }
  fillSettingSelect(runsSel, first);

  // Controls.
  var colourSel = document.getElementById('colour-by');
  function legend() {
    var host = document.getElementById('map-legend');
    if (!host) return;
    while (host.firstChild) host.removeChild(host.firstChild);
    if (colourBy === 'label' && lab) {
      D.labelNames.forEach(function (name, i) {
        if (D.labelOther >= 0 && i > D.labelOther) return;
        var item = document.createElement('span'); item.className = 'key';
        var sw = document.createElement('i'); sw.style.background = D.labelColors[i];
        var t = document.createElement('span');
        t.textContent = (D.labelOther >= 0 && i === D.labelOther) ? 'other (' + (D.labelNames.length - D.labelOther) + ' smaller labels)' : name;
        item.appendChild(sw); item.appendChild(t); host.appendChild(item);
      });
    } else if (colourBy === 'stability') {
      var bar = document.createElement('span'); bar.className = 'rampbar';
      bar.style.background = 'linear-gradient(to right,' + D.ramp.join(',') + ')';
      var lo = document.createElement('span'); lo.textContent = D.stability.Low + ' ';
      var hi = document.createElement('span'); hi.textContent = ' ' + D.stability.High;
      var w = document.createElement('div'); w.className = 'ramp-words'; w.textContent = 'Colour: ' + D.stability.Words + '.';
      host.appendChild(lo); host.appendChild(bar); host.appendChild(hi); host.appendChild(w);
    } else if (colourBy === 'cluster') {
      var c = document.createElement('span'); c.textContent = 'Colour: map cluster of each layout (ids are per layout; grey: no cluster).'; host.appendChild(c);
    }
  }
  if (colourSel) {
    [['label', 'label', !!lab], ['stability', 'per-point ' + D.stability.Name, true], ['cluster', 'map cluster', D.hasClusters]].forEach(function (o) {
      if (!o[2]) return;
      var e = document.createElement('option'); e.value = o[0]; e.textContent = o[1]; colourSel.appendChild(e);
    });
    colourSel.value = colourBy;
    colourSel.addEventListener('change', function () { colourBy = colourSel.value; legend(); redrawAll(); });
  }
  if (focusColour) {
    [['stability', 'per-point ' + D.stability.Name, true], ['label', 'label', !!lab], ['cluster', 'map cluster', D.hasClusters]].forEach(function (o) {
      if (!o[2]) return;
      var e = document.createElement('option'); e.value = o[0]; e.textContent = o[1]; focusColour.appendChild(e);
    });
    focusColour.addEventListener('change', buildFocus);
  }
  Array.prototype.forEach.call(document.querySelectorAll('input[name=drag-mode]'), function (r) {
    r.addEventListener('change', function () { if (r.checked) { mode = r.value; document.body.classList.toggle('panning', mode === 'pan'); } });
  });
  var clearBtn = document.getElementById('clear-selection');
  if (clearBtn) clearBtn.addEventListener('click', function () { sel.fill(0); nsel = 0; redrawAll(); });
  var resetBtn = document.getElementById('reset-view');
  if (resetBtn) resetBtn.addEventListener('click', resetView);
  if (focusSel) focusSel.addEventListener('change', buildFocus);
  if (runsSel) runsSel.addEventListener('change', buildRuns);
  function updateStatus() {
    var el = document.getElementById('selection-status');
    if (el) el.textContent = nsel ? nsel + ' point' + (nsel === 1 ? '' : 's') + ' selected' : 'no selection';
  }

  var tDecoded = performance.now();
  legend();
  buildFocus();
  buildRuns();
  redrawAll();
  var tDrawn = performance.now();

  // For the browser check: the panels and what each last drew highlighted.
  window.plumbMaps = {
    panels: panels,
    data: D,
    selectionSize: function () { return nsel; },
    // Milliseconds spent by this script: parsing the data, decoding it,
    // drawing every map once; and one redraw of every map.
    timing: { parse: tParsed - t0, decode: tDecoded - tParsed, draw: tDrawn - tDecoded,
      redraw: function () { var a = performance.now(); redrawAll(); return performance.now() - a; } },
    ready: true
  };
  document.body.setAttribute('data-maps-ready', '1');
})();
