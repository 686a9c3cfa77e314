/* pairpulse dashboard: plain JavaScript, charts by uPlot (served from the WebJar), live by polling. */
(function () {
  'use strict';

  var POLL_MS = 2000;
  var TOKEN_KEY = 'pairpulse.token';
  var css = getComputedStyle(document.documentElement);
  var color = function (name) { return css.getPropertyValue(name).trim(); };
  var COLORS = { rise: color('--rise'), riseSoft: color('--rise-soft'), fall: color('--fall'), base: color('--base'),
    ink: color('--ink'), muted: color('--muted'), line: color('--line') };

  var state = { segment: 'all', version: -1, status: null, selected: null, sparks: [], chart: null, failures: 0 };

  // ------------------------------------------------------------------ plumbing

  var $ = function (id) { return document.getElementById(id); };

  function el(tag, cls, text) {
    var node = document.createElement(tag);
    if (cls) { node.className = cls; }
    if (text !== undefined && text !== null) { node.textContent = text; }
    return node;
  }

  function clear(node) { while (node.firstChild) { node.removeChild(node.firstChild); } }

  (function takeTokenFromHash() {
    var m = /(?:^#|&)token=([^&]+)/.exec(window.location.hash || '');
    if (m) {
      sessionStorage.setItem(TOKEN_KEY, decodeURIComponent(m[1]));
      history.replaceState(null, '', window.location.pathname + window.location.search);
    }
  })();

  function notice(text) {
    var n = $('notice');
    if (text) { n.textContent = text; n.classList.remove('hidden'); } else { n.classList.add('hidden'); }
  }

  function api(path, params) {
    var query = new URLSearchParams(params || {});
    if (path !== '/api/v1/alerts' || params && params.segment) { query.set('segment', state.segment); }
    var headers = { 'Accept': 'application/json' };
    var token = sessionStorage.getItem(TOKEN_KEY);
    if (token) { headers['Authorization'] = 'Bearer ' + token; }
    return fetch(path + '?' + query.toString(), { headers: headers, cache: 'no-store' }).then(function (r) {
      return r.json().then(function (body) {
        if (r.status === 401) {
          notice('This server needs a bearer token: open the dashboard as ' + window.location.pathname + '#token=YOUR_TOKEN');
          throw new Error('unauthorized');
        }
        if (!r.ok) { throw new Error(body.error || ('HTTP ' + r.status)); }
        return body;
      });
    });
  }

  function fmt(x, digits) {
    if (x === null || x === undefined || !isFinite(x)) { return '–'; }
    var d = digits === undefined ? 2 : digits;
    return Number(x).toLocaleString('en-US', { minimumFractionDigits: d, maximumFractionDigits: d });
  }

  function count(x) {
    if (x === null || x === undefined || !isFinite(x)) { return '–'; }
    if (x >= 1e6) { return fmt(x / 1e6, 1) + ' M'; }
    if (x >= 1e4) { return fmt(x / 1e3, 1) + ' k'; }
    return fmt(x, x < 10 && x % 1 !== 0 ? 1 : 0);
  }

  function pct(x, digits) { return x === null || !isFinite(x) ? '–' : fmt(100 * x, digits === undefined ? 1 : digits) + ' %'; }

  function when(ms) {
    if (ms === null || ms === undefined) { return '–'; }
    var d = new Date(ms);
    return d.toLocaleDateString('en-GB', { day: '2-digit', month: 'short' }) + ' ' +
      d.toLocaleTimeString('en-GB', { hour: '2-digit', minute: '2-digit' });
  }

  function age(ms) {
    if (ms === null || ms === undefined) { return '–'; }
    if (ms < 1500) { return 'just now'; }
    if (ms < 120000) { return Math.round(ms / 1000) + ' s ago'; }
    if (ms < 7200000) { return Math.round(ms / 60000) + ' min ago'; }
    return Math.round(ms / 3600000) + ' h ago';
  }

  function pairName(a, b) { return a + ' + ' + b; }

  // ------------------------------------------------------------------ status and tiles

  function renderStatus(s) {
    state.status = s;
    var t = s.table;
    $('table-meta').textContent = s.ready
      ? 'table v' + t.version + ' · refreshed ' + age(t.ageMillis) + ' · data as of ' + when(t.watermarkMillis)
      : 'waiting for the first pair table…';
    var g = s.group;
    var groupMeta = $('group-meta');
    if (g) {
      groupMeta.classList.remove('hidden');
      groupMeta.classList.toggle('partial', g.partial);
      groupMeta.textContent = (g.partial ? 'partial: ' : 'group: ') + g.merged + ' of ' + g.partitions + ' partitions' +
        (g.oldestContributionAgeMillis > 0 ? ' · oldest ' + age(g.oldestContributionAgeMillis) : '') +
        (g.alertLeader ? ' · alert leader' : '');
      groupMeta.title = 'live ' + g.live + ', from other instances ' + g.remote + ', empty ' + g.empty +
        (g.missing.length ? ', missing ' + g.missing.join(' ') : '') + (g.stale.length ? ', stale ' + g.stale.join(' ') : '');
    } else {
      groupMeta.classList.add('hidden');
    }
    var ing = s.ingest;
    $('ingest-rate').textContent = count(ing.basketsPerSecond) + ' baskets/s';
    var ingestState = el('span', 'state ' + ing.state, ing.state);
    var rate = $('ingest-rate');
    rate.appendChild(ingestState);
    var dead = Object.keys(ing.deadLettersByReason || {}).map(function (k) { return k + ' ' + count(ing.deadLettersByReason[k]); });
    $('ingest-detail').textContent = 'lag ' + (ing.lagRecords === null ? '–' : count(ing.lagRecords)) + ' records · ' +
      count(ing.basketsTotal) + ' baskets in all · dead letters ' + (dead.length ? dead.join(', ') : 'none');
    $('table-pairs').textContent = count(t.publishedPairs) + ' published';
    $('table-detail').textContent = (t.horizons || []).map(function (h) {
      return h.name + ' ' + count(h.publishedPairs);
    }).join(' · ') + ' · ' + count(t.suppressedPairs) + ' held back by the floor';
    var sk = s.sketch;
    $('sketch-fill').style.width = isFinite(sk.pairFill) && sk.pairFill !== null ? Math.min(100, 100 * sk.pairFill) + '%' : '0';
    $('sketch-detail').textContent = sk.trackedPairCapacity
      ? count(sk.trackedPairs) + ' of ' + count(sk.trackedPairCapacity) + ' tracked pairs (' + pct(sk.pairFill, 0) + ') · ' +
        fmt(sk.stateBytes / 1048576, 1) + ' MiB'
      : 'not reported';
    var bounds = $('sketch-bounds');
    clear(bounds);
    (sk.horizons || []).forEach(function (h) {
      var span = el('span');
      span.appendChild(document.createTextNode(h.name + ' '));
      span.appendChild(el('b', null, fmt(h.pairErrorBound, 1)));
      span.appendChild(document.createTextNode(' of N ' + count(h.baskets)));
      bounds.appendChild(span);
    });
    if (!(sk.horizons || []).length) { bounds.textContent = 'not reported'; }
    renderEvaluation(s.evaluation);
    $('floor').textContent = count(s.serving.cohortFloor);
    $('drift-hint').textContent = s.drift ? s.drift.recentHorizon + ' against ' + s.drift.referenceHorizon +
      ' · rate or association moved at √G² ≥ ' + fmt(s.drift.enterRootG2, 1) + ' and ×' + fmt(s.drift.enterRatio, 1) :
      'recent against the reference period';
  }

  var METHOD_NAMES = { incremental: 'served', nightly: 'daily rebuild', popular: 'most popular' };

  /** The evaluation tile: the served table's hit rate, its baselines, and their course per period. */
  function renderEvaluation(ev) {
    $('tile-evaluation').classList.toggle('hidden', !ev);
    if (!ev) { return; }
    $('evaluation-rate').textContent = pct(ev.hitRate) + ' hit rate';
    var methods = ev.methods || [];
    $('evaluation-methods').textContent = methods.map(function (m) {
      return (METHOD_NAMES[m.method] || m.method) + ' ' + pct(m.hitRate);
    }).join(' · ');
    $('evaluation-detail').textContent = 'top ' + ev.k + ' · MRR ' + fmt(ev.meanReciprocalRank, 3) + ' · ' +
      count(ev.baskets) + ' baskets · ' + ev.horizon;
    evaluationChart(ev.series || [], methods.map(function (m) { return m.method; }));
  }

  function evaluationChart(series, names) {
    var target = $('evaluation-chart');
    var last = series.length ? series[series.length - 1] : null;
    var key = series.length + ':' + (last ? last.startMillis + ':' + last.baskets : '') + ':' + names.join(',');
    if (state.evaluationKey === key) { return; }
    state.evaluationKey = key;
    if (state.evaluationChart) { state.evaluationChart.destroy(); state.evaluationChart = null; }
    clear(target);
    target.dataset.points = String(series.length);
    if (series.length < 2 || names.length === 0) { return; }
    var xs = series.map(function (p) { return p.startMillis / 1000; });
    var cols = [xs].concat(names.map(function (n) {
      return series.map(function (p) { return p.hitRate[n] === undefined ? null : p.hitRate[n]; });
    }));
    var styles = {
      incremental: { stroke: COLORS.rise, width: 2 },
      nightly: { stroke: COLORS.base, width: 1.5, dash: [5, 3] },
      popular: { stroke: COLORS.muted, width: 1.2, dash: [2, 3] }
    };
    var opts = {
      width: Math.max(170, target.clientWidth), height: 60, pxAlign: false,
      cursor: { show: false }, legend: { show: false }, select: { show: false },
      scales: { x: { time: true }, y: { range: function (u, min, max) { return [0, Math.max(0.05, max * 1.1)]; } } },
      axes: [{ show: false }, { show: false }],
      padding: [4, 2, 2, 2],
      series: [{}].concat(names.map(function (n) {
        var style = styles[n] || { stroke: COLORS.muted, width: 1 };
        return { label: METHOD_NAMES[n] || n, stroke: style.stroke, width: style.width, dash: style.dash };
      }))
    };
    state.evaluationChart = new uPlot(opts, cols, target);
  }

  function fillSelect(select, values, chosen) {
    if (select.options.length === values.length) { return; }
    clear(select);
    values.forEach(function (v) {
      var o = el('option', null, v);
      o.value = v;
      if (v === chosen) { o.selected = true; }
      select.appendChild(o);
    });
  }

  function setLive(kind, text) {
    var live = $('live');
    live.className = 'live ' + kind;
    $('live-text').textContent = text;
  }

  // ------------------------------------------------------------------ charts

  function sparkline(target, xs, ys, base, stroke) {
    var opts = {
      width: 96, height: 34, pxAlign: false,
      cursor: { show: false }, legend: { show: false }, select: { show: false },
      scales: { x: { time: false } },
      axes: [{ show: false }, { show: false }],
      padding: [3, 2, 3, 2],
      series: [{}, { stroke: COLORS.base, width: 1, dash: [3, 3] }, { stroke: stroke, width: 1.8 }]
    };
    var chart = new uPlot(opts, [xs, base, ys], target);
    target.dataset.points = String(xs.length);
    state.sparks.push(chart);
    return chart;
  }

  function pairChart(trend) {
    var target = $('pair-chart');
    if (state.chart) { state.chart.destroy(); state.chart = null; }
    clear(target);
    var n = trend.points;
    $('pair-empty').classList.toggle('hidden', n > 0);
    target.dataset.points = String(n);
    if (n === 0) { return; }
    var recent = trend.series.recent || trend.series[trend.horizons[0]];
    var baseline = trend.series.baseline || trend.series[trend.horizons[trend.horizons.length - 1]];
    var cols = withGaps(trend.watermarkMillis, [recent.liftLower, recent.liftUpper, baseline.lift, recent.lift]);
    var width = Math.max(320, target.clientWidth);
    var opts = {
      width: width, height: 270,
      legend: { show: false },
      cursor: { points: { size: 6 } },
      scales: { x: { time: true } },
      axes: [
        { stroke: COLORS.muted, grid: { stroke: COLORS.line, width: 1 }, ticks: { stroke: COLORS.line } },
        { stroke: COLORS.muted, grid: { stroke: COLORS.line, width: 1 }, ticks: { stroke: COLORS.line }, label: 'lift',
          values: function (u, vals) { return vals.map(function (v) { return fmt(v, 1); }); } }
      ],
      series: [
        {},
        { label: 'recent interval low', stroke: COLORS.riseSoft, width: 1 },
        { label: 'recent interval high', stroke: COLORS.riseSoft, width: 1 },
        { label: 'baseline', stroke: COLORS.base, width: 2, dash: [6, 4] },
        { label: 'recent', stroke: COLORS.rise, width: 2.4, points: { show: n < 40 } }
      ],
      bands: [{ series: [2, 1], fill: 'rgba(15, 122, 108, 0.12)' }]
    };
    state.chart = new uPlot(opts, cols, target);
  }

  /**
   * Points are recorded only while a pair is among those the trend keeps; where two recorded points are
   * far apart (more than three typical steps) a null is inserted so the line breaks instead of bridging.
   */
  function withGaps(millis, series) {
    var steps = [];
    for (var i = 1; i < millis.length; i++) { steps.push(millis[i] - millis[i - 1]); }
    steps.sort(function (a, b) { return a - b; });
    var typical = steps.length ? steps[Math.floor(steps.length / 2)] : 0;
    var xs = [];
    var out = series.map(function () { return []; });
    for (var j = 0; j < millis.length; j++) {
      if (j > 0 && typical > 0 && millis[j] - millis[j - 1] > 3 * typical) {
        xs.push((millis[j - 1] + typical) / 1000);
        out.forEach(function (col) { col.push(null); });
      }
      xs.push(millis[j] / 1000);
      series.forEach(function (col, k) { out[k].push(col[j]); });
    }
    return [xs].concat(out);
  }

  // ------------------------------------------------------------------ sections

  function selectPair(a, b) {
    state.selected = { a: a, b: b };
    $('pair-title').textContent = 'Lift over time · ' + pairName(a, b);
    document.querySelectorAll('[data-pair]').forEach(function (node) {
      node.classList.toggle('selected', node.dataset.pair === a + '\u0000' + b);
    });
    return api('/api/v1/trend/pair', { a: a, b: b }).then(pairChart);
  }

  /** A ratio for people: ×3.2, or "from none" when the reference had none (JSON carries no infinity). */
  function ratio(x) {
    return x === null || x === undefined ? 'from none' : '×' + fmt(x, x >= 10 ? 0 : 2);
  }

  function driftList(target, entries, kind) {
    clear(target);
    if (!entries.length) {
      target.appendChild(el('li', 'empty-row', kind === 'bundle' ? 'none right now' : 'nothing ' + (kind === 'emerging' ? 'rising' : 'fading') + ' right now'));
      return [];
    }
    var sparks = [];
    entries.forEach(function (e) {
      var li = el('li');
      li.tabIndex = 0;
      li.dataset.pair = e.a + '\u0000' + e.b;
      var name = el('div', 'pair', pairName(e.a, e.b));
      name.title = pairName(e.a, e.b);
      name.appendChild(el('span', 'tag ' + e.state, e.state));
      li.appendChild(name);
      var facts = el('div', 'facts');
      if (kind === 'bundle') {
        facts.textContent = 'both confidences ≥ ' + fmt(e.recentMinConfidence, 2) + ' · ' + count(e.recentPairBaskets) + ' recent baskets · since ' + when(e.sinceMillis);
      } else {
        facts.appendChild(document.createTextNode((e.change ? e.change + ' · ' : '') + 'per basket '));
        facts.appendChild(el('span', kind === 'emerging' ? 'up-text' : 'down-text', ratio(e.rateRatio)));
        facts.appendChild(document.createTextNode(' · odds ratio ' + ratio(e.oddsRatioRatio) + ' · ' +
          count(e.baselinePairBaskets) + ' → ' + count(e.recentPairBaskets) + ' baskets · since ' + when(e.sinceMillis)));
        facts.title = e.summary || '';
      }
      li.appendChild(facts);
      if (kind !== 'bundle') {
        var spark = el('div', 'spark');
        li.appendChild(spark);
        sparks.push({ target: spark, a: e.a, b: e.b });
      }
      li.addEventListener('click', function () { selectPair(e.a, e.b); });
      li.addEventListener('keydown', function (ev) { if (ev.key === 'Enter') { selectPair(e.a, e.b); } });
      target.appendChild(li);
    });
    return sparks;
  }

  function loadDrift() {
    return api('/api/v1/drift', { count: 6 }).then(function (d) {
      state.sparks.forEach(function (c) { c.destroy(); });
      state.sparks = [];
      var sparks = driftList($('emerging'), d.emerging, 'emerging').map(function (s) { s.kind = 'emerging'; return s; })
        .concat(driftList($('fading'), d.fading, 'fading').map(function (s) { s.kind = 'fading'; return s; }));
      driftList($('bundles'), d.bundles, 'bundle');
      var st = state.status;
      $('drift-foot').textContent = count(d.pairsCompared) + ' pairs compared at table v' + d.tableVersion +
        (st && st.drift ? '. A change becomes an alert once it has held for ' + Math.round(st.drift.minDwellMillis / 60000) +
          ' min; the same pair alerts again at most after a ' + Math.round(st.drift.cooldownMillis / 3600000) +
          ' h cooldown. Sparklines: recent lift (solid) against baseline (dashed).' : '');
      return Promise.all(sparks.map(function (s) {
        return api('/api/v1/trend/pair', { a: s.a, b: s.b }).then(function (t) {
          if (!t.points) { return; }
          var recent = t.series.recent || t.series[t.horizons[0]];
          var base = t.series.baseline || t.series[t.horizons[t.horizons.length - 1]];
          sparkline(s.target, t.versions, recent.lift, base.lift, s.kind === 'emerging' ? COLORS.rise : COLORS.fall);
        });
      })).then(function () { return d; });
    });
  }

  function loadAlerts() {
    return api('/api/v1/alerts', { count: 30, segment: state.segment }).then(function (r) {
      var list = $('alerts');
      clear(list);
      $('alerts-hint').textContent = r.alerts.length ? r.alerts.length + ' most recent' : '';
      if (!r.alerts.length) { list.appendChild(el('li', 'empty', 'No alerts yet.')); }
      r.alerts.forEach(function (a) {
        var li = el('li', a.kind + ' ' + a.transition);
        li.appendChild(el('div', 'what', a.kind + ' ' + a.transition + ' · ' + pairName(a.a, a.b)));
        var ev = a.evidence;
        var detail = when(a.atMillis);
        if (ev && a.kind !== 'bundle') { detail += ' · ' + (a.change || 'evidence') + ' · per basket ' + ratio(ev.rateRatio) + ' · odds ratio ' + ratio(ev.oddsRatioRatio); }
        li.appendChild(el('div', 'when', detail));
        if (a.summary && a.transition === 'raised') { li.appendChild(el('div', 'why', a.summary)); }
        list.appendChild(li);
      });
    });
  }

  /** One row across a table's columns saying why the table is empty. */
  function emptyRow(body, columns, text) {
    var tr = el('tr');
    var td = el('td', 'empty', text);
    td.colSpan = columns;
    tr.appendChild(td);
    body.appendChild(tr);
  }

  function loadTop() {
    return api('/api/v1/pairs/top', { horizon: $('top-horizon').value || 'day', count: 10 }).then(function (r) {
      var body = $('top-pairs');
      clear(body);
      r.pairs.forEach(function (p) {
        var tr = el('tr', 'clickable');
        tr.dataset.pair = p.a + '\u0000' + p.b;
        var name = el('td', null, pairName(p.a, p.b));
        tr.appendChild(name);
        tr.appendChild(el('td', 'num', fmt(p.shrunkLift, 2)));
        tr.appendChild(el('td', 'num', fmt(p.liftLower, 1) + ' – ' + fmt(p.liftUpper, 1)));
        tr.appendChild(el('td', 'num', fmt(Math.max(p.confidenceAB || 0, p.confidenceBA || 0), 2)));
        tr.appendChild(el('td', 'num', count(p.countAB.value)));
        tr.appendChild(el('td', 'flag', p.bundle ? 'bundle' : ''));
        tr.addEventListener('click', function () { selectPair(p.a, p.b); });
        body.appendChild(tr);
      });
      if (!r.pairs.length) { emptyRow(body, 6, 'No pair passes the cohort floor yet.'); }
      return r;
    });
  }

  function loadRepelling() {
    return api('/api/v1/pairs/repelling', { horizon: 'baseline', count: 8 }).then(function (r) {
      var body = $('repelling');
      clear(body);
      r.pairs.forEach(function (p) {
        var tr = el('tr');
        tr.appendChild(el('td', null, pairName(p.a, p.b)));
        tr.appendChild(el('td', 'num', fmt(p.lift, 2)));
        tr.appendChild(el('td', 'num', fmt(p.liftUpper, 2)));
        tr.appendChild(el('td', 'num', fmt(p.signedRootG2, 1)));
        body.appendChild(tr);
      });
      if (!r.pairs.length) { emptyRow(body, 4, 'No repelling pair.'); }
    });
  }

  function loadItems() {
    return api('/api/v1/items', { count: 100, horizon: 'baseline' }).then(function (r) {
      var list = $('item-options');
      clear(list);
      r.items.forEach(function (i) { var o = el('option'); o.value = i.item; list.appendChild(o); });
    });
  }

  function suggest(event) {
    if (event) { event.preventDefault(); }
    var items = $('basket-input').value.split(',').map(function (s) { return s.trim(); }).filter(Boolean);
    var out = $('basket-result');
    if (!items.length) { clear(out); out.appendChild(el('p', 'empty', 'Type one or more item ids.')); return Promise.resolve(); }
    var params = new URLSearchParams();
    params.set('items', items.join(','));
    params.set('horizon', $('basket-horizon').value || 'recent');
    params.set('measure', $('basket-measure').value || 'shrunk_lift');
    params.set('count', '6');
    if ($('basket-wide').checked) { params.set('minConfidence', '0'); params.set('maxConfidence', '1'); }
    var query = {};
    params.forEach(function (v, k) { query[k] = v; });
    return api('/api/v1/suggestions', query).then(function (r) {
      clear(out);
      out.dataset.count = String(r.suggestions.length);
      if (r.unknownItems.length) { out.appendChild(el('p', 'empty', 'Not in the pair table: ' + r.unknownItems.join(', '))); }
      if (!r.suggestions.length) {
        out.appendChild(el('p', 'empty', 'Nothing to suggest inside the confidence band; tick "band off" to see the rest.'));
        return;
      }
      var top = Math.max.apply(null, r.suggestions.map(function (s) { return s.score > 0 ? s.score : 0; })) || 1;
      r.suggestions.forEach(function (s) {
        var box = el('div', 'suggestion');
        box.dataset.item = s.item;
        var head = el('div', 'top');
        head.appendChild(el('span', 'item', s.item));
        var wrap = el('div', 'bar-wrap');
        var fill = el('div', 'bar-fill');
        fill.style.width = (s.score > 0 ? Math.max(3, 100 * s.score / top) : 0) + '%';
        if (s.score <= 0) { wrap.title = 'the basket makes this item no likelier than usual'; }
        wrap.appendChild(fill);
        head.appendChild(wrap);
        head.appendChild(el('span', 'score', fmt(s.score, 2)));
        box.appendChild(head);
        var chips = el('div', 'chips');
        s.evidence.forEach(function (e) {
          var chip = el('span', 'chip' + (e.inBand ? '' : ' out'));
          chip.appendChild(document.createTextNode('with '));
          chip.appendChild(el('b', null, e.basketItem));
          chip.appendChild(document.createTextNode(' · lift ' + fmt(e.lift, 1) + ' [' + fmt(e.liftLower, 1) + ', ' + fmt(e.liftUpper, 1) +
            '] · conf ' + fmt(e.confidence, 2) + ' · supp ' + pct(e.support, 2)));
          chips.appendChild(chip);
        });
        box.appendChild(chips);
        out.appendChild(box);
      });
    }).catch(function (e) { clear(out); out.appendChild(el('p', 'empty', 'Could not ask: ' + e.message)); });
  }

  // ------------------------------------------------------------------ the loop

  function refreshAll() {
    var jobs = [loadDrift(), loadAlerts(), loadTop(), loadRepelling(), loadItems()];
    return Promise.all(jobs).then(function (results) {
      var drift = results[0];
      var top = results[2];
      if (!state.selected) {
        var first = drift.emerging[0] || drift.fading[0] || top.pairs[0];
        if (first) { return selectPair(first.a, first.b); }
        return null;
      }
      return selectPair(state.selected.a, state.selected.b);
    });
  }

  function tick() {
    return api('/api/v1/status').then(function (s) {
      state.failures = 0;
      notice(null);
      fillSelect($('segment'), s.segments, state.segment);
      var horizons = s.table.horizons.map(function (h) { return h.name; });
      fillSelect($('basket-horizon'), horizons, s.serving.defaultHorizon);
      fillSelect($('top-horizon'), horizons, 'day');
      fillSelect($('basket-measure'), s.serving.measures, s.serving.defaultMeasure);
      renderStatus(s);
      var stale = s.ready && s.table.ageMillis > 60000;
      setLive(stale ? 'stale' : 'ok', s.ready ? (stale ? 'table is ' + age(s.table.ageMillis).replace(' ago', ' old') : 'live') : 'waiting');
      if (s.ready && s.table.version !== state.version) {
        state.version = s.table.version;
        return refreshAll().then(function () { document.body.dataset.version = String(state.version); });
      }
      return null;
    }).catch(function (e) {
      state.failures += 1;
      if (e.message !== 'unauthorized') { setLive('down', 'server unreachable'); }
    });
  }

  $('basket-form').addEventListener('submit', suggest);
  $('segment').addEventListener('change', function () {
    state.segment = $('segment').value;
    state.version = -1;
    state.selected = null;
    tick();
  });
  $('top-horizon').addEventListener('change', function () { loadTop(); });
  window.addEventListener('resize', function () {
    if (state.chart) { state.chart.setSize({ width: Math.max(320, $('pair-chart').clientWidth), height: 270 }); }
  });

  tick();
  setInterval(tick, POLL_MS);
})();
