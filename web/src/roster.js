// Roster: every site with its spectrographs, R, status and tonight's budget use from the active plan,
// then each unit's measured against modelled accuracy.
import { loadNetwork, loadPlan } from './data.js';
import { el, num, offsetLabel } from './format.js';
import { renderUnitAccuracy } from './units.js';

export async function renderRoster(root, night) {
  const [network, plan] = await Promise.all([loadNetwork(), loadPlan(night)]);
  const use = new Map((plan?.plan?.spectrographs ?? []).map((q) => [q.spectrographId.toLowerCase(), q]));
  root.replaceChildren(el('h2', {}, 'Roster'),
    el('p', { class: 'meta' }, plan ? `Budget use from plan version ${plan.version.version} of ${night}.` : `No plan for ${night}: budget use unknown.`));
  for (const { site, spectrographs } of network.sites) {
    root.append(el('section', { class: 'site' },
      el('h3', {}, site.name, ' ', el('span', { class: `tag status-${site.status}` }, site.status)),
      el('p', { class: 'meta' }, `${site.observatory ?? 'no observatory'} · lat ${num(site.latitudeDeg, 2)}°, lon ${num(site.longitudeDeg, 2)}° (east +) · ${num(site.elevationM, 0)} m · ${offsetLabel(site.longitudeDeg)}`),
      spectrographs.length
        ? el('table', { class: 'grid' },
          el('thead', {}, el('tr', {}, ...['Spectrograph', 'R', 'Status', 'Aperture', 'Tonight: used / budget'].map((h) => el('th', { scope: 'col' }, h)))),
          el('tbody', {}, ...spectrographs.map((s) => {
            const q = use.get(s.id.toLowerCase());
            const share = q && q.budgetSeconds > 0 ? q.usedSeconds / q.budgetSeconds : 0;
            return el('tr', {},
              el('th', { scope: 'row' }, s.name),
              el('td', {}, num(s.resolvingPower, 0)),
              el('td', {}, el('span', { class: `tag status-${s.status}` }, s.status)),
              el('td', {}, `${num(s.apertureM, 1)} m`),
              el('td', {}, q
                ? el('span', { class: 'budget' }, el('meter', { min: 0, max: 1, value: share.toFixed(3), 'aria-label': `budget used by ${s.name}` }),
                  ` ${num(q.usedSeconds / 3600, 1)} h / ${num(q.budgetSeconds / 3600, 1)} h`)
                : 'not in tonight\'s plan'));
          })))
        : el('p', {}, 'No spectrographs.')));
  }
  await renderUnitAccuracy(root);
}
