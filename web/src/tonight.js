// Tonight: one lane per spectrograph on a UTC axis, sky shading per site, blocks per observation.
import { getJson } from './api.js';
import { loadNetwork, loadPlan, loadVersions, loadDetails } from './data.js';
import { alsoPosted, el, utc, local, offsetLabel, num, percent, utcDateTime } from './format.js';
import { axisRow, layoutAxes, followWidth } from './timeaxis.js';
import { STATES, observationState, fitBlockLabels } from './blocklook.js';
import { loadClosures, closuresOfLane, closureSpans } from './closures.js';
import { connectLive } from './live.js';
import { printControls } from './print-queue.js';

const HOUR = 3600 * 1000;

/** Sky of one site for a night, or null when the service does not offer it. */
async function loadSky(siteId, night) {
  try {
    return await getJson(`/api/sites/${siteId}/nights/${night}`, { allowMissing: true });
  } catch (e) {
    if (e.status === 401) throw e;
    return null;
  }
}

const ms = (t) => (t ? Date.parse(t) : NaN);

function darkWindowOf(sky) {
  const w = sky?.darkWindow;
  if (!w) return null;
  const start = ms(w.startUtc ?? w.fromUtc ?? w.start);
  const end = ms(w.endUtc ?? w.toUtc ?? w.end);
  return Number.isFinite(start) && Number.isFinite(end) ? { start, end } : null;
}

function twilightsOf(sky) {
  return (sky?.twilights ?? [])
    .map((t) => ({ depressionDeg: t.depressionDeg, start: ms(t.eveningUtc), end: ms(t.morningUtc) }))
    .filter((t) => Number.isFinite(t.start) && Number.isFinite(t.end))
    .sort((a, b) => a.depressionDeg - b.depressionDeg);
}

function axisRange(lanes) {
  let lo = Infinity;
  let hi = -Infinity;
  for (const lane of lanes) {
    for (const e of lane.queue.queue) {
      lo = Math.min(lo, ms(e.startUtc));
      hi = Math.max(hi, ms(e.endUtc));
    }
    for (const t of lane.twilights) {
      lo = Math.min(lo, t.start);
      hi = Math.max(hi, t.end);
    }
  }
  if (!Number.isFinite(lo)) return null;
  return { lo: Math.floor(lo / HOUR) * HOUR, hi: Math.ceil(hi / HOUR) * HOUR };
}

