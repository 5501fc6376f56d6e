// The script of `nodal tune`: sliders and boxes for the file's values, the
// analysis fetched from /api/analyse (debounced, the last request wins),
// the plots drawn as SVG from its points, saving through /api/plan and
// /api/save, and the file watched through /api/model.
'use strict';

(function () {
  var token = document.querySelector('meta[name="nodal-token"]').content;
  var SVGNS = 'http://www.w3.org/2000/svg';
  var STEPS = 1000; // slider positions over two decades

  var model = null;       // from /api/model
  var generation = 0;
  var values = {};        // name -> text, the values set (the query string)
  var out = '';           // chosen response ('' = the default)
  var rows = {};          // name -> {tr, range, box, nearest}
  var timer = 0, inflight = null, last = null;

  function $(id) { return document.getElementById(id); }
  function el(tag, cls, text) {
    var e = document.createElement(tag);
    if (cls) e.className = cls;
    if (text !== undefined) e.textContent = text;
    return e;
  }

  // Engineering notation with an SI prefix: fmt(2340.5, 'Hz', 4) is "2.341 kHz".
  var PREFIX = { '-15': 'f', '-12': 'p', '-9': 'n', '-6': 'µ', '-3': 'm', '0': '', '3': 'k', '6': 'M', '9': 'G', '12': 'T' };
  function fmt(v, unit, digits) {
    if (v === null || v === undefined || !isFinite(v)) return '—';
    if (v === 0) return '0' + (unit ? ' ' + unit : '');
    var e3 = Math.floor(Math.log10(Math.abs(v)) / 3) * 3;
    var m = v / Math.pow(10, e3);
    var t = Number(m.toPrecision(digits || 4));
    if (Math.abs(t) >= 1000 && e3 < 12) { e3 += 3; t = Number((t / 1000).toPrecision(digits || 4)); }
    if (PREFIX[e3] === undefined) return v.toPrecision(digits || 4) + (unit ? ' ' + unit : '');
    return String(t) + (unit ? ' ' : '') + PREFIX[e3] + (unit || '');
  }
  // A value as the file writes it (3 significant digits, prefix, no space,
  // "u" for micro): the text the slider puts in the query string.
  function literal(v) {
    var e3 = Math.floor(Math.log10(v) / 3) * 3;
    var t = Number((v / Math.pow(10, e3)).toPrecision(3));
    if (t >= 1000) { e3 += 3; t = Number((t / 1000).toPrecision(3)); }
    var p = PREFIX[e3];
    if (p === undefined) return v.toPrecision(3);
    return String(t) + (p === 'µ' ? 'u' : p);
  }

  function toPos(ct, v) { return Math.round(Math.max(0, Math.min(STEPS, (Math.log10(v / ct.nominal) + 1) / 2 * STEPS))); }
  function fromPos(ct, p) { return ct.nominal * Math.pow(10, p / STEPS * 2 - 1); }

  function query() {
    var parts = [];
    (model ? model.controls : []).forEach(function (ct) {
      if (values[ct.name] !== undefined) parts.push(ct.name + '=' + encodeURIComponent(values[ct.name]));
    });
    if (out && model && out !== model.response) parts.push(model.out_key + '=' + encodeURIComponent(out));
    return parts.join('&');
  }

  function readQuery() {
    values = {}; out = '';
    var q = location.search.replace(/^\?/, '');
    if (!q) return;
    q.split('&').forEach(function (kv) {
      if (!kv) return;
      var i = kv.indexOf('=');
      var k = decodeURIComponent(i < 0 ? kv : kv.slice(0, i));
      var v = i < 0 ? '' : decodeURIComponent(kv.slice(i + 1).replace(/\+/g, ' '));
      if (model && k === model.out_key) out = v; else values[k] = v;
    });
  }

  function buildControls() {
    var tb = $('controls').querySelector('tbody');
    tb.textContent = '';
    rows = {};
    model.controls.forEach(function (ct) {
      var tr = el('tr');
      tr.id = 'ctl-' + ct.name;
      var name = el('td', 'name', ct.name);
      name.appendChild(el('span', 'what', ' ' + ct.what + (ct.line ? ' · line ' + ct.line : '')));
      var range = el('input');
      range.type = 'range'; range.min = 0; range.max = STEPS; range.step = 1;
      range.value = toPos(ct, ct.nominal);
      range.name = ct.name;
      range.setAttribute('aria-label', ct.name);
      var box = el('input');
      box.type = 'text'; box.name = ct.name + '-text'; box.spellcheck = false;
      box.setAttribute('aria-label', ct.name + ' value');
      var nearest = el('td', 'nearest');
      var reset = el('button', '', 'reset');
      reset.type = 'button';
      reset.title = 'back to the value in the file';
      var tdR = el('td'); tdR.appendChild(range);
      var tdB = el('td'); tdB.appendChild(box);
      var tdX = el('td'); tdX.appendChild(reset);
      [name, tdR, tdB, nearest, tdX].forEach(function (c) { tr.appendChild(c); });
      tb.appendChild(tr);
      rows[ct.name] = { ct: ct, tr: tr, range: range, box: box, nearest: nearest };
      range.addEventListener('input', function () {
        var v = literal(fromPos(ct, Number(range.value)));
        values[ct.name] = v; box.value = v; box.classList.remove('bad');
        schedule(20);
      });
      box.addEventListener('keydown', function (ev) { if (ev.key === 'Enter') { commitBox(ct, box); } });
      box.addEventListener('change', function () { commitBox(ct, box); });
      reset.addEventListener('click', function () { delete values[ct.name]; box.classList.remove('bad'); schedule(0); });
    });
    var sel = $('response');
    sel.textContent = '';
    model.responses.forEach(function (r) {
      var o = el('option', '', r); o.value = r; sel.appendChild(o);
    });
    sel.value = out || model.response;
    var notes = $('notes');
    notes.textContent = '';
    (model.notes || []).forEach(function (n) { notes.appendChild(el('li', '', n)); });
  }

  function commitBox(ct, box) {
    var t = box.value.trim();
    if (t === '') { delete values[ct.name]; } else { values[ct.name] = t; }
    schedule(0);
  }

  function schedule(ms) {
    clearTimeout(timer);
    timer = setTimeout(analyse, ms);
  }

  function analyse() {
    if (inflight) inflight.abort();
    var ctl = new AbortController();
    inflight = ctl;
    var q = query();
    history.replaceState(null, '', q ? '?' + q : location.pathname);
    $('status').textContent = 'computing…';
    fetch('/api/analyse' + (q ? '?' + q : ''), { signal: ctl.signal }).then(function (r) {
      return r.json().then(function (d) { return { ok: r.ok, d: d }; });
    }).then(function (res) {
      if (inflight !== ctl) return;
      inflight = null;
      if (!res.ok) { showRequestError(res.d.error); return; }
      $('request-error').hidden = true;
      Object.keys(rows).forEach(function (n) { rows[n].box.classList.remove('bad'); });
      last = res.d;
      render(res.d);
      $('status').textContent = '';
    }).catch(function (err) {
      if (err.name === 'AbortError') return;
      $('status').textContent = 'server not answering: ' + err.message;
    });
  }

  function showRequestError(msg) {
    var e = $('request-error');
    e.textContent = msg; e.hidden = false;
    $('status').textContent = 'value not understood';
    Object.keys(rows).forEach(function (n) {
      var bad = msg.indexOf(n + ':') === 0 || msg.indexOf(n + '=') === 0;
      rows[n].box.classList.toggle('bad', bad);
    });
  }

  function render(d) {
    d.values.forEach(function (v) {
      var r = rows[v.name];
      if (!r) return;
      r.tr.classList.toggle('set', v.set);
      if (document.activeElement !== r.range) r.range.value = toPos(r.ct, v.value);
      if (document.activeElement !== r.box) r.box.value = v.set ? values[v.name] : v.text;
      r.box.dataset.value = v.value;
      r.nearest.textContent = v.nearest_text || '';
    });
    var unstable = d.stability !== 'stable';
    renderFigures(d, unstable);
    renderRequirements(d.requirements || [], unstable);
    var u = $('unstable');
    u.hidden = !unstable;
    if (unstable) {
      u.textContent = d.stability_reason + ' (' + d.unstable_poles.map(function (p) {
        return fmt(p.re, '', 4) + (p.im ? (p.im > 0 ? ' + j' : ' − j') + fmt(Math.abs(p.im), '', 4) : '');
      }).join(', ') + ' rad/s): no response is drawn for this setting.';
    }
    drawBode(d, unstable);
    drawStep(d, unstable);
    drawPoleZero(d);
  }

  function figure(dl, name, value, id, data) {
    var dt = el('dt', '', name), dd = el('dd', '', value);
    if (id) dd.id = id;
    if (data !== undefined) dd.dataset.value = data;
    dl.appendChild(dt); dl.appendChild(dd);
  }

  // renderFigures lists the figures as the server wrote them (the rows of
  // the transfer command's table and the pole pairs); for an unstable
  // setting the ones read off the steady-state response (DC gain,
  // high-frequency gain, −3 dB, peak) have no meaning and are not shown as
  // numbers.
  function renderFigures(d, unstable) {
    var t = d.transfer, dl = $('figures');
    dl.textContent = '';
    (d.figures || []).forEach(function (f) {
      var pair = f.name.indexOf('pole pair') === 0;
      var f3 = f.name.indexOf('−3 dB') === 0;
      var text = unstable && !pair ? '— (unstable: no steady state)' : f.text;
      var data = f3 ? (!unstable && t.f3db_hz && t.f3db_hz.length ? t.f3db_hz[0] : '') : undefined;
      figure(dl, f.name, text, f3 ? 'fig-f3db' : '', data);
    });
    figure(dl, 'H(s)', t.factored + '  [' + t.unit + ']');
    figure(dl, 'stability', d.stability === 'stable' ? 'stable: no pole of H in the right half-plane' : d.stability_reason, 'fig-stability');
  }

  // renderRequirements lists every require with its value and verdict; for
  // an unstable setting the value (read as for a stable one) is struck
  // through and the verdict says unstable.
  function renderRequirements(reqs, unstable) {
    var tb = $('requirements').querySelector('tbody');
    tb.textContent = '';
    $('no-requirements').hidden = reqs.length > 0;
    reqs.forEach(function (r, i) {
      var tr = el('tr');
      tr.id = 'req-' + i;
      tr.dataset.pass = r.pass;
      tr.appendChild(el('td', '', r.requirement.replace(/^require /, '')));
      tr.appendChild(el('td', unstable ? 'moot' : '', r.text));
      if (unstable) tr.appendChild(el('td', 'fail verdict', 'unstable'));
      else tr.appendChild(el('td', r.pass ? 'pass verdict' : 'fail verdict', r.pass ? 'pass' : 'FAIL'));
      if (r.reason) tr.appendChild(el('td', 'what', r.reason));
      tb.appendChild(tr);
    });
  }

  // ---- plots ----

  function svg(tag, attrs, parent) {
    var e = document.createElementNS(SVGNS, tag);
    Object.keys(attrs || {}).forEach(function (k) { e.setAttribute(k, attrs[k]); });
    if (parent) parent.appendChild(e);
    return e;
  }
  function niceTicks(lo, hi, n) {
    var span = hi - lo;
    if (!(span > 0)) return [lo];
    var step = Math.pow(10, Math.floor(Math.log10(span / n)));
    var err = span / n / step;
    step *= err >= 5 ? 10 : err >= 2 ? 5 : err >= 1.5 ? 2 : 1;
    var out = [];
    for (var t = Math.ceil(lo / step) * step; t <= hi + step * 1e-9; t += step) out.push(Math.abs(t) < step * 1e-9 ? 0 : t);
    return out;
  }
  function extent(series, idx) {
    var lo = Infinity, hi = -Infinity;
    series.forEach(function (s) {
      s.pts.forEach(function (p) {
        var v = p[idx];
        if (v !== null && isFinite(v)) { lo = Math.min(lo, v); hi = Math.max(hi, v); }
      });
    });
    return [lo, hi];
  }
  // panel draws series [{pts: [[x, y]], cls}] on axes (log x when opt.logx).
  function panel(parent, opt) {
    var W = opt.width || 640, H = opt.height || 220, L = 56, R = 12, T = 10, B = 30;
    var s = svg('svg', { viewBox: '0 0 ' + W + ' ' + H, width: W, height: H, role: 'img', 'aria-label': opt.label }, parent);
    var xs = opt.xrange || extent(opt.series, 0), ys = opt.yrange || extent(opt.series, 1);
    if (!isFinite(ys[0])) ys = [-1, 1];
    if (ys[1] - ys[0] < 1e-12 * Math.max(1, Math.abs(ys[0]))) { ys = [ys[0] - 1, ys[1] + 1]; }
    var pad = (ys[1] - ys[0]) * 0.05; ys = [ys[0] - pad, ys[1] + pad];
    var fx = opt.logx ? function (x) { return Math.log10(x); } : function (x) { return x; };
    var x0 = fx(xs[0]), x1 = fx(xs[1]);
    if (!(x1 > x0)) { x1 = x0 + 1; }
    var X = function (x) { return L + (fx(x) - x0) / (x1 - x0) * (W - L - R); };
    var Y = function (y) { return T + (ys[1] - y) / (ys[1] - ys[0]) * (H - T - B); };
    var xt = [];
    if (opt.logx) { for (var d = Math.ceil(x0); d <= Math.floor(x1); d++) xt.push(Math.pow(10, d)); }
    else xt = niceTicks(xs[0], xs[1], 6);
    xt.forEach(function (t) {
      svg('line', { x1: X(t), x2: X(t), y1: T, y2: H - B, class: 'grid' }, s);
      var tx = svg('text', { x: X(t), y: H - B + 14, 'text-anchor': 'middle' }, s);
      tx.textContent = opt.xfmt ? opt.xfmt(t) : fmt(t, '', 3);
    });
    niceTicks(ys[0], ys[1], 5).forEach(function (t) {
      svg('line', { x1: L, x2: W - R, y1: Y(t), y2: Y(t), class: 'grid' }, s);
      var ty = svg('text', { x: L - 4, y: Y(t) + 4, 'text-anchor': 'end' }, s);
      ty.textContent = opt.yfmt ? opt.yfmt(t) : fmt(t, '', 3);
    });
    svg('rect', { x: L, y: T, width: W - L - R, height: H - T - B, fill: 'none', class: 'axis' }, s);
    var xl = svg('text', { x: W - R, y: H - 3, 'text-anchor': 'end' }, s); xl.textContent = opt.xlabel || '';
    var yl = svg('text', { x: 4, y: T + 8 }, s); yl.textContent = opt.ylabel || '';
    opt.series.forEach(function (sr) {
      var d = '', pen = false;
      sr.pts.forEach(function (p) {
        if (p[1] === null || !isFinite(p[1]) || p[0] < xs[0] || p[0] > xs[1]) { pen = false; return; }
        d += (pen ? 'L' : 'M') + X(p[0]).toFixed(1) + ' ' + Y(Math.max(ys[0], Math.min(ys[1], p[1]))).toFixed(1);
        pen = true;
      });
      if (d) svg('path', { d: d, class: sr.cls }, s);
    });
    (opt.vmarks || []).forEach(function (x) {
      if (x >= xs[0] && x <= xs[1]) svg('line', { x1: X(x), x2: X(x), y1: T, y2: H - B, class: 'mark' }, s);
    });
    (opt.hmarks || []).forEach(function (y) {
      if (y >= ys[0] && y <= ys[1]) svg('line', { x1: L, x2: W - R, y1: Y(y), y2: Y(y), class: 'final' }, s);
    });
    return { svg: s, X: X, Y: Y };
  }

  function pts(points, key) { return points.map(function (p) { return [p.freq_hz, p[key]]; }); }

  function drawBode(d, unstable) {
    var box = $('bode');
    box.textContent = '';
    var nom = d.nominal_bode ? d.nominal_bode.points : [];
    var cur = unstable ? [] : d.bode.points;
    var all = nom.concat(cur);
    if (!all.length) return;
    var xr = [all[0].freq_hz, all[all.length - 1].freq_hz];
    var hz = function (t) { return fmt(t, 'Hz', 3); };
    panel(box, { label: 'magnitude', logx: true, xrange: xr, ylabel: 'dB', xfmt: hz, yfmt: function (t) { return String(Math.round(t * 10) / 10); },
      series: [{ pts: pts(nom, 'mag_db'), cls: 'nominal' }, { pts: pts(cur, 'mag_db'), cls: 'current' }],
      vmarks: unstable ? [] : (d.transfer.f3db_hz || []) });
    panel(box, { label: 'phase', logx: true, xrange: xr, ylabel: 'degrees', height: 160, xfmt: hz, yfmt: function (t) { return String(Math.round(t)); },
      series: [{ pts: pts(nom, 'phase_deg'), cls: 'nominal' }, { pts: pts(cur, 'phase_deg'), cls: 'current' }] });
  }

  function drawStep(d, unstable) {
    var box = $('step');
    box.textContent = '';
    if (unstable) { box.appendChild(el('p', 'fail', 'unstable: the step response grows without bound')); return; }
    if (!d.step) { box.appendChild(el('p', '', d.step_reason || 'no step response')); return; }
    var p = d.step.points.map(function (q) { return [q.t_s, q.y]; });
    var m = d.step.metrics;
    panel(box, { label: 'step response', width: 420, height: 220, xlabel: 's', ylabel: 'y', series: [{ pts: p, cls: 'current' }],
      hmarks: m.final === null ? [] : [m.final], xfmt: function (t) { return fmt(t, '', 3); } });
    var f = el('p', 'what', d.step_text || '');
    box.appendChild(f);
  }

  // drawPoleZero draws the s-plane map with equal scales; when the roots
  // spread over more than two decades a second map zooms on the dominant
  // ones (within ten times the smallest non-zero magnitude).
  function drawPoleZero(d) {
    var box = $('polezero');
    box.textContent = '';
    var P = d.transfer.poles, Z = d.transfer.zeros, all = P.concat(Z);
    var mags = all.map(function (z) { return Math.hypot(z.re, z.im); }).filter(function (m) { return m > 0; });
    var rmax = Math.max.apply(null, mags.concat([0])), rmin = Math.min.apply(null, mags.concat([Infinity]));
    map(box, P, Z, rmax, 'all roots');
    if (mags.length && rmax / rmin > 100) {
      var off = mags.filter(function (m) { return m > 10 * rmin; }).length;
      map(box, P, Z, 10 * rmin, 'zoom, ' + off + ' off the map');
    }
  }

  function map(box, P, Z, r, label) {
    if (!(r > 0)) r = 1;
    r *= 1.15;
    var W = 300, mk = panel(box, { label: label, width: W, height: W - 30, xrange: [-r, r], yrange: [-r * 0.93, r * 0.93], xlabel: label + ' · Re (rad/s)', ylabel: 'Im',
      series: [], xfmt: function (t) { return fmt(t, '', 2); } });
    var s = mk.svg, X = mk.X, Y = mk.Y;
    svg('line', { x1: X(0), x2: X(0), y1: Y(r * 0.93), y2: Y(-r * 0.93), class: 'axis' }, s);
    var inside = function (z) { return Math.abs(z.re) <= r && Math.abs(z.im) <= r * 0.93; };
    P.filter(inside).forEach(function (p) {
      var x = X(p.re), y = Y(p.im), c = 'pole' + (p.re > 0 ? ' rhp' : '');
      svg('line', { x1: x - 5, y1: y - 5, x2: x + 5, y2: y + 5, class: c }, s);
      svg('line', { x1: x - 5, y1: y + 5, x2: x + 5, y2: y - 5, class: c }, s);
    });
    Z.filter(inside).forEach(function (z) { svg('circle', { cx: X(z.re), cy: Y(z.im), r: 5, class: 'zero' }, s); });
  }

  // ---- saving ----

  function post(path, body) {
    return fetch(path, { method: 'POST', headers: { 'X-Nodal-Token': token, 'Content-Type': 'text/plain' }, body: body }).then(function (r) {
      return r.json().then(function (d) { return { ok: r.ok, d: d }; }, function () { return r.text().then(function (t) { return { ok: false, d: { error: t } }; }); });
    });
  }

  var planned = null;
  function startSave() {
    var q = query();
    $('save-error').hidden = true;
    post('/api/plan', q).then(function (res) {
      if (!res.ok) { showRequestError(res.d.error); return; }
      planned = { query: q, digest: res.d.digest };
      var pre = $('diff');
      pre.textContent = '';
      if (!res.d.diff || !res.d.diff.length) {
        pre.textContent = 'The values are those of the file: nothing to write.';
        $('save-confirm').disabled = true;
      } else {
        $('save-confirm').disabled = false;
        res.d.diff.forEach(function (l) {
          pre.appendChild(el('div', 'old', '- ' + l.line + ': ' + l.old));
          pre.appendChild(el('div', 'new', '+ ' + l.line + ': ' + l.new));
        });
      }
      $('save-file').textContent = model ? $('file').textContent : '';
      $('save-dialog').showModal();
    });
  }
  function confirmSave() {
    if (!planned) return;
    post('/api/save', JSON.stringify(planned)).then(function (res) {
      if (!res.ok) { var e = $('save-error'); e.textContent = res.d.error; e.hidden = false; return; }
      $('save-dialog').close();
      planned = null;
      values = {}; // the file now holds them: they are the nominal values
      $('status').textContent = 'saved ' + res.d.saved;
      refreshModel(true);
    });
  }

  // ---- the file ----

  function refreshModel(force) {
    return fetch('/api/model').then(function (r) { return r.json(); }).then(function (m) {
      var le = $('load-error');
      if (m.load_error) { le.textContent = 'The file does not load; the page keeps the last good circuit.\n' + m.load_error; le.hidden = false; }
      else le.hidden = true;
      if (m.generation === generation && !force) return;
      generation = m.generation;
      var first = model === null;
      var shape = JSON.stringify(m.model);
      if (first || shape !== JSON.stringify(model)) {
        model = m.model;
        if (first) readQuery();
        $('title').textContent = model.title || 'nodal tune';
        document.title = (model.title || m.file) + ' · nodal tune';
        $('file').textContent = m.file;
        buildControls();
      }
      schedule(0);
    }).catch(function (err) { $('status').textContent = 'server not answering: ' + err.message; });
  }

  document.addEventListener('DOMContentLoaded', function () {
    $('response').addEventListener('change', function () { out = $('response').value; schedule(0); });
    $('save').addEventListener('click', startSave);
    $('save-confirm').addEventListener('click', confirmSave);
    refreshModel(true);
    setInterval(function () { refreshModel(false); }, 1000);
  });
})();
