// Window planning: how the predicted standard error of a state falls with the window length, per
// set of sensors, against a target, and the shortest window that meets it. Defaults come from the
// model document; the numbers from POST /v1/models/{family}/versions/{version}/plans.
import { api } from '../api.js';
import { explain, say } from '../app.js';
import { counted, format, h, link, number, table } from '../dom.js';
import { drawPlots, logLinePlot } from '../plot.js';

const HOUR = 3600;
const MAX_WINDOWS = 100;
/** Defaults: windows of 0.5 h to 12 h every 0.5 h, a sample a minute, SE 0.5 in the state's unit. */
const DEFAULTS = { fromHours: 0.5, toHours: 12, stepHours: 0.5, samplePeriod: 60, target: 0.5 };

export async function render(root, { family, version }) {
  if (!family) {
    await renderChooser(root);
    return;
  }
  const model = await api.version(family, version);
  const spec = model.document;
  const results = h('section', { class: 'plan-results', 'aria-live': 'polite' });
  const form = planForm(spec, body => predict(results, family, version, spec, body));
  root.append(
    h('h1', {}, 'Window planning ', h('span', { class: 'subject' }, `${family} v${version}`),
      h('small', {}, `${counted(spec.states.length, 'state')}, ${counted(spec.outputs.length, 'output')}`)),
    h('p', { class: 'lede' }, 'How long must a recording be? The standard error of a state for each window length and ',
      'set of sensors, predicted from the model alone, before any data exist.'),
    h('div', { class: 'plan-layout' }, form, results));
  let first;
  try {
    first = requestFrom(form, spec);
  } catch (error) {
    // A model with no noise σ on an output: the form asks for it before anything can be predicted.
    results.append(h('p', { class: 'lede', 'data-field': 'formNeeded' }, `Complete the form, then predict: ${error.message}.`));
    return;
  }
  await fillResults(results, family, version, spec, first);
}

export function mounted(main) {
  drawPlots(main);
}

async function renderChooser(root) {
  const families = (await api.families()).items;
  root.append(h('h1', {}, 'Window planning'),
    h('p', { class: 'lede' }, 'Choose a model version to plan recording windows for.'));
  if (families.length === 0) {
    root.append(h('p', {}, 'No model family is published yet; publish one on the ', link('#/models', 'Models'), ' page.'));
  }
  for (const f of families) {
    const versions = (await api.versions(f.name)).items;
    root.append(h('section', { class: 'panel', 'data-family': f.name }, table(`${f.name}: ${f.description ?? ''}`,
      ['version', 'status', 'states · outputs', 'plan'],
      versions.map(v => [String(v.version), v.status === 'active' ? '● active' : '○ retired', `${v.states} · ${v.outputs}`,
        link(`#/plan/${encodeURIComponent(f.name)}/${v.version}`, `plan windows for ${f.name} v${v.version}`)]),
      { class: 'choose' })));
  }
}

/** Sensor sets offered: each output alone, then all together. */
function sensorSets(outputs) {
  const names = outputs.map(o => o.name);
  const singles = names.map(n => [n]);
  return names.length > 1 ? [...singles, names] : singles;
}

function field(id, labelText, input, unit) {
  return h('div', { class: 'field' }, h('label', { for: id }, labelText), input, unit ? h('span', { class: 'unit' }, unit) : null);
}

function numberInput(id, value, min = 'any') {
  return h('input', { id, name: id, type: 'number', step: 'any', min, value: value ?? '', required: true, inputmode: 'decimal' });
}

