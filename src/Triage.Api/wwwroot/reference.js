(async () => {
  const main = document.getElementById('content');
  const doc = await (await fetch('/openapi/v1.json')).json();
  const byTag = new Map();
  for (const [path, item] of Object.entries(doc.paths || {})) {
    for (const [verb, op] of Object.entries(item)) {
      if (!['get', 'post', 'put', 'delete', 'patch'].includes(verb)) continue;
      const tag = (op.tags && op.tags[0]) || 'Other';
      if (!byTag.has(tag)) byTag.set(tag, []);
      byTag.get(tag).push({ path, verb, op });
    }
  }
  const text = s => document.createTextNode(s);
  const el = (name, attrs = {}, ...kids) => {
    const e = document.createElement(name);
    Object.assign(e, attrs);
    kids.forEach(k => e.append(typeof k === 'string' ? text(k) : k));
    return e;
  };
  const schemaName = s => !s ? '' : s.$ref ? s.$ref.split('/').pop() : s.type === 'array' ? schemaName(s.items) + '[]' : (s.type || '');
  main.replaceChildren();
  for (const [tag, ops] of [...byTag.entries()].sort()) {
    main.append(el('h2', {}, tag));
    for (const { path, verb, op } of ops) {
      const box = el('div', { className: 'op' },
        el('span', { className: 'verb' }, verb.toUpperCase()), el('span', { className: 'path' }, path));
      if (op.operationId) box.append(el('div', { className: 'muted' }, op.operationId));
      const params = op.parameters || [];
      if (params.length) {
        const t = el('table', {}, el('tr', {}, el('th', {}, 'parameter'), el('th', {}, 'in'), el('th', {}, 'type')));
        params.forEach(p => t.append(el('tr', {}, el('td', {}, el('code', {}, p.name)), el('td', {}, p.in), el('td', {}, schemaName(p.schema)))));
        box.append(t);
      }
      const body = op.requestBody && op.requestBody.content && op.requestBody.content['application/json'];
      if (body) box.append(el('div', {}, 'Body: ', el('code', {}, schemaName(body.schema))));
      const codes = Object.keys(op.responses || {}).join(', ');
      if (codes) box.append(el('div', { className: 'muted' }, 'Responses: ' + codes));
      main.append(box);
    }
  }
  const schemas = (doc.components && doc.components.schemas) || {};
  main.append(el('h2', {}, 'Schemas'));
  for (const [name, s] of Object.entries(schemas).sort()) {
    const box = el('div', { className: 'op' }, el('strong', {}, name));
    const t = el('table');
    for (const [prop, ps] of Object.entries(s.properties || {})) {
      t.append(el('tr', {}, el('td', {}, el('code', {}, prop)), el('td', {}, schemaName(ps) || JSON.stringify(ps.type || ''))));
    }
    box.append(t);
    main.append(box);
  }
})();
