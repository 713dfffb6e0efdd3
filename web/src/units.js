// Unit accuracy: each spectrograph's measured recall (labelled reports of candidates identified later)
// against what the active calibration predicts for the same trials, with both intervals and the flag.
import { getJson } from './api.js';
import { el, num, percent } from './format.js';

function range(low, high) {
  return low === null || low === undefined || high === null || high === undefined ? '' : ` (${percent(low)} – ${percent(high)})`;
}

/** A 0–100 % scale with the measured interval, the modelled range and the measured point. */
function scale(u) {
  if (!u.trials) return el('span', { class: 'meta' }, 'no trials yet');
  const bar = (cls, low, high, label) => el('span', {
    class: `acc-range ${cls}`, title: label, 'aria-hidden': 'true',
    style: `left:${(100 * low).toFixed(1)}%;width:${Math.max(0.8, 100 * (high - low)).toFixed(1)}%`,
  });
  return el('span', { class: 'acc-scale', role: 'img', 'aria-label': `measured ${percent(u.measuredRecall)}, modelled ${percent(u.modelledRecall)}` },
    bar('modelled', u.modelledLow, u.modelledHigh, 'modelled range (95 %)'),
    bar('measured', u.measuredLow, u.measuredHigh, 'measured interval (95 %)'),
    el('span', { class: 'acc-point', 'aria-hidden': 'true', style: `left:${(100 * u.measuredRecall).toFixed(1)}%` }));
}

export async function renderUnitAccuracy(root) {
  const answer = await getJson('/api/units/accuracy', { allowMissing: true });
  const section = el('section', { class: 'unit-accuracy', 'aria-labelledby': 'unit-accuracy-title' },
    el('h3', { id: 'unit-accuracy-title' }, 'Unit accuracy: measured against modelled'));
  root.append(section);
  if (!answer) {
    section.append(el('p', { class: 'meta' }, 'No calibration is active, so there is no modelled accuracy to compare with.'));
    return;
  }
  const flagged = answer.units.filter((u) => u.flagged);
  section.append(
    el('p', { class: 'meta' }, answer.method),
    el('p', { class: 'note' }, 'Scale: the teal bar is where the measured recall would fall 95 % of the time if the model were right; the ochre bar is the measured 95 % interval and the line the measured recall.'),
    ...flagged.map((u) => el('p', { class: 'warning', role: 'status', 'data-unit': u.name }, `⚠ ${u.warning}`)),
    el('table', { class: 'grid', 'aria-label': 'Unit accuracy' },
      el('thead', {}, el('tr', {}, ...['Spectrograph', 'R', 'Trials', 'Measured (95 % interval)', 'Modelled (95 % range)', 'Scale 0–100 %', 'z', 'Flag']
        .map((h) => el('th', { scope: 'col' }, h)))),
      el('tbody', {}, ...answer.units.map((u) => el('tr', { class: u.flagged ? 'flagged' : null, 'data-unit': u.name },
        el('th', { scope: 'row' }, u.name),
        el('td', {}, num(u.resolvingPower, 0)),
        el('td', {}, `${u.trials}${u.trials ? ` (${u.correct} right)` : ''}`),
        el('td', {}, u.trials ? `${percent(u.measuredRecall)}${range(u.measuredLow, u.measuredHigh)}` : '—'),
        el('td', {}, u.trials ? `${percent(u.modelledRecall)}${range(u.modelledLow, u.modelledHigh)}` : '—'),
        el('td', {}, scale(u)),
        el('td', {}, u.trials ? num(u.z, 1) : '—'),
        el('td', {}, u.flagged ? el('span', { class: 'tag flag' }, 'worse than modelled') : u.trials ? 'as modelled' : '—'))))));
}