function planForm(spec, onSubmit) {
  const discrete = spec.timeDomain === 'discrete';
  const period = discrete ? spec.samplePeriod : DEFAULTS.samplePeriod;
  const last = spec.states[spec.states.length - 1];
  const stateSelect = h('select', { id: 'plan-state', name: 'state' },
    spec.states.map(s => h('option', { value: s.name, selected: s === last }, s.name)));
  const targetUnit = h('span', { class: 'unit' }, last.unit);
  stateSelect.addEventListener('change', () => {
    targetUnit.textContent = spec.states.find(s => s.name === stateSelect.value).unit;
  });
  const form = h('form', { class: 'plan-form panel', novalidate: true },
    h('fieldset', {}, h('legend', {}, 'Target'),
      h('div', { class: 'field' }, h('label', { for: 'plan-state' }, 'state'), stateSelect),
      h('div', { class: 'field' }, h('label', { for: 'plan-target' }, 'standard error at most'),
        numberInput('plan-target', DEFAULTS.target, '0'), targetUnit)),
    h('fieldset', {}, h('legend', {}, 'Windows'),
      field('plan-from', 'shortest', numberInput('plan-from', DEFAULTS.fromHours, '0'), 'h'),
      field('plan-to', 'longest', numberInput('plan-to', DEFAULTS.toHours, '0'), 'h'),
      field('plan-step', 'every', numberInput('plan-step', DEFAULTS.stepHours, '0'), 'h'),
      field('plan-period', 'one sample every', Object.assign(numberInput('plan-period', period, '0'), { readOnly: discrete }),
        discrete ? 's (the model’s step)' : 's')),
    h('fieldset', {}, h('legend', {}, 'Sensor sets'),
      sensorSets(spec.outputs).map((set, i) => h('label', { class: 'check' },
        h('input', { type: 'checkbox', name: 'set', value: JSON.stringify(set), checked: true, id: `plan-set-${i}` }),
        ' ', setLabel(set)))),
    h('fieldset', {}, h('legend', {}, 'Sensor noise σ'),
      spec.outputs.map((o, i) => field(`plan-sigma-${i}`, o.name, numberInput(`plan-sigma-${i}`, o.noiseSigma, '0'), o.unit))),
    h('div', { class: 'actions' }, h('button', { type: 'submit' }, 'Predict standard errors')));
  form.addEventListener('submit', event => {
    event.preventDefault();
    try {
      onSubmit(requestFrom(form, spec));
    } catch (error) {
      say(error.message);
    }
  });
  return form;
}

function setLabel(outputs) {
  return outputs.join(' + ');
}

function read(form, id, what) {
  const value = Number(form.querySelector('#' + id).value);
  if (!(value > 0)) {
    throw new Error(`${what}: got "${form.querySelector('#' + id).value}", expected a number above 0`);
  }
  return value;
}

/** The plans request the form describes; throws an Error naming the field when it cannot. */
function requestFrom(form, spec) {
  const from = read(form, 'plan-from', 'shortest window');
  const to = read(form, 'plan-to', 'longest window');
  const step = read(form, 'plan-step', 'window step');
  const horizons = [];
  for (let k = 0; from + k * step <= to * (1 + 1e-12); k++) {
    horizons.push(Math.round((from + k * step) * HOUR * 1000) / 1000);
  }
  if (horizons.length > MAX_WINDOWS) {
    throw new Error(`windows: ${horizons.length} candidates from ${from} h to ${to} h every ${step} h, at most ${MAX_WINDOWS}; take a larger step`);
  }
  const outputSubsets = [...form.querySelectorAll('input[name=set]:checked')].map(c => JSON.parse(c.value));
  if (outputSubsets.length === 0) {
    throw new Error('sensor sets: choose at least one');
  }
  const noiseSigma = Object.fromEntries(spec.outputs.map((o, i) => [o.name, read(form, `plan-sigma-${i}`, `σ of ${o.name}`)]));
  const state = form.querySelector('#plan-state').value;
  return {
    samplePeriod: read(form, 'plan-period', 'sample period'),
    horizons,
    outputSubsets,
    noiseSigma,
    targetStdErrors: { [state]: read(form, 'plan-target', 'target standard error') },
  };
}

async function predict(results, family, version, spec, body) {
  say(null);
  try {
    await fillResults(results, family, version, spec, body);
    drawPlots(results);
  } catch (error) {
    results.dataset.state = 'ready';
    explain(error);
  }
}

