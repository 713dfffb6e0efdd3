// Calibration: accuracy against R per subtype (small multiples), the minimum-R table and a confusion matrix.
import uPlot from 'uplot';
import { getJson } from './api.js';
import { el, num, percent, utcDateTime } from './format.js';

const snrText = (s) => (s === null || s === undefined ? 'native' : num(s, 0));
const snrKey = (s) => (s === null || s === undefined ? 'native' : String(s));
const sameSnr = (a, b) => snrKey(a) === snrKey(b);

export async function renderCalibration(root) {
  root.replaceChildren(el('h2', {}, 'Calibration'), el('p', { class: 'meta' }, 'Loading…'));
  const active = await getJson('/api/calibrations/active', { allowMissing: true });
  if (!active) {
    const stored = await getJson('/api/calibrations', { allowMissing: true });
    const message = stored === null
      ? 'This service does not offer calibrations yet (GET /api/calibrations answered 404).'
      : `No calibration is active (${stored.length} stored). Plans use none until one is computed or loaded and activated.`;
    root.replaceChildren(el('h2', {}, 'Calibration'), el('p', { class: 'empty', id: 'cal-none' }, message));
    return;
  }
  const { calibration: cal, document: doc } = active;
  const phases = [...new Set(doc.cells.map((c) => c.phaseBin))];
  const snrSelect = el('select', { id: 'cal-snr' }, ...doc.snrLevels.map((s) => el('option', { value: snrKey(s) }, snrText(s))));
  const phaseSelect = el('select', { id: 'cal-phase' }, ...phases.map((p) => el('option', { value: p }, p)));
  const rSelect = el('select', { id: 'cal-r' }, ...doc.resolutions.map((r) => el('option', { value: String(r) }, `R ${num(r, 0)}`)));
  if (phases.includes('all')) phaseSelect.value = 'all';
  rSelect.value = String(doc.resolutions[Math.floor(doc.resolutions.length / 2)]);
  const curves = el('div', { class: 'multiples' });
  const minimum = el('div');
  const confusion = el('div');
  const p = doc.provenance;

  root.replaceChildren(
    el('h2', {}, 'Calibration'),
    el('dl', { class: 'facts' },
      el('dt', {}, 'Active calibration'), el('dd', {}, cal.id),
      el('dt', {}, 'Computed'), el('dd', {}, utcDateTime(cal.createdAt)),
      el('dt', {}, 'Source'), el('dd', {}, el('span', { class: `tag source-${cal.source}` }, cal.source), cal.synthetic ? ' — from a synthetic (demo) library' : ' — from a loaded spectral library'),
      el('dt', {}, 'Library fingerprint'), el('dd', { class: 'mono' }, cal.libraryFingerprint ?? '—'),
      el('dt', {}, 'Code version'), el('dd', { class: 'mono' }, cal.codeVersion ?? '—'),
      p ? el('dt', {}, 'Library') : null, p ? el('dd', {}, `${p.librarySpectra} spectra of ${p.libraryObjects} objects; classifier ${p.classifier}`) : null,
      el('dt', {}, 'S/N convention'), el('dd', {}, `${doc.snrConvention} at ${num(doc.snrReferenceWavelengthAngstrom, 0)} Å`)),
    el('div', { class: 'controls' },
      el('label', { for: 'cal-snr' }, 'S/N '), snrSelect,
      el('label', { for: 'cal-phase' }, ' Phase '), phaseSelect,
      el('label', { for: 'cal-r' }, ' Confusion at '), rSelect),
    el('h3', {}, 'Accuracy (recall) against R, per subtype, with 95 % intervals; dotted: chance (1/K)'), curves,
    el('h3', {}, 'Minimum R per subtype'), minimum,
    el('h3', {}, 'Confusion matrix'), confusion);

  const chance = doc.baselines?.uniformGuess ?? 1 / doc.subtypes.length;
  function draw() {
    const snr = snrSelect.value === 'native' ? null : Number(snrSelect.value);
    drawCurves(curves, doc, snr, phaseSelect.value, chance);
    drawMinimum(minimum, doc, snr);
    drawConfusion(confusion, doc, Number(rSelect.value), snr, phaseSelect.value);
  }
  [snrSelect, phaseSelect, rSelect].forEach((s) => s.addEventListener('change', draw));
  draw();
}

