// Small DOM helpers shared by the pages: elements from tags, tables from rows, numbers in words.

/** h('p', {class: 'x'}, 'text', child) → element; attributes starting with "data" or "aria" are set as given. */
export function h(tag, attributes = {}, ...children) {
  const element = document.createElement(tag);
  for (const [name, value] of Object.entries(attributes ?? {})) {
    if (value === undefined || value === null || value === false) {
      continue;
    }
    if (name.startsWith('on')) {
      element.addEventListener(name.slice(2), value);
    } else {
      element.setAttribute(name, value === true ? '' : value);
    }
  }
  element.append(...children.flat(Infinity).filter(c => c !== null && c !== undefined && c !== false));
  return element;
}

/** A table with a caption, header cells and rows of cells (strings, numbers or nodes). */
export function table(caption, headers, rows, attributes = {}) {
  return h('table', attributes,
    h('caption', {}, caption),
    h('thead', {}, h('tr', {}, headers.map(text => h('th', { scope: 'col' }, text)))),
    h('tbody', {}, rows.map(cells => h('tr', {}, cells.map(c => h('td', {}, c instanceof Node ? c : format(c)))))));
}

/** A number for reading: 4 significant digits, '—' for none. The exact value stays in data-value. */
export function format(value) {
  if (value === null || value === undefined) {
    return '—';
  }
  if (typeof value !== 'number') {
    return String(value);
  }
  if (!Number.isFinite(value)) {
    return String(value);
  }
  const magnitude = Math.abs(value);
  return magnitude !== 0 && (magnitude < 1e-3 || magnitude >= 1e6) ? value.toExponential(3) : Number(value.toPrecision(4)).toString();
}

/** A number cell that keeps its exact value for tests and copy-paste. */
export function number(value) {
  return h('span', { class: 'num', 'data-value': value === null || value === undefined ? '' : String(value) }, format(value));
}

/** Flags in words, each with a symbol, so colour is never the only signal. */
export const FLAG_WORDS = {
  model_mismatch: 'the model does not fit this trace (residuals too large for the stated noise, or correlated in time)',
  ill_conditioned: 'some state direction is barely observable; its estimate is unreliable',
  unobservable: 'some state direction cannot be seen from these outputs at all',
  few_samples: 'too few samples for a trustworthy fit',
  offset_confounded: 'a sensor offset cannot be told apart from the state',
};

export function flagList(flags) {
  if (!flags || flags.length === 0) {
    return h('span', { class: 'flag flag-none', 'data-flags': '' }, '✓ no flags');
  }
  return h('ul', { class: 'flags', 'data-flags': flags.join(',') },
    flags.map(f => h('li', { class: 'flag flag-raised' }, h('strong', {}, '⚠ ' + f.replaceAll('_', ' ')), ': ',
      FLAG_WORDS[f] ?? 'see the API documentation')));
}

/** A count with its noun: "1 unit", "3 units" (nouns whose plural adds an s unless given). */
export function counted(count, singular, plural = singular + 's') {
  return `${count} ${count === 1 ? singular : plural}`;
}

export function link(href, text) {
  return h('a', { href }, text);
}
