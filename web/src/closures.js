// Closures of sites and units drawn as shaded spans on the lanes of the night view.
import { getJson } from './api.js';
import { el, utc } from './format.js';

/** Closures overlapping [lo, hi) (epoch ms); an empty list when the service cannot say. */
export async function loadClosures(lo, hi) {
  try {
    const from = new Date(lo).toISOString();
    const to = new Date(hi).toISOString();
    return (await getJson(`/api/closures?fromUtc=${encodeURIComponent(from)}&toUtc=${encodeURIComponent(to)}`)) ?? [];
  } catch (e) {
    if (e.status === 401) throw e;
    return [];
  }
}

/** The closures that apply to one lane: its site's whole-site closures and its own unit's. */
export function closuresOfLane(closures, siteId, spectrographId) {
  const unit = spectrographId?.toLowerCase();
  return closures.filter((c) => c.siteId?.toLowerCase() === siteId?.toLowerCase()
    && (!c.spectrographId || c.spectrographId.toLowerCase() === unit));
}

/** Shaded spans for a lane; `place(start, end)` gives the CSS left/width of an interval. */
export function closureSpans(closures, place) {
  return closures.map((c) => {
    const start = Date.parse(c.fromUtc);
    const end = Date.parse(c.toUtc);
    const what = c.spectrographId ? 'Unit closed' : 'Site closed';
    const label = `${what} (${c.reason}) ${utc(new Date(start))} – ${utc(new Date(end))}${c.note ? `: ${c.note}` : ''}`;
    return el('div', { class: 'closure', style: place(start, end), title: label, role: 'img', 'aria-label': label, 'data-closure': c.id },
      el('span', { class: 'closure-text' }, `closed · ${c.reason}`));
  });
}
