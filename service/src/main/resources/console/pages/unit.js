// Unit: one unit's latest estimate (states with 95 % intervals, flags in words, the caution), its
// fit per output channel with residuals, the state trajectory over the window, the history of a
// chosen state over recording time, and earlier estimates. `#/units/{unitId}?estimate={id}` shows
// an earlier estimate instead of the latest.
import { api } from '../api.js';
import { explain } from '../app.js';
import { counted, flagList, format, h, link, number, table } from '../dom.js';
import { drawPlots, intervalChart, timePlot } from '../plot.js';

/** Most points asked of the series route: enough for a plot's pixels, cheap for 10⁶ samples. */
export const MAX_POINTS = 2000;
const HISTORY_ROWS = 25;

export async function render(root, params) {
  const [unitId, query] = params.unitId.split('?');
  const chosen = new URLSearchParams(query ?? '').get('estimate');
  const estimate = chosen ? await api.estimate(chosen) : await api.latest(unitId);
  const [series, model, history] = await Promise.all([
    api.series(estimate.id, MAX_POINTS),
    api.version(estimate.family, estimate.version),
    api.history(unitId, { limit: HISTORY_ROWS }),
  ]);
  const states = estimate.result.states.map(s => s.name);
  const trend = await api.trend(unitId, { state: states[states.length - 1], model: estimate.family });
  root.append(
    heading(unitId, estimate, chosen),
    summary(estimate),
    section('Estimated state', 'states',
      h('div', { class: 'unit-states' }, stateTable(estimate), stateChart(estimate)), mismatchNote(estimate)),
    section('Fit per output channel', 'fit',
      h('p', { class: 'lede' }, sampling(series)),
      h('div', { class: 'unit-channels' }, series.outputs.map(name => channelPanel(name, series, estimate, model))),
      channelTable(estimate)),
    section('State over the window', 'trajectory',
      h('p', { class: 'lede' }, 'Each state from window start to end as the model carries the estimate forward, with its 95 % band. ',
        sampling(series)),
      h('div', { class: 'unit-trajectory' }, series.states.map(name => trajectoryPlot(name, series, estimate)))),
    trendSection(unitId, estimate, states, trend),
    section('Earlier estimates', 'history', historyTable(unitId, history, estimate.id)));
  root.firstChild.dataset.estimate = estimate.id;
  root.querySelector('[data-section="fit"]').dataset.maxPoints = MAX_POINTS;
}

export function mounted(main) {
  drawPlots(main);
  performance.mark('unit-drawn');
}

function section(title, name, ...children) {
  return h('section', { class: 'unit-section', 'data-section': name }, h('h2', {}, title), children);
}

function utcTime(iso) {
  return iso.replace('T', ' ').replace(/(:00)?(\.\d+)?Z$/, ' UTC');
}

function hours(fromIso, toIso) {
  const seconds = (Date.parse(toIso) - Date.parse(fromIso)) / 1000;
  return seconds >= 7200 ? `${format(seconds / 3600)} h` : `${format(seconds / 60)} min`;
}

function heading(unitId, estimate, chosen) {
  return h('header', { class: 'unit-head', 'data-unit': unitId },
    h('h1', {}, 'Unit ', h('span', { class: 'unit-id' }, unitId)),
    h('p', { class: 'unit-window' },
      chosen ? h('strong', {}, 'Earlier estimate. ') : 'Latest estimate. ',
      'Window ', h('time', { datetime: estimate.windowStart, 'data-field': 'windowStart' }, utcTime(estimate.windowStart)),
      ' → ', h('time', { datetime: estimate.windowEnd, 'data-field': 'windowEnd' }, utcTime(estimate.windowEnd)),
      ` (${hours(estimate.windowStart, estimate.windowEnd)}) · model `,
      link(`#/models/${encodeURIComponent(estimate.family)}`, `${estimate.family} v${estimate.version}`),
      chosen ? [' · ', link(`#/units/${encodeURIComponent(estimate.unitId)}`, 'back to the latest')] : null));
}

/** The level of the service's χ² and whiteness tests behind model_mismatch (Bonferroni over channels for the latter). */
const MISMATCH_LEVEL = 0.001;

/** Outputs whose σ neither the trace nor the model gave: the service assumed 1 and scaled by σ̂. */
function assumedSigma(estimate) {
  return estimate.result.residuals.channels.filter(c => c.sigmaSource === 'assumed_one').map(c => c.output);
}

