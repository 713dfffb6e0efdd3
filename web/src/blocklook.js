// How one planned observation looks in a lane: its state, whether its label fits, and the
// tooltip that carries the label on hover and focus when it does not.
import { el } from './format.js';

/** The states a block can show, in legend order, with what each means. */
export const STATES = [
  ['pending', 'pending (not started)'],
  ['executing', 'executing now'],
  ['done', 'done (observed)'],
  ['lost', 'lost (weather or failure)'],
  ['replanned', 'replanned after a loss'],
];

/**
 * pending / executing / done / lost / replanned for one entry of a plan version.
 * A "done" report on this spectrograph makes it done. A weather or failure report is a loss of
 * this entry only when it was reported after this version was computed, or is dated at or after
 * the entry's start; a loss reported before the version was computed, for an earlier slot, means
 * the candidate was replanned after it, and the entry is waiting again: "replanned", never "lost".
 * Without a report, the candidate's lifecycle state decides; an entry whose slot contains `now`
 * is "executing".
 */
export function observationState(entry, detail, spectrographId, versionCreatedAt, now = Date.now()) {
  const start = Date.parse(entry.startUtc);
  const end = Date.parse(entry.endUtc);
  const created = Date.parse(versionCreatedAt ?? '');
  const reports = (detail?.observations ?? [])
    .filter((r) => r.spectrographId.toLowerCase() === spectrographId.toLowerCase())
    .sort((a, b) => a.observedAt.localeCompare(b.observedAt));
  const last = reports.at(-1);
  if (last?.outcome === 'done') return 'done';
  if (last) {
    const reported = Date.parse(last.reportedAt ?? last.observedAt);
    const observed = Date.parse(last.observedAt);
    const forThisEntry = (Number.isFinite(created) && reported >= created) || observed >= start - 15 * 60 * 1000;
    if (forThisEntry) return 'lost';
    return now >= start && now < end ? 'executing' : 'replanned';
  }
  const state = detail?.candidate?.state;
  if (state === 'observed' || state === 'classified') return 'done';
  if (state === 'abandoned' || state === 'stale') return 'lost';
  return now >= start && now < end ? 'executing' : 'pending';
}

/**
 * Shows each block's label inside it when it fits, hides it otherwise, and gives every block a
 * tooltip (name, slot, state) on hover and keyboard focus: one shared element per board.
 */
export function fitBlockLabels(board) {
  let tip = board.querySelector('.block-tip');
  if (!tip) {
    tip = el('div', { class: 'block-tip', role: 'tooltip', id: `tip-${Math.random().toString(36).slice(2, 9)}`, hidden: true });
    board.append(tip);
    const show = (block) => {
      tip.textContent = block.dataset.tip;
      tip.hidden = false;
      const b = block.getBoundingClientRect();
      const host = board.getBoundingClientRect();
      tip.style.left = `${Math.max(0, Math.min(b.left - host.left, host.width - tip.offsetWidth))}px`;
      tip.style.top = `${b.top - host.top - tip.offsetHeight - 4}px`;
      block.setAttribute('aria-describedby', tip.id);
    };
    const hide = (block) => {
      tip.hidden = true;
      block?.removeAttribute('aria-describedby');
    };
    board.addEventListener('mouseover', (ev) => { const b = ev.target.closest?.('.block'); if (b) show(b); });
    board.addEventListener('mouseout', (ev) => { const b = ev.target.closest?.('.block'); if (b && !b.contains(ev.relatedTarget)) hide(b); });
    board.addEventListener('focusin', (ev) => { const b = ev.target.closest?.('.block'); if (b) show(b); });
    board.addEventListener('focusout', (ev) => { const b = ev.target.closest?.('.block'); if (b) hide(b); });
  }
  for (const block of board.querySelectorAll('.block')) {
    const text = block.querySelector('.block-text');
    if (!text) continue;
    block.classList.remove('label-hidden');
    // The label (with its state mark) must fit inside the block's padding box.
    const fits = text.getBoundingClientRect().width <= block.clientWidth - 4;
    block.classList.toggle('label-hidden', !fits);
  }
}
