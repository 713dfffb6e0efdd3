// Candidates: a sortable, filterable table and a detail view with the light curve and its fit.
import uPlot from 'uplot';
import { getJson } from './api.js';
import { loadPlan, loadDetails, planIndex, inBatches } from './data.js';
import { el, num, percent, utcDateTime } from './format.js';

const MAX_PAGES = 10;
const MAX_PRIORS = 300;

async function loadAll() {
  const items = [];
  let cursor = null;
  for (let page = 0; page < MAX_PAGES; page++) {
    const query = cursor ? `?limit=500&cursor=${encodeURIComponent(cursor)}` : '?limit=500';
    const answer = await getJson(`/api/candidates${query}`);
    items.push(...answer.items);
    cursor = answer.nextCursor;
    if (!cursor) break;
  }
  return items;
}

function topPrior(detail) {
  const p = detail?.prior?.probabilities;
  if (!p) return null;
  const [label, value] = Object.entries(p).sort((a, b) => b[1] - a[1])[0] ?? [];
  return label ? { label, value } : null;
}

const COLUMNS = [
  { key: 'name', title: 'Candidate', value: (r) => r.name },
  { key: 'state', title: 'State', value: (r) => r.state },
  { key: 'top', title: 'Top subtype (prior)', value: (r) => r.topValue ?? -1, show: (r) => (r.top ? `${r.top.label} ${percent(r.top.value)}` : r.loading ? '…' : 'see its page') },
  { key: 'unit', title: 'Best spectrograph (plan)', value: (r) => r.unit ?? '', show: (r) => r.unit ?? 'not planned' },
  { key: 'accuracy', title: 'Expected accuracy', value: (r) => r.accuracy ?? -1, show: (r) => percent(r.accuracy, 1) },
  { key: 'mag', title: 'Predicted mag (AB)', value: (r) => r.mag ?? 99, show: (r) => num(r.mag, 2) },
];

export async function renderCandidates(root, night) {
  root.replaceChildren(el('h2', {}, 'Candidates'), el('p', { class: 'meta' }, 'Loading…'));
  const [items, plan] = await Promise.all([loadAll(), loadPlan(night)]);
  const planned = planIndex(plan);
  const rows = items.map((c) => {
    const hit = planned.get(c.id.toLowerCase());
    return {
      id: c.id, name: c.brokerCandidateId, state: c.state, mag: c.predictedMagAb,
      unit: hit ? `${hit.queue.name} (R ${num(hit.queue.resolvingPower, 0)})` : null,
      accuracy: hit?.entry.expectedAccuracy ?? null, top: null, topValue: null,
    };
  });
  let sortKey = 'accuracy';
  let descending = true;
  const filterText = el('input', { type: 'search', id: 'cand-filter', placeholder: 'id, subtype or spectrograph' });
  const stateSelect = el('select', { id: 'cand-state' }, el('option', { value: '' }, 'any state'),
    ...['new', 'planned', 'observed', 'classified', 'abandoned', 'stale'].map((s) => el('option', { value: s }, s)));
  const body = el('tbody');
  const head = el('tr');
  const table = el('table', { class: 'grid', 'aria-label': 'Candidates' }, el('thead', {}, head), body);

  function draw() {
    head.replaceChildren(...COLUMNS.map((c) => el('th', { scope: 'col', 'aria-sort': c.key === sortKey ? (descending ? 'descending' : 'ascending') : 'none' },
      el('button', { type: 'button', class: 'sort', onclick: () => { descending = c.key === sortKey ? !descending : false; sortKey = c.key; draw(); } },
        c.title, c.key === sortKey ? (descending ? ' ▾' : ' ▴') : ''))));
    const needle = filterText.value.trim().toLowerCase();
    const column = COLUMNS.find((c) => c.key === sortKey);
    const shown = rows
      .filter((r) => !stateSelect.value || r.state === stateSelect.value)
      .filter((r) => !needle || [r.name, r.id, r.top?.label, r.unit].some((v) => v && v.toLowerCase().includes(needle)))
      .sort((a, b) => {
        const x = column.value(a);
        const y = column.value(b);
        const order = typeof x === 'number' ? x - y : String(x).localeCompare(String(y));
        return descending ? -order : order;
      });
    body.replaceChildren(...shown.map((r) => el('tr', {},
      ...COLUMNS.map((c, i) => el('td', {}, i === 0 ? el('a', { href: `#/candidates/${r.id}` }, r.name) : (c.show ? c.show(r) : c.value(r)))))));
    count.textContent = `${shown.length} of ${rows.length} candidates${items.length >= MAX_PAGES * 500 ? ' (first pages only)' : ''}; planned columns from the active plan of ${night}.`;
  }
  const count = el('p', { class: 'meta', role: 'status' });
  filterText.addEventListener('input', draw);
  stateSelect.addEventListener('change', draw);
  root.replaceChildren(el('h2', {}, 'Candidates'),
    el('div', { class: 'controls' }, el('label', { for: 'cand-filter' }, 'Filter '), filterText, el('label', { for: 'cand-state' }, ' State '), stateSelect),
    count, table);
  const withPriors = rows.slice(0, MAX_PRIORS);
  withPriors.forEach((row) => { row.loading = true; });
  draw();
  // Priors come with each candidate's detail: fill them in as they arrive, for the first rows only
  // so that a large night does not send thousands of requests.
  await inBatches(withPriors, 6, async (row) => {
    const [detail] = (await loadDetails([row.id])).values();
    row.top = topPrior(detail);
    row.topValue = row.top?.value ?? null;
    row.loading = false;
  });
  draw();
}

