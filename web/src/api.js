// Every call goes through here: the key lives in sessionStorage only and travels as a bearer token.
const KEY_SLOT = 'triage.apiKey';

export class Refused extends Error {
  constructor(status, detail) {
    super(detail);
    this.status = status;
  }
}

export const session = {
  get key() { return sessionStorage.getItem(KEY_SLOT); },
  set key(value) {
    if (value) sessionStorage.setItem(KEY_SLOT, value);
    else sessionStorage.removeItem(KEY_SLOT);
  },
};

let onRefused = () => {};
/** Called with a message when the service answers 401 (the key is unknown, revoked or missing). */
export function whenRefused(handler) { onRefused = handler; }

/** GET a JSON resource; resolves to null on 404 when `allowMissing` is set. */
export async function getJson(path, { allowMissing = false } = {}) {
  const response = await fetch(path, { headers: { Authorization: `Bearer ${session.key ?? ''}`, Accept: 'application/json' } });
  if (response.status === 401) {
    session.key = null;
    const message = 'The service refused this key (401). Check it and sign in again.';
    onRefused(message);
    throw new Refused(401, message);
  }
  if (response.status === 404 && allowMissing) return null;
  if (!response.ok) {
    let detail = `${response.status} ${response.statusText}`;
    try {
      const problem = await response.json();
      detail = problem.detail ?? problem.title ?? detail;
    } catch { /* not a problem document */ }
    throw new Refused(response.status, `${path}: ${detail}`);
  }
  return response.json();
}