export function createTonight(root, night, { pollSeconds = 20 } = {}) {
  let shownVersion = null;
  let selected = null;
  let timer = null;
  let unfollow = () => {};
  const live = el('p', { class: 'live', role: 'status', 'aria-live': 'polite' });
  let stream = null;

  async function render() {
    const [plan, network] = await Promise.all([loadPlan(night), loadNetwork()]);
    unfollow();
    root.replaceChildren();
    root.append(el('h2', {}, `Tonight · night of ${night}`), live, ...(stream ? [stream.element] : []));
    if (!plan) {
      shownVersion = 0;
      root.append(el('p', { class: 'empty' }, `No plan has been stored for the night of ${night} yet. This page checks for one every ${pollSeconds} s.`));
      return;
    }
    shownVersion = plan.version.version;
    const queues = plan.plan.spectrographs;
    const details = await loadDetails(queues.flatMap((q) => q.queue.map((e) => e.candidateId)));
    const siteIds = new Set();
    const lanes = queues.map((queue) => {
      const unit = network.spectrographs.get(queue.spectrographId.toLowerCase());
      if (unit) siteIds.add(unit.site.id);
      return { queue, unit, site: unit?.site ?? null };
    });
    const skies = new Map(await Promise.all([...siteIds].map(async (id) => [id, await loadSky(id, night)])));
    for (const lane of lanes) {
      const sky = lane.site ? skies.get(lane.site.id) : null;
      lane.sky = sky;
      lane.dark = darkWindowOf(sky);
      lane.twilights = twilightsOf(sky);
    }
    const anySky = lanes.some((l) => l.sky);

    root.append(
      el('div', { class: 'advisory', role: 'note' }, el('strong', {}, 'Advisory. '), plan.advisory),
      el('p', { class: 'meta' },
        `Plan version ${plan.version.version} of ${night}, computed ${utcDateTime(plan.version.createdAt)}, planned from ${utcDateTime(plan.version.plannedFrom)}; `,
        `objective ${plan.version.objective}; ${plan.version.assigned} observations; expected correct identifications ${num(plan.version.expectedIdentifications, 1)}.`),
      legend(anySky));

    const range = axisRange(lanes);
    if (!range) {
      root.append(el('p', { class: 'empty' }, 'This plan version has no observations.'));
      return;
    }
    const closures = await loadClosures(range.lo, range.hi);
    for (const lane of lanes) lane.closures = closuresOfLane(closures, lane.site?.id, lane.queue.spectrographId);
    const printHost = el('div', { class: 'print-host' });
    root.append(printControls(night, lanes, printHost), printHost);
    const panel = el('aside', { class: 'block-detail', 'aria-live': 'polite' }, el('p', { class: 'hint' }, 'Select a block (click, or Tab to it and press Enter) to see why it was planned.'));
    const board = el('div', { class: 'board', role: 'group', 'aria-label': 'Planned observations per spectrograph, UTC time axis' });
    board.append(axisRow(range));
    lanes.forEach((lane, laneIndex) => board.append(laneRow(lane, laneIndex, range, details, panel, plan.version.createdAt)));
    const sites = [...new Map(lanes.filter((l) => l.site).map((l) => [l.site.id, l.site])).values()];
    sites.forEach((site) => board.append(axisRow(range, site)));
    root.append(board, panel);
    unfollow = followWidth(board, () => { layoutAxes(board); fitBlockLabels(board); });
    if (!anySky) {
      root.append(el('p', { class: 'note' }, 'Sky times (dark window, twilights) are not available from the service; the lanes show only the span the plan uses.'));
    }
    if (selected) {
      const again = board.querySelector(`[data-candidate="${CSS.escape(selected)}"]`);
      if (again) again.click();
    }
  }

  function legend(anySky) {
    return el('ul', { class: 'legend', 'aria-label': 'Legend' },
      STATES.map(([state, meaning]) => el('li', {}, el('span', { class: `swatch block state-${state}` }, el('span', { class: 'block-text' })), meaning)),
      el('li', {}, el('span', { class: 'swatch closure' }), 'closed (site or unit)'),
      anySky ? el('li', {}, el('span', { class: 'swatch sky-twilight' }), 'twilight') : null,
      anySky ? el('li', {}, el('span', { class: 'swatch sky-dark' }), 'dark window') : el('li', {}, el('span', { class: 'swatch sky-span' }), 'span used by the plan'));
  }

  function laneRow(lane, laneIndex, range, details, panel, versionCreatedAt) {
    const { queue, site } = lane;
    const track = el('div', { class: 'track' });
    for (const t of lane.twilights) {
      track.append(el('div', { class: 'sky sky-twilight', style: span(t.start, t.end, range), title: `Sun below −${t.depressionDeg}°: ${utc(new Date(t.start))} – ${utc(new Date(t.end))}` }));
    }
    if (lane.dark) {
      track.append(el('div', { class: 'sky sky-dark', style: span(lane.dark.start, lane.dark.end, range), title: `Dark window ${utc(new Date(lane.dark.start))} – ${utc(new Date(lane.dark.end))}` }));
    }
    track.append(...closureSpans(lane.closures ?? [], (a, b) => span(a, b, range)));
    if (!lane.sky && queue.queue.length) {
      const first = Math.min(...queue.queue.map((e) => ms(e.startUtc)));
      const last = Math.max(...queue.queue.map((e) => ms(e.endUtc)));
      track.append(el('div', { class: 'sky sky-span', style: span(first, last, range) }));
    }
    queue.queue.forEach((entry, i) => {
      const detail = details.get(entry.candidateId.toLowerCase());
      const state = observationState(entry, detail, queue.spectrographId, versionCreatedAt);
      const name = detail?.candidate?.brokerCandidateId ?? entry.candidateId;
      const block = el('button', {
        type: 'button',
        class: `block state-${state}`,
        style: span(ms(entry.startUtc), ms(entry.endUtc), range),
        'data-candidate': entry.candidateId,
        'data-lane': laneIndex,
        'data-index': i,
        'data-state': state,
        'data-tip': `${name} · ${utc(entry.startUtc)} – ${utc(entry.endUtc)} · ${state}`,
        'aria-label': `${name} on ${queue.name}, ${utc(entry.startUtc)} to ${utc(entry.endUtc)}, ${state}`,
        onclick: () => select(block, entry, queue, lane, detail, state, panel),
        onkeydown: (ev) => moveFocus(ev, block),
      }, el('span', { class: 'block-text' }, name));
      track.append(block);
    });
    const label = el('div', { class: 'lane-label' },
      el('strong', {}, queue.name),
      el('span', {}, `${queue.siteName} · R ${num(queue.resolvingPower, 0)}`),
      el('span', { class: 'small' }, site ? offsetLabel(site.longitudeDeg) : 'site not in the roster'));
    return el('div', { class: 'lane' }, label, track);
  }

  function select(block, entry, queue, lane, detail, state, panel) {
    selected = entry.candidateId;
    block.closest('.board').querySelectorAll('.block[aria-pressed="true"]').forEach((b) => b.setAttribute('aria-pressed', 'false'));
    block.setAttribute('aria-pressed', 'true');
    const lon = lane.site?.longitudeDeg;
    const when = (t) => (lon === undefined ? utc(t) : `${utc(t)} (${local(t, lon)})`);
    panel.replaceChildren(
      el('h3', {}, detail?.candidate?.brokerCandidateId ?? entry.candidateId),
      el('p', { class: 'reason' }, entry.reason),
      el('dl', {},
        el('dt', {}, 'Candidate id'), el('dd', {}, el('a', { href: `#/candidates/${entry.candidateId}` }, entry.candidateId)),
        ...(entry.alsoPostedAs?.length ? [el('dt', {}, 'Also posted as'), el('dd', { class: 'also-posted' }, alsoPosted(entry.alsoPostedAs))] : []),
        el('dt', {}, 'State'), el('dd', {}, state),
        el('dt', {}, 'Spectrograph'), el('dd', {}, `${queue.name} (${queue.siteName}, R ${num(queue.resolvingPower, 0)})`),
        el('dt', {}, 'Start'), el('dd', {}, when(entry.startUtc)),
        el('dt', {}, 'End'), el('dd', {}, when(entry.endUtc)),
        el('dt', {}, 'Exposure'), el('dd', {}, `${num(entry.exposureSeconds, 0)} s`),
        el('dt', {}, 'Predicted magnitude'), el('dd', {}, `${num(entry.predictedMagnitude, 2)} AB`),
        el('dt', {}, 'Airmass'), el('dd', {}, num(entry.airmass, 2)),
        el('dt', {}, 'Expected S/N'), el('dd', {}, num(entry.expectedSnr, 1)),
        el('dt', {}, 'Expected accuracy'), el('dd', {}, percent(entry.expectedAccuracy, 1))));
  }

  function moveFocus(ev, block) {
    const lane = Number(block.dataset.lane);
    const index = Number(block.dataset.index);
    const target = {
      ArrowRight: `[data-lane="${lane}"][data-index="${index + 1}"]`,
      ArrowLeft: `[data-lane="${lane}"][data-index="${index - 1}"]`,
      ArrowDown: `[data-lane="${lane + 1}"][data-index="0"]`,
      ArrowUp: `[data-lane="${lane - 1}"][data-index="0"]`,
    }[ev.key];
    if (!target) return;
    const next = block.closest('.board').querySelector(`.block${target}`);
    if (next) {
      ev.preventDefault();
      next.focus();
    }
  }

  async function poll() {
    try {
      const versions = await loadVersions(night);
      const latest = versions.length ? versions.at(-1).version : 0;
      if (latest !== shownVersion) {
        await render();
        live.textContent = `Plan version ${latest} arrived at ${utc(new Date())}; the lanes now show it.`;
      }
    } catch (e) {
      if (e.status === 401) return;
      live.textContent = `Could not check for a new plan version: ${e.message}`;
    }
    timer = setTimeout(poll, pollSeconds * 1000);
  }

  return {
    async start() {
      // Live plan changes re-render at once; the periodic check stays as a fallback.
      stream = connectLive(night, (event) => {
        if (event.version !== shownVersion) {
          render().then(() => { live.textContent = `Plan version ${event.version} arrived at ${utc(new Date())}; the lanes now show it.`; }).catch(() => {});
        }
      });
      await render();
      timer = setTimeout(poll, pollSeconds * 1000);
    },
    stop() {
      clearTimeout(timer);
      stream?.stop();
    },
  };
}

function pos(t, range) { return ((t - range.lo) / (range.hi - range.lo)) * 100; }

function span(start, end, range) {
  const a = Math.max(0, pos(start, range));
  const b = Math.min(100, pos(end, range));
  return `left:${a.toFixed(3)}%;width:${Math.max(0.15, b - a).toFixed(3)}%`;
}