async function fillResults(results, family, version, spec, body) {
  results.dataset.state = 'loading';
  const plan = await api.plan(family, version, body);
  const [state, target] = Object.entries(body.targetStdErrors)[0];
  const unit = spec.states.find(s => s.name === state).unit;
  results.replaceChildren(
    h('div', { class: 'panel' }, sePlot(plan, state, target, unit),
      h('p', { class: 'note' }, plan.note, ` One sample every ${format(plan.samplePeriod)} s; the dotted lines mark the shortest window meeting the target.`)),
    h('div', { class: 'panel' }, shortestTable(plan, state, unit)));
  results.dataset.request = JSON.stringify(body);
  results.dataset.state = 'ready';
}

/** "4 h", "30 min", "1.5 h" for a window in seconds. */
function hours(seconds) {
  return seconds < HOUR ? `${format(seconds / 60)} min` : `${format(seconds / HOUR)} h`;
}

function sePlot(plan, state, target, unit) {
  const x = plan.subsets[0].horizons.map(p => p.horizon);
  const meeting = new Map();
  for (const s of plan.subsets.filter(s => s.shortestHorizonMeetingTargets != null)) {
    const at = s.shortestHorizonMeetingTargets;
    meeting.set(at, [...(meeting.get(at) ?? []), setLabel(s.outputs)]);
  }
  return logLinePlot({
    title: `Standard error of ${state} against window length, per sensor set (log scale)`,
    x,
    lines: plan.subsets.map(s => ({ label: setLabel(s.outputs), values: s.horizons.map(p => p.standardErrors[state] ?? null) })),
    xLabel: 'window length (h)', yLabel: `SE of ${state} (${unit})`,
    xValues: v => (v === null ? '' : format(v / HOUR)),
    xSteps: [0.25, 0.5, 1, 2, 3, 6, 12, 24, 48, 96, 168, 336].map(k => k * HOUR),
    rule: { value: target, label: `target: ${format(target)} ${unit}` },
    marks: [...meeting].sort((a, b) => a[0] - b[0]).map(([at, sets]) => ({ x: at, label: `${hours(at)}: ${sets.join('; ')}` })),
  });
}

const VERDICT_WORDS = {
  meets_targets: '✓ meets the target',
  targets_not_met: '⚠ no window meets the target',
  no_targets: 'no target given',
  unobservable_with_these_outputs: '⚠ these sensors cannot see the state',
  rank_deficient_at_every_horizon: '⚠ no window determines the state',
};

function shortestTable(plan, state, unit) {
  const rows = plan.subsets.map(s => {
    const at = s.shortestHorizonMeetingTargets;
    const there = at == null ? null : s.horizons.find(p => p.horizon === at);
    return [
      h('strong', {}, setLabel(s.outputs)),
      h('span', {}, Object.entries(s.noiseSigma).map(([o, sigma], i) => [i ? ', ' : '', number(sigma)])),
      h('span', { class: s.verdict === 'meets_targets' ? 'flag-none' : 'flag-raised' }, VERDICT_WORDS[s.verdict] ?? s.verdict),
      at == null ? h('span', { class: 'num', 'data-value': '' }, 'none')
        : h('span', { class: 'num', 'data-value': String(at) }, `${hours(at)} (${format(at)} s)`),
      there ? number(there.standardErrors[state] ?? null) : number(null),
      h('span', { class: 'muted' }, s.reason),
    ];
  });
  const t = table(`Shortest window per sensor set for ${state} within ${format(plan.targetStdErrors[state])} ${unit}`,
    ['sensors', 'noise σ', 'verdict', 'shortest window', `SE of ${state} there (${unit})`, 'why'], rows, { class: 'shortest' });
  t.querySelectorAll('tbody tr').forEach((tr, i) => {
    tr.dataset.sensors = setLabel(plan.subsets[i].outputs);
    tr.querySelectorAll('td')[3].dataset.field = 'shortest';
    tr.querySelectorAll('td')[4].dataset.field = 'se';
  });
  return t;
}
