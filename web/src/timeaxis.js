// Time axes of the night view: the tick step is chosen for the track's width, labels are bare
// "HH:MM" (the row says which clock), local axes tick on round local times, and a label that
// would touch its neighbour or leave the track is hidden (its tick mark stays).
import { el, localOffsetMinutes } from './format.js';

const MINUTE = 60 * 1000;
/** Candidate steps, minutes. */
const STEPS = [5, 10, 15, 20, 30, 60, 120, 180, 240, 360, 720];
/** Room one label needs, px ("00:00" at 0.78 rem plus a gap). */
export const LABEL_PX = 58;
const GAP_PX = 6;

/** The smallest step (ms) that leaves at least LABEL_PX per tick on a track `widthPx` wide. */
export function chooseStep(spanMs, widthPx, labelPx = LABEL_PX) {
  const room = Math.max(2, Math.floor(widthPx / labelPx));
  const minutes = STEPS.find((m) => spanMs / (m * MINUTE) <= room) ?? STEPS.at(-1);
  return minutes * MINUTE;
}

/** Instants in [lo, hi] at whole multiples of `step` on a clock `offsetMs` ahead of UTC. */
export function tickInstants(lo, hi, step, offsetMs = 0) {
  const out = [];
  for (let t = Math.ceil((lo + offsetMs) / step) * step - offsetMs; t <= hi; t += step) out.push(t);
  return out;
}

const pad = (n) => String(n).padStart(2, '0');
function clock(t, offsetMs) {
  const d = new Date(t + offsetMs);
  return `${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}`;
}

/**
 * An empty axis row; `layoutAxes` fills it once the board is on the page (the step depends on
 * the width). `site` null: UTC; otherwise the site's local mean solar time.
 */
export function axisRow(range, site = null) {
  const offsetMs = site ? localOffsetMinutes(site.longitudeDeg) * MINUTE : 0;
  const track = el('div', { class: 'track axis-track', 'aria-hidden': 'true', 'data-lo': range.lo, 'data-hi': range.hi, 'data-offset': offsetMs });
  const label = site
    ? el('div', { class: 'lane-label axis-label' }, el('strong', {}, 'Local time'), el('span', { class: 'small' }, site.name))
    : el('div', { class: 'lane-label axis-label' }, el('strong', {}, 'UTC'));
  return el('div', { class: `lane axis ${site ? 'axis-local' : 'axis-utc'}`, 'data-axis': site ? site.id : 'utc' }, label, track);
}

/** Lays out every axis row of `board` for its current width: one step for all rows. */
export function layoutAxes(board) {
  const tracks = [...board.querySelectorAll('.axis-track')];
  if (!tracks.length) return;
  const width = tracks[0].clientWidth;
  if (!width) return;
  const lo = Number(tracks[0].dataset.lo);
  const hi = Number(tracks[0].dataset.hi);
  const step = chooseStep(hi - lo, width);
  board.dataset.tickMinutes = String(step / MINUTE);
  for (const track of tracks) {
    const offsetMs = Number(track.dataset.offset);
    track.replaceChildren(...tickInstants(lo, hi, step, offsetMs).map((t) =>
      el('span', { class: 'tick', style: `left:${(((t - lo) / (hi - lo)) * 100).toFixed(3)}%`, 'data-t': t },
        el('span', { class: 'tick-label' }, clock(t, offsetMs)))));
    hideCollisions(track);
  }
}

/** Hides labels that would overlap the previous shown one or stick out of the track. */
function hideCollisions(track) {
  const box = track.getBoundingClientRect();
  let right = -Infinity;
  for (const label of track.querySelectorAll('.tick-label')) {
    const r = label.getBoundingClientRect();
    const fits = r.left >= box.left && r.right <= box.right && r.left >= right + GAP_PX;
    label.classList.toggle('hidden', !fits);
    if (fits) right = r.right;
  }
}

/** Keeps the axes (and anything else `relayout` draws) fitted to the width as the window changes. */
export function followWidth(board, relayout) {
  relayout();
  if (typeof ResizeObserver === 'undefined') return () => {};
  let last = board.clientWidth;
  const observer = new ResizeObserver(() => {
    if (board.clientWidth !== last) {
      last = board.clientWidth;
      relayout();
    }
  });
  observer.observe(board);
  return () => observer.disconnect();
}
