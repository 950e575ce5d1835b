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
      h('div', { class: 'unit-states' }, stateTable(estimate), stateChart(estimate))),
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

function fitWords(estimate) {
  const scale = estimate.result.sigmaScale;
  if (scale === undefined) {
    return 'No degrees of freedom: the fit cannot be judged.';
  }
  if (estimate.flags.includes('model_mismatch')) {
    return `The residuals are about ${format(scale)} × the stated sensor noise: the model does not explain this trace.`;
  }
  return `The residuals are about ${format(scale)} × the stated sensor noise (near 1 when model and noise fit).`;
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

function stateTable(estimate) {
  const end = new Map(estimate.result.windowEnd.states.map(s => [s.name, s]));
  const rows = estimate.result.states.map(s => {
    const e = end.get(s.name);
    return [h('th', { scope: 'row' }, s.name, s.unit ? h('span', { class: 'unit' }, ` ${s.unit}`) : null),
      field('estimate', s.estimate), field('standardError', s.standardError),
      interval(s.lower, s.upper), field('end.estimate', e?.estimate), interval(e?.lower, e?.upper, 'end.')];
  });
  const t = table('At window start and at window end, with 95 % intervals',
    ['state', 'at start', 'std. error', '95 % interval', 'at end', '95 % interval at end'], rows,
    { class: 'state-table' });
  t.querySelectorAll('tbody tr').forEach((tr, i) => {
    tr.dataset.state = rows[i][0].firstChild.textContent;
    tr.firstChild.replaceWith(rows[i][0]);
  });
  return scrolling(t);
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
  const sigma = diagnostics?.sigma;
  const unit = model.document?.outputs?.find(o => o.name === name)?.unit ?? '';
  const fitted = series.fitted[name];
  const band = Number.isFinite(sigma)
    ? { lower: fitted.map(v => (v === null ? null : v - 2 * sigma)), upper: fitted.map(v => (v === null ? null : v + 2 * sigma)),
      label: `fit ± 2σ (σ = ${format(sigma)} ${unit}, the noise σ used for this channel, from the ${diagnostics.sigmaSource})` }
    : undefined;
  const zero = fitted.map(() => 0);
  return h('div', { class: 'panel channel', 'data-output': name },
    h('h3', {}, name),
    timePlot({ title: `${name}: measured and fitted`, x: series.time, yLabel: unit,
      note: band ? 'shaded: fitted ± 2σ, where about 95 % of measurements fall when the model fits' : 'no noise σ: no band',
      lines: [{ label: 'measured', values: series.measured[name], style: 'points' }, { label: 'fitted', values: fitted, band, ink: 1, dash: [] }] }),
    timePlot({ title: `${name}: residual (measured − fitted)`, x: series.time, yLabel: unit, height: 150,
      note: band ? 'shaded: ± 2σ around zero' : '',
      lines: [{ label: 'residual', values: series.residual[name], style: 'points', ink: 2,
        band: band && { lower: zero.map(() => -2 * sigma), upper: zero.map(() => 2 * sigma), label: '± 2σ' } }] }));
}

function channelTable(estimate) {
  const rows = estimate.result.residuals.channels.map(c => [c.output, field('sigma', c.sigma), c.sigmaSource, field('rms', c.rms),
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
  const figure = timePlot({ title: `${trend.state} at each window start`, x, yLabel: trend.unit ?? '', height: 200, padX: true,
    note: `${points.length} estimate${points.length === 1 ? '' : 's'}, oldest recording first; bars: 95 % intervals`,
    lines: [{ label: trend.state, values: points.map(p => p.estimate), style: 'points', whiskers: true,
      band: { lower: points.map(p => p.lower ?? null), upper: points.map(p => p.upper ?? null), label: '95 % interval' } }] });
  return figure;
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
