// Shared look-ups: the roster, the active plan of a night and the candidates' states.
import { getJson } from './api.js';

export async function loadNetwork() {
  const sites = await getJson('/api/network');
  const spectrographs = new Map();
  for (const { site, spectrographs: units } of sites) {
    for (const unit of units) spectrographs.set(unit.id.toLowerCase(), { ...unit, site });
  }
  return { sites, spectrographs };
}

/** The active plan of a night, or null when none is stored yet. */
export function loadPlan(night) {
  return getJson(`/api/plans/${night}`, { allowMissing: true });
}

export function loadVersions(night) {
  return getJson(`/api/plans/${night}/versions`);
}

const GUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** Runs `work` over `items` with at most `width` in flight. */
export async function inBatches(items, width, work) {
  const results = new Array(items.length);
  let next = 0;
  const lanes = Array.from({ length: Math.min(width, items.length) }, async () => {
    while (next < items.length) {
      const i = next++;
      results[i] = await work(items[i], i);
    }
  });
  await Promise.all(lanes);
  return results;
}

/** Candidate details by id for ids that name a stored candidate (others map to null). */
export async function loadDetails(ids) {
  const unique = [...new Set(ids)];
  const found = await inBatches(unique, 6, (id) => (GUID.test(id) ? getJson(`/api/candidates/${id}`, { allowMissing: true }) : null));
  return new Map(unique.map((id, i) => [id.toLowerCase(), found[i]]));
}

/**
 * done / lost / pending for one planned observation: the latest observation report on that
 * spectrograph decides; without one, the candidate's lifecycle state does.
 */
export function entryState(detail, spectrographId) {
  if (!detail) return 'pending';
  const reports = (detail.observations ?? [])
    .filter((r) => r.spectrographId.toLowerCase() === spectrographId.toLowerCase())
    .sort((a, b) => a.observedAt.localeCompare(b.observedAt));
  const last = reports.at(-1);
  if (last) return last.outcome === 'done' ? 'done' : 'lost';
  const state = detail.candidate.state;
  if (state === 'observed' || state === 'classified') return 'done';
  if (state === 'abandoned' || state === 'stale') return 'lost';
  return 'pending';
}

/** candidateId → { entry, queue } for every planned observation. */
export function planIndex(plan) {
  const index = new Map();
  for (const queue of plan?.plan?.spectrographs ?? []) {
    for (const entry of queue.queue) index.set(entry.candidateId.toLowerCase(), { entry, queue });
  }
  return index;
}
