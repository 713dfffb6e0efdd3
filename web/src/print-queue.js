// The operator queue, printable from the page: one spectrograph's queue as a table in a print-only section
// (broker id, RA/Dec in sexagesimal and degrees, magnitude, slot, exposure and split, airmass start/mid/end,
// Moon distance, value, reason, what to do if missed), and the plain-text night sheet as a download.
import { getJson, session } from './api.js';
import { alsoPosted, el, num } from './format.js';

const hm = (t) => new Date(t).toISOString().slice(11, 16);

/** The printable table of a queue response (GET /api/plans/{night}/queues/{id}). */
export function queueTable(queue, night) {
  const rows = queue.queue.map((e) => el('tr', {},
    el('td', {}, String(e.position)),
    el('td', {}, `${hm(e.startUtc)}–${hm(e.endUtc)}`),
    el('td', { class: 'mono' }, e.brokerCandidateId ?? e.candidateId,
      ...(e.alsoPostedAs?.length ? [el('br'), el('span', { class: 'small' }, `also ${alsoPosted(e.alsoPostedAs)}`)] : [])),
    el('td', { class: 'mono' }, `${e.raSexagesimal ?? '—'} ${e.decSexagesimal ?? ''}`, el('br'), el('span', { class: 'small' }, `${num(e.raDeg, 4)}°, ${num(e.decDeg, 4)}°`)),
    el('td', {}, num(e.predictedMagnitude, 1)),
    el('td', {}, `${num(e.exposureSeconds, 0)} s`, el('br'), el('span', { class: 'small' }, `${e.exposureCount} × ${num(e.subExposureSeconds, 0)} s`)),
    el('td', {}, `${num(e.airmassStart, 2)} / ${num(e.airmass, 2)} / ${num(e.airmassEnd, 2)}`),
    el('td', {}, `${num(e.moonSeparationDeg, 0)}°`),
    el('td', {}, num(e.value, 3)),
    el('td', { class: 'why' }, e.reason, el('br'), el('span', { class: 'small' }, e.ifMissed
      ? `If missed: ${e.ifMissed.name}, start ${hm(e.ifMissed.earliestStartUtc)}–${hm(e.ifMissed.latestStartUtc)} UTC`
      : 'If missed: no later window tonight'))));
  return el('section', { class: 'print-queue', 'aria-label': `Operator queue of ${queue.name}` },
    el('h2', {}, `Operator queue · ${queue.name} (R ${num(queue.resolvingPower, 0)}) at ${queue.siteName} · night of ${night}`),
    el('p', { class: 'small' }, `Plan version ${queue.version.version}, planned from ${queue.version.plannedFrom}. Times UTC; RA/Dec ICRS. ${queue.advisory}`),
    el('table', {},
      el('thead', {}, el('tr', {}, ...['#', 'Slot (UTC)', 'Broker id', 'RA / Dec', 'Mag', 'Exposure', 'Airmass s/m/e', 'Moon', 'Value', 'Why · if missed'].map((h) => el('th', { scope: 'col' }, h)))),
      el('tbody', {}, ...rows)));
}

/** Controls: choose a unit, print its queue, or download its night sheet. */
export function printControls(night, lanes, host) {
  const units = lanes.map((l) => l.queue);
  const select = el('select', { id: 'print-unit', 'aria-label': 'Spectrograph to print' },
    ...units.map((q) => el('option', { value: q.spectrographId }, `${q.name} (${q.siteName})`)));
  const status = el('span', { class: 'small', role: 'status' });

  async function print() {
    status.textContent = 'Preparing the queue…';
    const queue = await getJson(`/api/plans/${night}/queues/${select.value}`);
    host.replaceChildren(queueTable(queue, night));
    status.textContent = '';
    document.body.classList.add('printing-queue');
    const done = () => { document.body.classList.remove('printing-queue'); window.removeEventListener('afterprint', done); };
    window.addEventListener('afterprint', done);
    window.print();
  }

  async function sheet() {
    const response = await fetch(`/api/plans/${night}/queues/${select.value}?format=sheet`, { headers: { Authorization: `Bearer ${session.key ?? ''}` } });
    if (!response.ok) { status.textContent = `Night sheet not available (${response.status}).`; return; }
    const url = URL.createObjectURL(await response.blob());
    const name = units.find((q) => q.spectrographId === select.value)?.name ?? 'unit';
    const a = el('a', { href: url, download: `night-sheet-${night}-${name}.txt` });
    document.body.append(a);
    a.click();
    a.remove();
    setTimeout(() => URL.revokeObjectURL(url), 10000);
  }

  return el('div', { class: 'print-controls' },
    el('label', { for: 'print-unit' }, 'Operator queue: '), select,
    el('button', { type: 'button', id: 'print-queue', onclick: () => print().catch((e) => { status.textContent = `Could not print: ${e.message}`; }) }, 'Print queue'),
    el('button', { type: 'button', id: 'night-sheet', onclick: () => sheet().catch((e) => { status.textContent = `Could not fetch: ${e.message}`; }) }, 'Night sheet (text)'),
    status);
}
