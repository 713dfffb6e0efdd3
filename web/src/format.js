// Times are always shown with their scale: "UTC" or "local" (site mean solar time from longitude).

const pad = (n) => String(n).padStart(2, '0');

export function hhmm(date) { return `${pad(date.getUTCHours())}:${pad(date.getUTCMinutes())}`; }

export function utc(value) {
  const d = value instanceof Date ? value : new Date(value);
  return `${hhmm(d)} UTC`;
}

export function utcDateTime(value) {
  const d = value instanceof Date ? value : new Date(value);
  return `${d.toISOString().slice(0, 10)} ${hhmm(d)} UTC`;
}

/** Site local mean solar time: UTC shifted by longitude/15 hours (east-positive), rounded to the minute. */
export function localOffsetMinutes(longitudeDeg) { return Math.round(longitudeDeg * 4); }

export function local(value, longitudeDeg) {
  const d = value instanceof Date ? value : new Date(value);
  return `${hhmm(new Date(d.getTime() + localOffsetMinutes(longitudeDeg) * 60000))} local`;
}

export function offsetLabel(longitudeDeg) {
  const m = localOffsetMinutes(longitudeDeg);
  const sign = m < 0 ? '−' : '+';
  const a = Math.abs(m);
  return `local = UTC${sign}${pad(Math.floor(a / 60))}:${pad(a % 60)} (mean solar, longitude ${longitudeDeg.toFixed(1)}°)`;
}

export function num(value, digits = 2) {
  return value === null || value === undefined || Number.isNaN(value) ? '—' : Number(value).toFixed(digits);
}

/** Other brokers' posts of one transient: "broker/ID, broker/ID" (the candidate id when the broker is unknown). */
export function alsoPosted(posts) {
  return posts.map((p) => (p.broker ? `${p.broker}/${p.brokerCandidateId}` : p.candidateId)).join(', ');
}

export function percent(value, digits = 0) {
  return value === null || value === undefined ? '—' : `${(value * 100).toFixed(digits)} %`;
}

/** The night a scheduler means at this moment: the UTC date twelve hours ago. */
export function defaultNight(now = new Date()) {
  return new Date(now.getTime() - 12 * 3600 * 1000).toISOString().slice(0, 10);
}

/** Small DOM builder: el('div', { class: 'x', onclick }, child, 'text'). */
export function el(tag, attrs = {}, ...children) {
  const node = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (v === undefined || v === null || v === false) continue;
    if (k.startsWith('on')) node.addEventListener(k.slice(2), v);
    else if (k === 'text') node.textContent = v;
    // Through the CSSOM: the Content-Security-Policy (style-src 'self') refuses style attributes.
    else if (k === 'style') node.style.cssText = v;
    else node.setAttribute(k, v === true ? '' : v);
  }
  for (const c of children.flat()) {
    if (c !== null && c !== undefined && c !== false) node.append(c instanceof Node ? c : String(c));
  }
  return node;
}