function fitWords(estimate) {
  const r = estimate.result;
  const scale = r.sigmaScale;
  if (scale === undefined) {
    return 'No degrees of freedom: the fit cannot be judged.';
  }
  const assumed = assumedSigma(estimate);
  const size = assumed.length
    ? `No noise σ was given for ${assumed.join(', ')}: it was estimated from the residuals (σ scale ${format(scale)}), so their size cannot be judged, only their pattern.`
    : `The residuals are about ${format(scale)} × the stated sensor noise (near 1 when model and noise fit).`;
  if (!estimate.flags.includes('model_mismatch')) {
    return size;
  }
  const channels = r.residuals.channels;
  const correlated = channels.filter(c => c.ljungBoxP < MISMATCH_LEVEL / channels.length).map(c => c.output);
  const why = [];
  if (!assumed.length && r.residuals.pValue < MISMATCH_LEVEL) {
    why.push('too large for the stated noise');
  }
  if (correlated.length) {
    why.push(`correlated in time on ${correlated.join(', ')} (Ljung–Box test)`);
  }
  return `${size} The model does not explain this trace: its residuals are ${why.length ? why.join(', and ') : 'off'}.`;
}

function summary(estimate) {
  const r = estimate.result;
  const fact = (term, value) => h('div', { class: 'fact' }, h('dt', {}, term), h('dd', {}, value));
  return h('section', { class: 'unit-summary', 'data-section': 'summary' },
    h('div', { class: 'verdict', 'data-flagged': estimate.flags.length ? 'true' : 'false' },
      h('h2', {}, 'Flags'),
      flagList(estimate.flags),
      h('p', {}, fitWords(estimate)),
      h('p', { class: 'estimate-caution', role: 'note', 'data-field': 'caution' },
        h('strong', {}, 'With this estimate: '), estimate.caution)),
    h('dl', { class: 'facts' },
      fact('χ²/dof', field('chiSquarePerDof', estimate.chiSquarePerDof)),
      fact('σ scale', field('sigmaScale', r.sigmaScale)),
      fact('degrees of freedom', field('degreesOfFreedom', r.residuals.degreesOfFreedom)),
      fact('p-value (χ²)', field('pValue', r.residuals.pValue)),
      fact('formulation', r.formulation),
      fact('condition number', field('conditionNumber', r.conditioning.conditionNumber)),
      fact('received', utcTime(estimate.receivedAt)),
      fact('estimate', h('code', { 'data-field': 'id', title: estimate.id }, estimate.id.slice(0, 8) + '…'))));
}

/** A wide table scrolls inside its own box on a narrow screen instead of widening the page. */
function scrolling(t) {
  return h('div', { class: 'table-scroll' }, t);
}

function field(name, value) {
  const span = number(value);
  span.dataset.field = name;
  return span;
}

function interval(lower, upper, prefix = '') {
  return h('span', { class: 'interval' }, '[', field(prefix + 'lower', lower), ', ', field(prefix + 'upper', upper), ']');
}

/** The standard error the intervals use: scaled by σ̂ when some σ was not given, else from the stated σ. */
function intervalError(estimate, s) {
  return assumedSigma(estimate).length ? s.standardErrorScaled : s.standardError;
}

function stateTable(estimate) {
  const end = new Map(estimate.result.windowEnd.states.map(s => [s.name, s]));
  const rows = estimate.result.states.map(s => {
    const e = end.get(s.name);
    return [h('th', { scope: 'row' }, s.name, s.unit ? h('span', { class: 'unit' }, ` ${s.unit}`) : null),
      field('estimate', s.estimate), field('standardError', intervalError(estimate, s)),
      interval(s.lower, s.upper), field('end.estimate', e?.estimate), interval(e?.lower, e?.upper, 'end.')];
  });
  const flagged = estimate.flags.length > 0;
  const caption = (flagged ? '⚠ Flagged: treat these as unreliable. ' : '')
    + 'At window start and at window end, with 95 % intervals'
    + (assumedSigma(estimate).length ? ' (standard errors scaled by the σ scale: some σ was not given)' : '');
  const t = table(caption,
    ['state', 'at start', 'std. error', '95 % interval', 'at end', '95 % interval at end'], rows,
    { class: 'state-table' });
  t.querySelectorAll('tbody tr').forEach((tr, i) => {
    tr.dataset.state = rows[i][0].firstChild.textContent;
    tr.firstChild.replaceWith(rows[i][0]);
  });
  t.dataset.flagged = flagged ? 'true' : 'false';
  return scrolling(t);
}

/**
 * A model_mismatch estimate whose σ was given: its intervals rest on that σ, which the residuals say
 * is too small for this trace; the standard errors scaled by σ̂ say how much wider they could be.
 */
function mismatchNote(estimate) {
  if (!estimate.flags.includes('model_mismatch') || assumedSigma(estimate).length) {
    return null;
  }
  const scaled = estimate.result.states.map(s => [s.name, ' ', field('standardErrorScaled', s.standardErrorScaled)]);
  return h('p', { class: 'mismatch-note', 'data-field': 'mismatchNote' },
    '⚠ The intervals assume the stated noise, which this trace exceeds (σ scale ', number(estimate.result.sigmaScale),
    '). Scaled by it, the standard errors would be: ', scaled.flatMap((x, i) => (i ? [', ', ...x] : x)), '.');
}