function drawCurves(target, doc, snr, phase, chance) {
  target.replaceChildren();
  const xs = [...doc.resolutions].sort((a, b) => a - b);
  const axisStyle = { stroke: '#c9c2b3', size: 46, grid: { stroke: 'rgba(201,194,179,0.12)' }, ticks: { stroke: 'rgba(201,194,179,0.3)' } };
  for (const subtype of doc.subtypes) {
    const cells = new Map(doc.cells.filter((c) => c.subtype === subtype && c.phaseBin === phase && sameSnr(c.snr, snr)).map((c) => [c.resolution, c]));
    const pick = (f) => xs.map((r) => (cells.has(r) ? f(cells.get(r)) : null));
    const box = el('figure', { class: 'multiple', role: 'img', 'aria-label': `Recall of ${subtype} against R at S/N ${snrText(snr)}` }, el('figcaption', {}, subtype));
    target.append(box);
    // eslint-disable-next-line no-new
    new uPlot({
      width: 250,
      height: 170,
      legend: { show: false },
      scales: { x: { time: false, distr: 3 }, y: { range: [0, 1] } },
      axes: [{ ...axisStyle, values: (u, v) => v.map((x) => (x >= 1000 ? `${x / 1000}k` : x)) }, { ...axisStyle, values: (u, v) => v.map((x) => `${Math.round(x * 100)}%`) }],
      series: [
        { label: 'R' },
        { label: 'high', stroke: 'transparent', points: { show: false } },
        { label: 'low', stroke: 'transparent', points: { show: false } },
        { label: 'recall', stroke: '#8fd3c1', width: 2, points: { show: true, size: 5, fill: '#8fd3c1' } },
        { label: 'chance', stroke: '#e3a857', dash: [2, 4], width: 1.5, points: { show: false } },
      ],
      bands: [{ series: [1, 2], fill: 'rgba(143,211,193,0.22)' }],
    }, [xs, pick((c) => c.recallHigh), pick((c) => c.recallLow), pick((c) => c.recall), xs.map(() => chance)], box);
  }
}

function drawMinimum(target, doc, snr) {
  const rows = doc.minimumResolution.filter((r) => sameSnr(r.snr, snr));
  if (!rows.length) {
    target.replaceChildren(el('p', { class: 'empty' }, `No minimum-R rows at S/N ${snrText(snr)}.`));
    return;
  }
  const head = ['Subtype', 'Best recall (at R)', 'Minimum R (next lower R)', 'Recall at minimum [95 %]', 'Above chance from R', 'Chance below R'];
  target.replaceChildren(el('table', { class: 'grid' },
    el('thead', {}, el('tr', {}, ...head.map((h) => el('th', { scope: 'col' }, h)))),
    el('tbody', {}, ...rows.map((r) => el('tr', {},
      el('th', { scope: 'row' }, r.subtype),
      el('td', {}, `${percent(r.bestRecall)} (R ${num(r.bestResolution, 0)})`),
      el('td', {}, `${num(r.minimumResolution, 0)}${r.minimumResolutionBracketLow ? ` (${num(r.minimumResolutionBracketLow, 0)})` : ''}`),
      el('td', {}, `${percent(r.recallAtMinimum)} [${percent(r.recallAtMinimumLow)}, ${percent(r.recallAtMinimumHigh)}]`),
      el('td', {}, r.distinguishableFromResolution ? num(r.distinguishableFromResolution, 0) : 'never'),
      el('td', {}, r.chanceBelowResolution ? num(r.chanceBelowResolution, 0) : '—'))))));
}

function drawConfusion(target, doc, resolution, snr, phase) {
  const matrices = doc.confusions.filter((m) => m.resolution === resolution && sameSnr(m.snr, snr));
  const m = matrices.find((x) => x.phaseBin === phase) ?? matrices.find((x) => x.phaseBin === 'all') ?? matrices[0];
  if (!m) {
    target.replaceChildren(el('p', { class: 'empty' }, `No confusion matrix at R ${num(resolution, 0)}, S/N ${snrText(snr)}.`));
    return;
  }
  const totals = m.counts.map((row) => row.reduce((a, b) => a + b, 0));
  target.replaceChildren(
    el('p', { class: 'meta' }, `R ${num(m.resolution, 0)}, S/N ${snrText(m.snr)}, phase ${m.phaseBin}. Rows: true subtype; columns: classified as. Shade: share of the row.`),
    el('div', { class: 'scroll' }, el('table', { class: 'confusion' },
      el('thead', {}, el('tr', {}, el('th', { scope: 'col' }, 'true ╲ as'), ...m.labels.map((l) => el('th', { scope: 'col' }, l)))),
      el('tbody', {}, ...m.counts.map((row, i) => el('tr', {}, el('th', { scope: 'row' }, m.labels[i]),
        ...row.map((n, j) => {
          const share = totals[i] ? n / totals[i] : 0;
          return el('td', { class: i === j ? 'diagonal' : '', style: `--share:${share.toFixed(3)}`, title: `${m.labels[i]} as ${m.labels[j]}: ${n} (${percent(share)})` }, n);
        })))))));
}
