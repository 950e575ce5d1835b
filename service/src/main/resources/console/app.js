// The console's shell: a hash router over the pages, the key box, and the one message line.
// Each page module exports render(main, params) and builds its DOM from the public API only.
import { ApiError, key } from './api.js';

const routes = [
  { pattern: /^#\/fleet(?:\/([^/]+))?$/, section: 'fleet', load: () => import('./pages/fleet.js'), names: ['family'] },
  { pattern: /^#\/units\/([^/]+)$/, section: 'fleet', load: () => import('./pages/unit.js'), names: ['unitId'] },
  { pattern: /^#\/regressions(?:\/([^/]+))?$/, section: 'regressions', load: () => import('./pages/regression.js'), names: ['id'] },
  { pattern: /^#\/plan(?:\/([^/]+)\/(\d+))?$/, section: 'plan', load: () => import('./pages/plan.js'), names: ['family', 'version'] },
  { pattern: /^#\/models(?:\/([^/]+))?$/, section: 'models', load: () => import('./pages/models.js'), names: ['family'] },
];

const main = document.getElementById('page');
const message = document.getElementById('message');
let rendering = 0;

/** Shows a message in words (never colour alone); null clears it. */
export function say(text, kind = 'error') {
  message.hidden = !text;
  message.textContent = text ? (kind === 'error' ? 'Problem: ' : '') + text : '';
  message.dataset.kind = kind;
}

/** A message for the line once the next page is routed to (routing clears the line first). */
let nextMessage = null;

/** Goes to {@code hash} (again, if it is the page shown) and shows {@code text} on the new page. */
export function goWithMessage(hash, text, kind = 'info') {
  nextMessage = { text, kind };
  if (location.hash === hash) {
    route();
  } else {
    location.hash = hash;
  }
}

/**
 * After a link followed from the keyboard, focus goes to the new page's heading (as a screen reader
 * user expects a page change to be announced), not back to the top of the document.
 */
function focusHeading(fromKeyboard) {
  const heading = main.querySelector('h1');
  if (fromKeyboard && heading) {
    heading.setAttribute('tabindex', '-1');
    heading.focus();
  }
}

/** True while a route was started by a key press (Enter on a link), read by the route it starts. */
let navigatedByKeyboard = false;
document.addEventListener('keydown', event => { navigatedByKeyboard = event.key === 'Enter'; }, true);
document.addEventListener('pointerdown', () => { navigatedByKeyboard = false; }, true);

/** What a page shows when its data cannot be read. */
export function explain(error) {
  say(error instanceof ApiError ? error.message : 'Unexpected: ' + error.message);
  if (error instanceof ApiError && error.status === 401 && key.get()) {
    document.getElementById('key-state').textContent = 'key refused (this tab)';
  }
}

async function route() {
  const hash = location.hash || '#/fleet';
  const match = routes.map(r => ({ r, m: hash.match(r.pattern) })).find(x => x.m);
  const ticket = ++rendering;
  say(nextMessage?.text ?? null, nextMessage?.kind);
  nextMessage = null;
  document.querySelectorAll('nav a').forEach(a =>
    a.setAttribute('aria-current', match && a.dataset.section === match.r.section ? 'page' : 'false'));
  if (!match) {
    main.replaceChildren(Object.assign(document.createElement('p'), { textContent: 'No such page: ' + hash }));
    return;
  }
  const params = Object.fromEntries(match.r.names.map((n, i) => [n, match.m[i + 1] && decodeURIComponent(match.m[i + 1])]));
  main.dataset.state = 'loading';
  main.setAttribute('aria-busy', 'true');
  try {
    const page = await match.r.load();
    const fresh = document.createElement('div');
    await page.render(fresh, params);
    if (ticket === rendering) {
      main.replaceChildren(...fresh.childNodes);
      page.mounted?.(main, params);
      focusHeading(navigatedByKeyboard);
    }
  } catch (error) {
    if (ticket === rendering) {
      main.replaceChildren();
      explain(error);
    }
  } finally {
    if (ticket === rendering) {
      main.dataset.state = 'ready';
      main.removeAttribute('aria-busy');
    }
  }
}

function showKeyState() {
  document.getElementById('key-state').textContent = key.get() ? 'key in use (this tab)' : 'no key';
}

document.getElementById('key-form').addEventListener('submit', event => {
  event.preventDefault();
  const input = document.getElementById('key-input');
  if (input.value.trim()) {
    key.set(input.value);
    input.value = '';
  }
  showKeyState();
  route();
});
document.getElementById('key-forget').addEventListener('click', () => {
  key.forget();
  showKeyState();
  route();
});
window.addEventListener('hashchange', route);
showKeyState();
route();