function stateChart(estimate) {
  const start = estimate.result.states;
  const end = estimate.result.windowEnd.states;
  const pick = (list, key) => list.map(s => s[key]);
  const groups = Map.groupBy ? Map.groupBy(start, s => s.unit ?? '') : new Map([['', start]]);
  return h('div', { class: 'state-charts' }, [...groups.entries()].map(([unit, members]) => {
    const names = new Set(members.map(s => s.name));
    const startRows = start.filter(s => names.has(s.name));
    const endRows = end.filter(s => names.has(s.name));
    return intervalChart({
      title: 'States with 95 % intervals', note: 'bars span the 95 % interval; one narrower than its marker hides behind it',
      labels: startRows.map(s => s.name), unit,
      sets: [
        { label: 'at window start', shape: 'dot', estimate: pick(startRows, 'estimate'), lower: pick(startRows, 'lower'), upper: pick(startRows, 'upper') },
        { label: 'at window end', shape: 'diamond', estimate: pick(endRows, 'estimate'), lower: pick(endRows, 'lower'), upper: pick(endRows, 'upper') },
      ],
    });
  }));
}

function sampling(series) {
  return series.stride > 1
    ? `Plotted: every ${ordinal(series.stride)} sample and the last, ${counted(series.points, 'point')} (asked for at most ${MAX_POINTS}).`
    : `Plotted: every sample, ${counted(series.points, 'point')}.`;
}

/** 2nd, 3rd, 4th, 11th, 12th, 13th, 21st, 22nd, 23rd, 101st, 111th. */
export function ordinal(n) {
  const lastTwo = n % 100;
  const suffix = lastTwo >= 11 && lastTwo <= 13 ? 'th' : ({ 1: 'st', 2: 'nd', 3: 'rd' })[n % 10] ?? 'th';
  return `${n}${suffix}`;
}

function channelPanel(name, series, estimate, model) {
  const diagnostics = estimate.result.residuals.channels.find(c => c.output === name);
  const assumed = diagnostics?.sigmaSource === 'assumed_one';
  // With σ not given the service weighs by 1 and scales by σ̂: the band is σ̂'s, in the channel's units.
  const sigma = assumed ? diagnostics.sigma * estimate.result.sigmaScale : diagnostics?.sigma;
  const unit = model.document?.outputs?.find(o => o.name === name)?.unit ?? '';
  const fitted = series.fitted[name];
  const source = assumed ? 'estimated from the residuals (no σ given)' : `from the ${diagnostics?.sigmaSource}`;
  const band = Number.isFinite(sigma)
    ? { lower: fitted.map(v => (v === null ? null : v - 2 * sigma)), upper: fitted.map(v => (v === null ? null : v + 2 * sigma)),
      label: `fit ± 2σ (σ = ${format(sigma)} ${unit}, ${source})` }
    : undefined;
  const zero = fitted.map(() => 0);
  return h('div', { class: 'panel channel', 'data-output': name },
    h('h3', {}, name),
    timePlot({ title: `${name}: measured and fitted`, x: series.time, yLabel: unit,
      note: band ? 'shaded: fitted ± 2σ, where about 95 % of measurements fall when the model fits' : 'no noise σ: no band',
      lines: [{ label: 'measured', values: series.measured[name], style: 'points' }, { label: 'fitted', values: fitted, band, ink: 1, dash: [] }] }),
    timePlot({ title: `${name}: residual (measured − fitted)`, x: series.time, yLabel: unit, height: 150,
      note: [band ? 'shaded: ± 2σ around zero' : '', thinnedNote(series, diagnostics, unit)].filter(Boolean).join('; '),
      lines: [{ label: 'residual', values: series.residual[name], style: 'points', ink: 2,
        band: band && { lower: zero.map(() => -2 * sigma), upper: zero.map(() => 2 * sigma), label: '± 2σ' } }] }));
}

/** Where a channel's σ came from, in words. */
const SIGMA_FROM = { trace: 'the trace', model: 'the model', assumed_one: 'none given (1, scaled by σ̂)' };

/** On a thinned series, what the plot cannot show: a spike between plotted samples; the table has the largest. */
function thinnedNote(series, diagnostics, unit) {
  if (series.stride <= 1 || !diagnostics) {
    return '';
  }
  return `⚠ thinned: samples between those plotted are not drawn, and a short spike may fall between them; the`
    + ` largest |residual| of all ${counted(diagnostics.samples, 'sample')} is ${format(diagnostics.maxAbs)} ${unit}`;
}

