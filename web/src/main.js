// The night view shell: sign-in, navigation by hash (#/tonight, #/candidates[/id], #/calibration, #/roster).
import { session, whenRefused } from './api.js';
import { el, defaultNight } from './format.js';
import { createTonight } from './tonight.js';
import { renderCandidates, renderCandidate } from './candidates.js';
import { renderCalibration } from './calibration.js';
import { renderRoster } from './roster.js';

const params = new URLSearchParams(location.search);
const pollSeconds = Math.max(1, Number(params.get('poll')) || 20);
let night = params.get('night') || defaultNight();
const main = document.getElementById('main');
const nav = document.getElementById('nav');
const signin = document.getElementById('signin');
const nightInput = document.getElementById('night');
let tonight = null;

function showSignIn(message) {
  tonight?.stop();
  nav.hidden = true;
  main.replaceChildren();
  signin.hidden = false;
  document.getElementById('signin-message').textContent = message ?? '';
  document.getElementById('key').focus();
}

whenRefused(showSignIn);

signin.addEventListener('submit', (ev) => {
  ev.preventDefault();
  const key = document.getElementById('key').value.trim();
  if (!key) return;
  session.key = key;
  document.getElementById('key').value = '';
  signin.hidden = true;
  route();
});

document.getElementById('signout').addEventListener('click', () => {
  session.key = null;
  showSignIn('Signed out. The key was removed from this browser session.');
});

nightInput.value = night;
nightInput.addEventListener('change', () => {
  if (!nightInput.value) return;
  night = nightInput.value;
  route();
});

async function route() {
  if (!session.key) {
    showSignIn();
    return;
  }
  nav.hidden = false;
  tonight?.stop();
  tonight = null;
  const [page, id] = location.hash.replace(/^#\/?/, '').split('/');
  const current = page || 'tonight';
  nav.querySelectorAll('a[data-page]').forEach((a) => a.setAttribute('aria-current', a.dataset.page === current ? 'page' : 'false'));
  main.replaceChildren();
  try {
    if (current === 'candidates' && id) await renderCandidate(main, id);
    else if (current === 'candidates') await renderCandidates(main, night);
    else if (current === 'calibration') await renderCalibration(main);
    else if (current === 'roster') await renderRoster(main, night);
    else {
      tonight = createTonight(main, night, { pollSeconds });
      await tonight.start();
    }
    main.dataset.ready = current;
  } catch (e) {
    if (e.status === 401) return;
    main.append(el('p', { class: 'error', role: 'alert' }, `Could not load this page: ${e.message}`));
    main.dataset.ready = current;
  }
}

window.addEventListener('hashchange', route);
route();
