#include "status_page_parts.h"

namespace codedrift::status_page {

// Charts are drawn at the pixel width of their card (and redrawn on resize) rather than
// scaled from a fixed viewBox, so text stays legible on a phone. Every history entry becomes
// one element carrying data-point, and every drift symbol one element carrying its figures,
// so a test (or a curious operator) can read the exact numbers behind the picture.
std::string_view ScriptCharts() {
  return R"js(
const SERIES = [
  {key: 'deployed_mean_bits', label: 'Deployed mean length', colour: '#d55e00', width: 2.5,
   dash: null},
  {key: 'retrained_mean_bits', label: 'Retrained mean length', colour: '#0072b2', width: 2,
   dash: '6 4'},
  {key: 'entropy_bits', label: 'Entropy', colour: '#111', width: 1.5, dash: null},
];
const MARKED_POINTS = 240;  // beyond this many entries the markers would only add ink
// An evaluation of an empty window reports entropy 0 and no code lengths: a gap, not a value.
const emptyWindow = (p) => p.entropy_bits === 0 && !isNum(p.deployed_mean_bits) &&
                           !isNum(p.retrained_mean_bits);

function niceStep(span, count) {
  const raw = span / Math.max(1, count);
  const power = Math.pow(10, Math.floor(Math.log10(raw)));
  for (const m of [1, 2, 2.5, 5, 10]) if (m * power >= raw) return m * power;
  return 10 * power;
}
function niceTicks(lo, hi, count) {
  const step = niceStep(hi - lo, count);
  const ticks = [];
  for (let v = Math.floor(lo / step) * step; v <= hi + step * 0.5; v += step) {
    ticks.push(Number(v.toFixed(10)));
    if (v >= hi) break;
  }
  return {ticks, step};
}
// Just enough decimals to tell ticks apart exactly (a 0.25 step needs two).
function tickDecimals(step) {
  for (let d = 0; d < 6; ++d) {
    const scaled = step * Math.pow(10, d);
    if (Math.abs(scaled - Math.round(scaled)) < 1e-9 * Math.max(1, scaled)) return d;
  }
  return 6;
}
const TIME_STEPS = [1, 2, 5, 10, 15, 30, 60, 120, 300, 600, 900, 1800, 3600, 7200, 10800, 21600,
                    43200, 86400, 172800, 604800];

function hatchPattern(id, colour) {
  return svg('pattern', {id, width: 6, height: 6, patternUnits: 'userSpaceOnUse',
                         patternTransform: 'rotate(45)'},
             svg('rect', {width: 6, height: 6, fill: '#fff'}),
             svg('line', {x1: 0, y1: 0, x2: 0, y2: 6, stroke: colour, 'stroke-width': 3}));
}

function legend(items) {
  return el('ul', {class: 'legend'}, items.map(([swatch, ...label]) =>
      el('li', {}, svg('svg', {viewBox: '0 0 28 12', 'aria-hidden': 'true'}, swatch),
         el('span', {}, label))));
}

function linePath(history, key, x, y) {
  let d = '';
  let open = false;
  history.forEach((p, i) => {
    if (!isNum(p[key]) || emptyWindow(p)) { open = false; return; }
    d += (open ? 'L' : 'M') + x(p.time).toFixed(1) + ' ' + y(p[key]).toFixed(1);
    open = true;
  });
  return d;
}

// The band of retrained mean lengths that would NOT trip the alert: from the deployed mean
// down to deployed x (1 - threshold). Below it, the saving passes the threshold.
function bandPath(history, threshold, x, y) {
  const runs = [];
  let run = [];
  for (const p of history) {
    if (isNum(p.deployed_mean_bits)) { run.push(p); continue; }
    if (run.length) runs.push(run);
    run = [];
  }
  if (run.length) runs.push(run);
  return runs.map((r) => {
    const top = r.map((p) => x(p.time).toFixed(1) + ' ' + y(p.deployed_mean_bits).toFixed(1));
    const bottom = r.slice().reverse().map((p) => x(p.time).toFixed(1) + ' ' +
                                             y(p.deployed_mean_bits * (1 - threshold)).toFixed(1));
    if (r.length === 1) return '';
    return 'M' + top.join('L') + 'L' + bottom.join('L') + 'Z';
  }).join('');
}

function timeChart(doc, width, uid) {
  const key = modelKey(doc);
  const history = doc.history || [];
  const threshold = doc.alert && isNum(doc.alert.saving_ratio) ? doc.alert.saving_ratio : null;
  const height = width < 480 ? 210 : 250;
  const m = {left: 44, right: 10, top: 34, bottom: 24};
  const pw = Math.max(10, width - m.left - m.right);
  const ph = height - m.top - m.bottom;
  const root = svg('svg', {width, height, viewBox: `0 0 ${width} ${height}`, role: 'img',
                           'data-chart': 'history', 'data-model': key,
                           'data-points': history.length,
                           'aria-label': `${key}: entropy, deployed and retrained mean length ` +
                                         `over ${history.length} evaluations`});
  root.append(svg('defs', {}, hatchPattern(`hatch-state-${uid}`, '#e69f00')));
  if (history.length === 0) {
    root.append(svg('text', {x: width / 2, y: height / 2, 'text-anchor': 'middle'},
                    'No evaluations yet'));
    return root;
  }
  const t0 = history[0].time;
  const t1 = Math.max(history[history.length - 1].time, t0 + 1);
  let lo = Infinity;
  let hi = -Infinity;
  const include = (v) => { if (isNum(v)) { lo = Math.min(lo, v); hi = Math.max(hi, v); } };
  for (const p of history) {
    if (emptyWindow(p)) continue;
    for (const s of SERIES) include(p[s.key]);
    if (threshold !== null && isNum(p.deployed_mean_bits)) {
      include(p.deployed_mean_bits * (1 - threshold));
    }
  }
  if (lo > hi) { lo = 0; hi = 1; }
  const pad = Math.max((hi - lo) * 0.08, 0.05);
  lo = Math.max(0, lo - pad);
  hi += pad;
  const yTicks = niceTicks(lo, hi, ph < 170 ? 4 : 5);
  const y0 = yTicks.ticks[0];
  const y1 = Math.max(yTicks.ticks[yTicks.ticks.length - 1], y0 + yTicks.step);
  const x = (t) => m.left + ((t - t0) / (t1 - t0)) * pw;
  const y = (v) => m.top + (1 - (v - y0) / (y1 - y0)) * ph;

  const axis = svg('g', {class: 'axis'});
  for (const v of yTicks.ticks) {
    axis.append(svg('line', {class: 'grid', x1: m.left, x2: m.left + pw, y1: y(v), y2: y(v)}),
                svg('text', {x: m.left - 5, y: y(v) + 4, 'text-anchor': 'end'},
                    signed(v.toFixed(tickDecimals(yTicks.step)))));
  }
  const timeStep = TIME_STEPS.find((s) => (t1 - t0) / s <= Math.max(2, pw / 95)) || 604800;
  for (let t = Math.ceil(t0 / timeStep) * timeStep; t <= t1; t += timeStep) {
    const label = timeStep >= 86400 ? dayAndClock(t) : clock(t, timeStep < 60);
    axis.append(svg('line', {x1: x(t), x2: x(t), y1: m.top + ph, y2: m.top + ph + 4}),
                svg('text', {x: x(t), y: m.top + ph + 16, 'text-anchor': 'middle'}, label));
  }
  axis.append(svg('path', {d: `M${m.left} ${m.top}V${m.top + ph}H${m.left + pw}`,
                           fill: 'none'}));
  root.append(axis);

  // State ribbon above the plot: drifting hatched, stale solid; fit left blank.
  const ribbon = svg('g', {'data-ribbon': 'state'});
  ribbon.append(svg('text', {x: m.left - 5, y: 16, 'text-anchor': 'end'}, 'state'));
  ribbon.append(svg('rect', {x: m.left, y: 7, width: pw, height: 12, fill: 'none',
                             stroke: '#767676'}));
  for (let i = 0; i < history.length;) {
    let j = i;
    while (j + 1 < history.length && history[j + 1].state === history[i].state) ++j;
    if (history[i].state !== 'fit') {
      const left = x(history[i].time);
      const right = j + 1 < history.length ? x(history[j + 1].time) : m.left + pw;
      ribbon.append(svg('rect', {x: left, y: 7, width: Math.max(2, right - left), height: 12,
                                 fill: history[i].state === 'stale' ? '#a84a00'
                                                                    : `url(#hatch-state-${uid})`,
                                 'data-state-span': history[i].state}));
    }
    i = j + 1;
  }
  root.append(ribbon);

  if (threshold !== null) {
    root.append(svg('path', {d: bandPath(history, threshold, x, y), fill: '#e69f00',
                             'fill-opacity': 0.28, stroke: 'none', 'data-band': 'alert',
                             'data-threshold': threshold}));
  }
  let lastLabel = -Infinity;
  history.forEach((p, i) => {
    if (i === 0 || p.state === history[i - 1].state) return;
    const at = x(p.time);
    const mark = svg('g', {'data-state-change': p.state, 'data-model': key, 'data-time': p.time},
                     svg('line', {x1: at, x2: at, y1: 5, y2: m.top + ph, stroke: '#111',
                                  'stroke-dasharray': '2 3'}),
                     svg('title', {}, `${clock(p.time)}: ${history[i - 1].state} \u2192 ${p.state}`));
    if (at - lastLabel > 60) {
      mark.append(svg('text', {x: Math.min(at + 3, m.left + pw - 40), y: 31,
                               'font-weight': 'bold'}, '\u2192 ' + p.state));
      lastLabel = at;
    }
    root.append(mark);
  });
  for (const s of SERIES) {
    root.append(svg('path', {d: linePath(history, s.key, x, y), fill: 'none', stroke: s.colour,
                             'stroke-width': s.width, 'stroke-dasharray': s.dash,
                             'stroke-linejoin': 'round', 'data-series': s.key}));
  }
  const marked = history.length <= MARKED_POINTS;
  const points = svg('g', {'data-points-of': key});
  history.forEach((p, i) => {
    const g = svg('g', {'data-point': i, 'data-model': key, 'data-time': p.time,
                        'data-state': p.state, 'data-entropy-bits': rawValue(p.entropy_bits),
                        'data-deployed-mean-bits': rawValue(p.deployed_mean_bits),
                        'data-retrained-mean-bits': rawValue(p.retrained_mean_bits),
                        'data-empty-window': emptyWindow(p)});
    if (marked && !emptyWindow(p)) {
      for (const s of SERIES) {
        if (!isNum(p[s.key])) continue;
        g.append(svg('circle', {cx: x(p.time).toFixed(1), cy: y(p[s.key]).toFixed(1), r: 1.8,
                                fill: s.colour}));
      }
      const parts = SERIES.filter((s) => isNum(p[s.key]))
                          .map((s) => `${s.label.toLowerCase()} ${p[s.key].toFixed(3)}`);
      g.append(svg('title', {}, `${clock(p.time)} (${p.state}): ${parts.join(', ')} bits/symbol`));
    }
    points.append(g);
  });
  root.append(points);
  return root;
}

function timeLegend(doc, uid) {
  const threshold = doc.alert && isNum(doc.alert.saving_ratio) ? doc.alert.saving_ratio : null;
  const items = SERIES.map((s) => [
    svg('line', {x1: 1, x2: 27, y1: 6, y2: 6, stroke: s.colour, 'stroke-width': s.width + 0.5,
                 'stroke-dasharray': s.dash}), s.label]);
  if (threshold !== null && (doc.history || []).some((p) => isNum(p.deployed_mean_bits))) {
    items.push([svg('rect', {x: 1, y: 1, width: 26, height: 10, fill: '#e69f00',
                             'fill-opacity': 0.28}),
                `Alert band: within ${fixed(threshold * 100, 1)} % below the deployed mean`]);
  }
  items.push([svg('rect', {x: 1, y: 1, width: 12, height: 10, fill: '#a84a00'}), 'stale']);
  items.push([svg('g', {}, svg('defs', {}, hatchPattern(`hatch-legend-${uid}`, '#e69f00')),
                  svg('rect', {x: 1, y: 1, width: 12, height: 10, stroke: '#767676',
                               fill: `url(#hatch-legend-${uid})`})), 'drifting']);
  return legend(items);
}

function driftChart(doc, width, uid) {
  const key = modelKey(doc);
  const entries = doc.top_drift || [];
  const narrow = width < 480;
  const labelW = narrow ? 84 : 110;
  const shareW = narrow ? 64 : 84;
  const valueW = 52;
  const rowH = 34;
  const top = 18;
  const height = top + Math.max(1, entries.length) * rowH + 4;
  const barW = Math.max(20, width - labelW - shareW - valueW - 8);
  const root = svg('svg', {width, height, viewBox: `0 0 ${width} ${height}`, role: 'img',
                           'data-chart': 'drift', 'data-model': key,
                           'aria-label': `${key}: probability now vs the probability the ` +
                                         `deployed code assumes, for the top drift symbols`});
  root.append(svg('defs', {}, hatchPattern(`hatch-drift-${uid}`, '#d55e00')));
  root.append(svg('text', {x: width, y: 12, 'text-anchor': 'end', 'font-weight': 'bold'},
                  'share, bits/symbol'));
  if (entries.length === 0) {
    root.append(svg('text', {x: 0, y: top + 16},
                    isNum(doc.deployed_mean_bits) ? 'No drift symbols in this window'
                                                  : 'No deployed code to compare with'));
    return root;
  }
  let most = 0;
  for (const e of entries) most = Math.max(most, e.probability, Math.pow(2, -e.length));
  const scale = (v) => (most > 0 ? (v / most) * barW : 0);
  entries.forEach((e, i) => {
    const assumed = Math.pow(2, -e.length);
    const y = top + i * rowH;
    const g = svg('g', {'data-drift-symbol': e.symbol, 'data-model': key,
                        'data-probability': e.probability, 'data-length': e.length,
                        'data-assumed': assumed, 'data-share-bits': e.share_bits},
                  svg('title', {}, `${e.symbol}: ${probabilityText(e.probability)} now, ` +
                                   `the deployed code assumes ${probabilityText(assumed)} ` +
                                   `(codeword ${e.length} bits); share ` +
                                   `${fixed(e.share_bits, 4)} bits/symbol`),
                  svg('text', {x: 0, y: y + 19}, symbolLabel(e.symbol, doc.alphabet)),
                  svg('rect', {x: labelW, y: y + 3, width: Math.max(1, scale(e.probability)),
                               height: 12, fill: '#0072b2', 'data-bar': 'now'}),
                  svg('text', {x: labelW + scale(e.probability) + 4, y: y + 13},
                      probabilityText(e.probability)),
                  svg('rect', {x: labelW, y: y + 17, width: Math.max(1, scale(assumed)),
                               height: 12, fill: `url(#hatch-drift-${uid})`, stroke: '#d55e00',
                               'data-bar': 'assumed'}),
                  svg('text', {x: labelW + scale(assumed) + 4, y: y + 27},
                      probabilityText(assumed)),
                  svg('text', {x: width, y: y + 19, 'text-anchor': 'end'},
                      (e.share_bits >= 0 ? '+' : '') + fixed(e.share_bits, 4)));
    root.append(g);
  });
  return root;
}

function driftLegend(uid) {
  return legend([
    [svg('rect', {x: 1, y: 1, width: 26, height: 10, fill: '#0072b2'}), 'Probability now'],
    [svg('g', {}, svg('defs', {}, hatchPattern(`hatch-dl-${uid}`, '#d55e00')),
         svg('rect', {x: 1, y: 1, width: 26, height: 10, fill: `url(#hatch-dl-${uid})`,
                      stroke: '#d55e00'})),
     'Probability the deployed code assumes, 2', el('sup', {}, MINUS + '\u2113'),
     ' (\u2113 = codeword length)'],
  ]);
}
)js";
}

}  // namespace codedrift::status_page
