// Live plan changes: the night's server-sent-event stream read with fetch (so the key travels as a bearer
// token, which EventSource cannot send), reconnecting with Last-Event-ID after a drop. A small indicator
// says whether the page is live, reconnecting or offline.
import { session } from './api.js';
import { el, utc } from './format.js';

/** Parses SSE text chunks into { id, event, data } messages. */
export function sseParser(onMessage) {
  let buffer = '';
  let current = { id: '', event: 'message', data: '' };
  return (chunk) => {
    buffer += chunk;
    let nl;
    while ((nl = buffer.indexOf('\n')) >= 0) {
      const line = buffer.slice(0, nl).replace(/\r$/, '');
      buffer = buffer.slice(nl + 1);
      if (line === '') {
        if (current.data) onMessage(current);
        current = { id: '', event: 'message', data: '' };
      } else if (line.startsWith(':')) {
        // comment (keep-alive)
      } else {
        const colon = line.indexOf(':');
        const field = colon < 0 ? line : line.slice(0, colon);
        const value = colon < 0 ? '' : line.slice(colon + 1).replace(/^ /, '');
        if (field === 'id') current.id = value;
        else if (field === 'event') current.event = value;
        else if (field === 'data') current.data += (current.data ? '\n' : '') + value;
      }
    }
  };
}

/**
 * Connects to /api/plans/{night}/events. `onVersion(event)` gets every plan-version event. Returns
 * { element, stop } where element is the indicator (role=status, data-live = connecting|live|reconnecting|offline).
 */
export function connectLive(night, onVersion) {
  const dot = el('span', { class: 'live-dot', 'aria-hidden': 'true' });
  const text = el('span', { class: 'live-text' }, 'Connecting to plan changes…');
  const element = el('p', { class: 'live-indicator', role: 'status', 'data-live': 'connecting' }, dot, text);
  let lastId = null;
  let stopped = false;
  let controller = null;
  let retry = 1000;

  function show(state, message) {
    element.dataset.live = state;
    text.textContent = message;
  }

  async function run() {
    while (!stopped) {
      controller = new AbortController();
      try {
        const headers = { Authorization: `Bearer ${session.key ?? ''}`, Accept: 'text/event-stream' };
        if (lastId) headers['Last-Event-ID'] = lastId;
        const response = await fetch(`/api/plans/${night}/events`, { headers, signal: controller.signal });
        if (response.status === 401 || response.status === 403) {
          show('offline', 'Live updates refused for this key; the page checks for new versions periodically.');
          return;
        }
        if (!response.ok || !response.body) throw new Error(`${response.status}`);
        show('live', `Live: new plan versions appear as they are stored (connected ${utc(new Date())}).`);
        retry = 1000;
        const reader = response.body.pipeThrough(new TextDecoderStream()).getReader();
        const parse = sseParser((m) => {
          if (m.id) lastId = m.id;
          if (m.event !== 'plan-version') return;
          try {
            const data = JSON.parse(m.data);
            show('live', `Live: version ${data.version} arrived ${utc(new Date())} (${data.trigger?.kind ?? 'manual'}).`);
            onVersion(data);
          } catch { /* a malformed event is skipped */ }
        });
        for (;;) {
          const { value, done } = await reader.read();
          if (done) break;
          parse(value);
        }
        if (stopped) return;
        show('reconnecting', 'Live connection closed; reconnecting…');
      } catch (e) {
        if (stopped) return;
        show('reconnecting', `Live connection lost; reconnecting in ${Math.round(retry / 1000)} s…`);
      }
      await new Promise((r) => setTimeout(r, retry));
      retry = Math.min(retry * 2, 30000);
    }
  }

  run();
  return {
    element,
    stop() {
      stopped = true;
      controller?.abort();
      show('offline', 'Live updates stopped.');
    },
  };
}
