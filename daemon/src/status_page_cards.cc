#include "status_page_parts.h"

namespace codedrift::status_page {

// One card per model, most urgent first, rebuilt from the JSON API on every refresh. Each
// figure element carries data-model, data-field (the API's key) and data-value (the raw
// number as the API sent it, empty for null); the text beside it is for people.
std::string_view ScriptCards() {
  return R"js(
const SEVERITY = {stale: 0, drifting: 1, fit: 2};
const params = new URLSearchParams(location.search);
const refreshSeconds = params.has('refresh') ? Math.max(0, Number(params.get('refresh')) || 0)
                                             : 5;
let generation = 0;
let lastGoodAt = null;

// Why a figure is null, in a few words (the tooltip says more).
function missing(doc, field, value) {
  if (value === undefined) return ['no evaluation yet', 'no evaluation of this model yet'];
  if (doc.table_problem) return ['no table', doc.table_problem];
  if (field === 'payback_seconds' && isNum(doc.saving_ratio)) {
    return doc.saving_ratio <= 0 ? ['no saving', 'a retrained code would save nothing']
                                 : ['no traffic', 'no symbols arrived since the last evaluation'];
  }
  return ['n/a', 'not enough data in the window to measure this'];
}

function figure(doc, field, label, format, extra) {
  const key = modelKey(doc);
  const value = doc[field];
  const dd = el('dd', {'data-model': key, 'data-field': field, 'data-value': rawValue(value)});
  if (isNum(value)) {
    const shown = format(value);
    const note = extra ? extra(doc) : '';
    append(dd, [shown.text, ' ', el('small', {}, shown.unit),
                note ? el('span', {class: 'note-line'}, note) : null]);
  } else {
    const [brief, why] = missing(doc, field, value);
    dd.className = 'none';
    dd.title = why;
    append(dd, ['\u2014 ', el('small', {}, brief)]);
  }
  return el('div', {}, el('dt', {}, label), dd);
}

function confidenceLabel(doc) {
  const c = doc.alert && isNum(doc.alert.confidence) ? doc.alert.confidence : null;
  if (c === null) return 'Saving, lower bound';
  return `Saving, ${(c * 100).toFixed(1).replace(/\.0$/, '')} % lower bound`;
}
function thresholdNote(doc) {
  const t = doc.alert && isNum(doc.alert.saving_ratio) ? doc.alert.saving_ratio : null;
  return t === null ? '' : `alert at ${fixed(t * 100, 1)} %`;
}
function stderrNote(doc) {
  return isNum(doc.entropy_stderr_bits)
             ? `\u00b1 ${doc.entropy_stderr_bits.toFixed(3)} (standard error)` : '';
}
function paybackNote(doc) {
  const limit = doc.alert && isNum(doc.alert.max_payback_seconds) && doc.alert.max_payback_seconds;
  const shown = limit ? fmt.seconds(limit) : null;
  return shown ? `alert only under ${shown.text} ${shown.unit}` : '';
}

function figures(doc) {
  return el('dl', {class: 'figures'},
    figure(doc, 'entropy_bits', 'Entropy', fmt.bits, stderrNote),
    figure(doc, 'deployed_mean_bits', 'Deployed mean length', fmt.bits),
    figure(doc, 'retrained_mean_bits', 'Retrained mean length', fmt.bits),
    figure(doc, 'redundancy_bits', 'Redundancy (deployed \u2212 entropy)', fmt.bits),
    figure(doc, 'saving_ratio', 'Saving (retrained code)', fmt.percent),
    figure(doc, 'saving_lower_ratio', confidenceLabel(doc), fmt.percent, thresholdNote),
    figure(doc, 'payback_seconds', 'Payback', fmt.seconds, paybackNote),
    figure(doc, 'unknown_symbols_per_second', 'Unknown symbols', fmt.rate('symbols')),
    figure(doc, 'records_per_second', 'Records', fmt.rate('records')),
    figure(doc, 'window_symbols', 'Window', fmt.count('symbols')));
}

function proposalLine(doc) {
  const key = modelKey(doc);
  if (!doc.proposal) {
    return el('p', {class: 'proposal'},
              el('span', {'data-model': key, 'data-field': 'proposal', 'data-value': ''},
                 'No proposal written yet.'));
  }
  return el('p', {class: 'proposal'},
            el('a', {href: doc.proposal, download: `${doc.stream}-${doc.model}-proposal.table`,
                     'data-model': key, 'data-field': 'proposal', 'data-value': doc.proposal},
               'Download the latest proposed table (YAML)'),
            el('span', {class: 'note'}, ' \u2014 deploy it only when encoder and decoder ' +
                                        'switch together.'));
}

function card(doc, uid) {
  const key = modelKey(doc);
  const state = doc.state || 'fit';
  const since = isNum(doc.state_since) && doc.state_since > 0
                    ? el('span', {class: 'since', title: new Date(doc.state_since * 1000)
                                                             .toString()},
                         `since ${clock(doc.state_since)}`)
                    : null;
  const meta = [`alphabet ${doc.alphabet}`];
  meta.push(doc.table ? `table ${doc.table}` : 'no table');
  if (isNum(doc.kraft_sum)) meta.push(`Kraft sum ${doc.kraft_sum.toFixed(4)}`);
  if (isNum(doc.symbols_total)) meta.push(`${grouped(doc.symbols_total)} symbols seen`);
  const warnings = (doc.warnings || []).filter((w) => w);
  const node = el('section', {class: 'card', 'data-card': key, 'data-state': state,
                              'aria-label': `${key}: ${state}`},
    el('div', {class: 'card-head'},
       el('h2', {}, doc.stream, ' / ', doc.model),
       el('span', {class: 'badge', 'data-model': key, 'data-field': 'state',
                   'data-value': state}, state),
       since),
    el('p', {class: 'meta'}, meta.join(' \u00b7 ')),
    el('p', {class: 'reason', 'data-model': key, 'data-field': 'reason',
             'data-value': doc.reason || ''}, doc.reason || 'no reason given'),
    figures(doc),
    el('div', {class: 'chart'},
       el('h3', {}, 'History, bits/symbol'),
       el('div', {class: 'plot', 'data-plot': 'history'}),
       timeLegend(doc, uid)),
    el('div', {class: 'chart'},
       el('h3', {}, 'Top drift symbols'),
       el('div', {class: 'plot', 'data-plot': 'drift'}),
       driftLegend(uid),
       el('p', {class: 'note'}, 'Ranked by each symbol\u2019s share of the redundancy, ' +
                                'p\u00b7(\u2113 + log\u2082 p), in bits/symbol.')),
    proposalLine(doc),
    warnings.length ? el('ul', {class: 'warnings'}, warnings.map((w) => el('li', {}, w)))
                    : null);
  node.codedriftDoc = doc;
  node.codedriftUid = uid;
  return node;
}

// Charts need their card's width, so they are drawn once the card is in the document.
function drawCharts(node) {
  for (const plot of node.querySelectorAll('[data-plot]')) {
    const width = Math.floor(plot.clientWidth) || 600;
    if (plot.drawnWidth === width) continue;
    const draw = plot.dataset.plot === 'history' ? timeChart : driftChart;
    plot.replaceChildren(draw(node.codedriftDoc, width, node.codedriftUid));
    plot.drawnWidth = width;
  }
}

function render(docs) {
  const cards = document.getElementById('cards');
  const ordered = docs.map((doc, i) => ({doc, i}))
                      .sort((a, b) => (SEVERITY[a.doc.state] ?? 3) - (SEVERITY[b.doc.state] ?? 3)
                                      || a.i - b.i);
  const nodes = ordered.map(({doc}, i) => card(doc, i));
  if (nodes.length === 0) {
    nodes.push(el('p', {class: 'empty'}, 'No models configured.'));
  }
  cards.replaceChildren(...nodes);
  for (const node of nodes) if (node.codedriftDoc) drawCharts(node);
  cards.dataset.generation = generation;
  const counts = {stale: 0, drifting: 0, fit: 0};
  for (const doc of docs) counts[doc.state] = (counts[doc.state] || 0) + 1;
  document.title = (counts.stale ? `${counts.stale} stale \u2014 ` : '') + 'codedrift status';
  return counts;
}

function setStatus(text, isError) {
  const line = document.getElementById('status-line');
  line.textContent = text;
  line.className = isError ? 'error' : '';
}

async function getJson(url) {
  const response = await fetch(url, {cache: 'no-store'});
  if (!response.ok) throw new Error(`${url}: HTTP ${response.status}`);
  return response.json();
}

async function refresh() {
  try {
    const list = await getJson('/api/v1/models');
    const docs = await Promise.all(list.models.map((m) => getJson(
        '/api/v1/models/' + encodeURIComponent(m.stream) + '/' + encodeURIComponent(m.model))));
    generation += 1;
    lastGoodAt = Date.now() / 1000;
    const counts = render(docs);
    const every = refreshSeconds > 0 ? `refreshes every ${refreshSeconds} s`
                                     : 'automatic refresh off';
    setStatus(`${docs.length} model${docs.length === 1 ? '' : 's'}: ${counts.stale} stale, ` +
              `${counts.drifting} drifting, ${counts.fit} fit \u00b7 updated ` +
              `${clock(lastGoodAt)} \u00b7 ${every}`, false);
  } catch (error) {
    const shown = lastGoodAt === null ? 'nothing to show yet'
                                      : `showing figures from ${clock(lastGoodAt)}`;
    setStatus(`Cannot reach the daemon's API (${error.message}); ${shown}.`, true);
  } finally {
    if (refreshSeconds > 0) setTimeout(refresh, refreshSeconds * 1000);
  }
}

let resizeTimer = null;
window.addEventListener('resize', () => {
  clearTimeout(resizeTimer);
  resizeTimer = setTimeout(() => {
    for (const node of document.querySelectorAll('[data-card]')) drawCharts(node);
  }, 150);
});
refresh();
)js";
}

}  // namespace codedrift::status_page