function channelTable(estimate) {
  const rows = estimate.result.residuals.channels.map(c => [c.output, field('sigma', c.sigma), SIGMA_FROM[c.sigmaSource] ?? c.sigmaSource, field('rms', c.rms),
    field('maxAbs', c.maxAbs), field('rSquared', c.rSquared), field('ljungBoxP', c.ljungBoxP), field('outliers', c.outliers)]);
  const t = table('Residual diagnostics per channel (Ljung–Box p small: residuals correlated; outliers: beyond 4σ)',
    ['output', 'noise σ', 'σ from', 'rms', 'max |residual|', 'R²', 'Ljung–Box p', 'outliers'], rows, { class: 'channel-table' });
  t.querySelectorAll('tbody tr').forEach((tr, i) => { tr.dataset.output = rows[i][0]; });
  return scrolling(t);
}

function trajectoryPlot(name, series, estimate) {
  const band = series.state[name];
  const unit = estimate.result.states.find(s => s.name === name)?.unit ?? '';
  return h('div', { class: 'panel', 'data-state': name },
    timePlot({ title: name, x: series.time, yLabel: unit, height: 190,
      lines: [{ label: name, values: band.estimate, band: { lower: band.lower, upper: band.upper, label: '95 % band' } }] }));
}

function trendPlot(trend) {
  const points = trend.points.filter(p => p.estimate !== undefined);
  const x = points.map(p => Date.parse(p.windowStart) / 1000);
  const dirty = p => p.flags.length > 0;
  const clean = p => !dirty(p);
  const flagged = points.filter(dirty).length;
  const only = (keep, values) => points.map((p, k) => (keep(p) ? values[k] : null));
  const [estimate, lower, upper] = ['estimate', 'lower', 'upper'].map(key => points.map(p => p[key] ?? null));
  const lines = [{ label: trend.state, values: only(clean, estimate), style: 'points', whiskers: true,
    band: { lower: only(clean, lower), upper: only(clean, upper), label: '95 % interval' } }];
  if (flagged) {
    lines.push({ label: `${trend.state}, flagged: unreliable`, values: only(dirty, estimate), style: 'points', hollow: true,
      whiskers: true, ink: 3, band: { lower: only(dirty, lower), upper: only(dirty, upper), label: '95 % interval, flagged' } });
  }
  return timePlot({ title: `${trend.state} at each window start`, x, yLabel: trend.unit ?? '', height: 200, padX: true,
    note: `${points.length} estimate${points.length === 1 ? '' : 's'}, oldest recording first; bars: 95 % intervals`
      + (flagged ? `; ⚠ ${flagged} flagged, drawn as rings: unreliable, not a change of the state` : ''),
    lines });
}

function trendSection(unitId, estimate, states, trend) {
  const select = h('select', { id: 'trend-state', name: 'state' },
    states.map(s => h('option', { value: s, selected: s === trend.state }, s)));
  const holder = h('div', { class: 'trend-plot' }, trendPlot(trend));
  const part = section('History of a state over recording time', 'trend',
    h('p', { class: 'trend-choice' }, h('label', { for: 'trend-state' }, 'State: '), select,
      ` across this unit's estimates with ${estimate.family}`),
    holder);
  part.dataset.trendState = trend.state;
  part.dataset.trend = 'ready';
  select.addEventListener('change', async () => {
    part.dataset.trend = 'loading';
    try {
      const next = await api.trend(unitId, { state: select.value, model: estimate.family });
      holder.replaceChildren(trendPlot(next));
      drawPlots(holder);
      part.dataset.trendState = next.state;
    } catch (error) {
      explain(error);
    } finally {
      part.dataset.trend = 'ready';
    }
  });
  return part;
}

function historyTable(unitId, history, shownId) {
  if (history.items.length === 0) {
    return h('p', {}, 'No estimates yet.');
  }
  const rows = history.items.map(e => [
    e.id === shownId ? h('span', {}, '▶ ', h('code', {}, e.id.slice(0, 8)), ' (shown)')
      : h('a', { href: `#/units/${encodeURIComponent(unitId)}?estimate=${encodeURIComponent(e.id)}`, title: e.id }, h('code', {}, e.id.slice(0, 8))),
    utcTime(e.windowStart), utcTime(e.windowEnd), `v${e.version}`, field('chiSquarePerDof', e.chiSquarePerDof),
    e.flags.length ? '⚠ ' + e.flags.map(f => f.replaceAll('_', ' ')).join(', ') : '✓ none']);
  const t = table(`Newest recording first${history.nextCursor ? ` (the newest ${HISTORY_ROWS})` : ''}`,
    ['estimate', 'window start', 'window end', 'version', 'χ²/dof', 'flags'], rows, { class: 'history-table' });
  t.querySelectorAll('tbody tr').forEach((tr, i) => { tr.dataset.estimate = history.items[i].id; });
  return scrolling(t);
}
