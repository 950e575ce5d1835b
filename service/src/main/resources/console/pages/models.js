// Models: each family's versions with their observability report; publish a version from a model
// document file (admin key).
import { api } from '../api.js';
import { explain, goWithMessage, say } from '../app.js';
import { h, link, number, table } from '../dom.js';

export async function render(root, { family }) {
  const families = (await api.families()).items;
  root.append(h('h1', {}, 'Models'));
  if (families.length === 0) {
    root.append(h('p', {}, 'No model family is published yet: create one below, then publish its first version.'));
  }
  const shown = family ? families.filter(f => f.name === family) : families;
  if (family && shown.length === 0) {
    root.append(h('p', { 'data-field': 'noSuchFamily' }, `No model family is named ${family}. `, link('#/models', 'All families')));
  }
  for (const f of shown) {
    const versions = (await api.versions(f.name)).items;
    root.append(h('section', { class: 'panel', 'data-family': f.name },
      h('h2', {}, f.name), h('p', {}, f.description),
      versionTable(versions),
      h('p', {}, link(`#/fleet/${encodeURIComponent(f.name)}`, `Fleet view of ${f.name}`)),
      publishForm(f.name)));
  }
  if (!family) {
    root.append(familyForm());
  }
}

/** Creates a family (admin key); its versions are then published from its own section. */
function familyForm() {
  const name = h('input', { id: 'family-name', name: 'name', required: true, maxlength: 64, spellcheck: 'false' });
  const description = h('input', { id: 'family-description', name: 'description', maxlength: 2000 });
  const form = h('form', { class: 'panel create-family' },
    h('h2', {}, 'New model family'),
    h('div', { class: 'field' }, h('label', { for: 'family-name' }, 'name'), name),
    h('div', { class: 'field' }, h('label', { for: 'family-description' }, 'description'), description),
    h('button', { type: 'submit' }, 'Create (admin key)'));
  form.addEventListener('submit', async event => {
    event.preventDefault();
    try {
      await api.createFamily(name.value.trim(), description.value.trim());
      goWithMessage(`#/models/${encodeURIComponent(name.value.trim())}`,
        `Created ${name.value.trim()}: publish its first version from a model document below.`);
    } catch (error) {
      explain(error);
    }
  });
  return form;
}

function versionTable(versions) {
  return table('Versions and how observable their states are from the outputs (singular values of the observability matrix)',
    ['version', 'status', 'time', 'states · outputs · inputs', 'observable', 'rank', 'singular values', 'planning'],
    versions.map(v => [
      String(v.version),
      v.status === 'active' ? '● active' : '○ retired',
      v.timeDomain,
      `${v.states} · ${v.outputs} · ${v.inputs}`,
      v.observability.observable ? '✓ yes' : '⚠ no: ' + v.observability.unobservableDirections.length + ' unseen direction(s)',
      `${v.observability.rank} of ${v.observability.states}`,
      h('span', {}, v.observability.singularValues.map((s, i) => [i ? ', ' : '', number(s)])),
      link(`#/plan/${encodeURIComponent(v.family)}/${v.version}`, 'plan a window'),
    ]), { 'data-versions': versions.map(v => v.version).join(',') });
}

function publishForm(family) {
  const file = h('input', { type: 'file', accept: 'application/json,.json', id: `publish-${family}`, name: 'document' });
  const form = h('form', { class: 'publish' },
    h('label', { for: `publish-${family}` }, `Publish a new version of ${family} from a model document (admin key): `),
    file, ' ', h('button', { type: 'submit' }, 'Publish'));
  form.addEventListener('submit', async event => {
    event.preventDefault();
    if (!file.files.length) {
      say('choose a model document file first');
      return;
    }
    try {
      const published = await api.publish(family, await file.files[0].text());
      goWithMessage(`#/models/${encodeURIComponent(family)}`, `Published ${family} version ${published.version}.`);
    } catch (error) {
      explain(error);
    }
  });
  return form;
}