const BAND_COLOURS = ['#5fb3c9', '#e3a857', '#b79be0', '#8fcf8a', '#e07f8f', '#d6d27a'];

export async function renderCandidate(root, id) {
  root.replaceChildren(el('p', { class: 'meta' }, 'Loading…'));
  const detail = await getJson(`/api/candidates/${id}`, { allowMissing: true });
  if (!detail) {
    root.replaceChildren(el('p', { class: 'empty' }, `No candidate ${id}.`), el('a', { href: '#/candidates' }, 'Back to the candidates'));
    return;
  }
  const c = detail.candidate;
  const priors = Object.entries(detail.prior.probabilities).sort((a, b) => b[1] - a[1]).slice(0, 6);
  const chart = el('div', { class: 'chart', role: 'img', 'aria-label': `Light curve of ${c.brokerCandidateId}: photometry points and the fitted model per band` });
  root.replaceChildren(
    el('a', { href: '#/candidates' }, '← all candidates'),
    el('h2', {}, `Candidate ${c.brokerCandidateId}`),
    el('dl', { class: 'facts' },
      el('dt', {}, 'Id'), el('dd', {}, c.id),
      el('dt', {}, 'Broker'), el('dd', {}, c.broker),
      ...(detail.sameTransient?.length ? [el('dt', {}, 'Same transient'), el('dd', { class: 'same-transient' },
        ...detail.sameTransient.flatMap((p, i) => [i ? ', ' : '', el('a', { href: `#/candidates/${p.id}` }, `${p.broker}/${p.brokerCandidateId}`),
          ` (${p.state}, ${num(p.separationArcsec, 2)}″)`]))] : []),
      el('dt', {}, 'State'), el('dd', {}, c.state),
      el('dt', {}, 'Position (ICRS)'), el('dd', {}, `RA ${num(c.raDeg, 4)}°, Dec ${num(c.decDeg, 4)}°`),
      el('dt', {}, 'Discovered'), el('dd', {}, utcDateTime(c.discoveredUtc)),
      el('dt', {}, 'Predicted magnitude'), el('dd', {}, `${num(c.predictedMagAb, 2)} AB`),
      el('dt', {}, 'Fit'), el('dd', {}, detail.lightCurve.method ? `${detail.lightCurve.method}, peak ${detail.lightCurve.peakUtc ? utcDateTime(detail.lightCurve.peakUtc) : '—'}` : 'no fit yet')),
    el('h3', {}, 'Light curve (AB magnitude against MJD, UTC)'), chart,
    el('h3', {}, `Subtype prior (${detail.prior.source})`),
    el('ul', { class: 'bars' }, ...priors.map(([label, p]) => el('li', {}, el('span', { class: 'bar-label' }, label),
      el('span', { class: 'bar', style: `width:${(p * 100).toFixed(1)}%` }), el('span', { class: 'bar-value' }, percent(p, 1))))),
    el('h3', {}, 'Observations'),
    detail.observations.length
      ? el('ul', {}, ...detail.observations.map((o) => el('li', {}, `${utcDateTime(o.observedAt)}: ${o.outcome}${o.achievedSnr ? `, S/N ${num(o.achievedSnr, 1)}` : ''}${o.classifiedLabel ? `, classified ${o.classifiedLabel}` : ''}`)))
      : el('p', {}, 'None reported.'),
    el('h3', {}, 'History'),
    el('ol', { class: 'history' }, ...detail.history.map((h) => el('li', {}, `${utcDateTime(h.at)} · ${h.kind}${h.toState ? ` → ${h.toState}` : ''} · ${h.actor}${h.detail ? ` · ${h.detail}` : ''}`))));
  await plotLightCurve(chart, id, detail);
}

const MJD_EPOCH = Date.UTC(1858, 10, 17);
const toMjd = (t) => (Date.parse(t) - MJD_EPOCH) / 86400000;
const fromMjd = (m) => new Date(MJD_EPOCH + m * 86400000).toISOString();

/** Points per band, and the fitted model sampled by asking the service for the snapshot at a few instants. */
async function plotLightCurve(target, id, detail) {
  const points = detail.photometry.filter((p) => !p.upperLimit && p.magAb !== null);
  const bands = [...new Set(detail.lightCurve.bands.map((b) => b.band).concat(points.map((p) => p.band)))];
  if (!points.length) {
    target.replaceWith(el('p', { class: 'empty' }, 'No detections to plot.'));
    return;
  }
  const first = Math.min(...points.map((p) => p.mjd));
  const last = Math.max(...points.map((p) => p.mjd), toMjd(detail.lightCurve.asOfUtc));
  const steps = detail.lightCurve.method ? 24 : 0;
  const samples = Array.from({ length: steps }, (_, i) => first + ((last - first) * i) / (steps - 1));
  const snapshots = await inBatches(samples, 6, (m) => getJson(`/api/candidates/${id}?at=${encodeURIComponent(fromMjd(m))}`));
  const xs = [...new Set(points.map((p) => p.mjd).concat(samples))].sort((a, b) => a - b);
  const at = new Map(xs.map((x, i) => [x, i]));
  const data = [xs];
  const series = [{ label: 'MJD' }];
  bands.forEach((band, i) => {
    const colour = BAND_COLOURS[i % BAND_COLOURS.length];
    const observed = new Array(xs.length).fill(null);
    points.filter((p) => p.band === band).forEach((p) => { observed[at.get(p.mjd)] = p.magAb; });
    data.push(observed);
    series.push({ label: `${band} observed`, stroke: colour, paths: () => null, points: { show: true, size: 7, fill: colour } });
    const model = new Array(xs.length).fill(null);
    snapshots.forEach((s, k) => {
      const b = s.lightCurve.bands.find((x) => x.band === band);
      if (b?.predictedMagAb !== null && b?.predictedMagAb !== undefined) model[at.get(samples[k])] = b.predictedMagAb;
    });
    data.push(model);
    series.push({ label: `${band} fit`, stroke: colour, width: 2, dash: [6, 4], spanGaps: true, points: { show: false } });
  });
  const axisStyle = { stroke: '#c9c2b3', grid: { stroke: 'rgba(201,194,179,0.12)' }, ticks: { stroke: 'rgba(201,194,179,0.3)' } };
  // eslint-disable-next-line no-new
  new uPlot({
    width: Math.min(860, target.clientWidth || 760),
    height: 320,
    scales: { x: { time: false }, y: { dir: -1 } },
    axes: [{ ...axisStyle, label: 'MJD (UTC)' }, { ...axisStyle, label: 'AB magnitude' }],
    series,
  }, data, target);
}
