// Plots through uPlot (served from its WebJar). Every plot also keeps the numbers it draws in a
// data-plot attribute (JSON: x and each series by label), so a browser test compares them with
// the API's answer instead of reading pixels.
import uPlot from '/webjars/uplot/1.6.30/dist/uPlot.esm.js';
import { format, h } from './dom.js';

const PALETTE = ['--ink-1', '--ink-2', '--ink-3', '--ink-4'];
const DASHES = [[], [6, 4], [2, 3], [10, 3, 2, 3]];

function colour(index) {
  return getComputedStyle(document.documentElement).getPropertyValue(PALETTE[index % PALETTE.length]).trim() || '#333';
}

/** The plots' panel colour: the inside of a ring. */
function background() {
  return getComputedStyle(document.documentElement).getPropertyValue('--panel').trim() || '#fff';
}

/**
 * A line plot. lines: [{label, values, band: {lower, upper}?}]; x: numbers (seconds or epoch
 * seconds when time is true). Lines differ in dash pattern as well as colour; a band is drawn as a
 * shaded area between its lower and upper series, labelled in the legend.
 */
export function linePlot({ title, x, lines, xLabel, yLabel, time = false, points = false, width, height = 260 }) {
  const data = [x];
  const series = [{ label: xLabel }];
  const bands = [];
  lines.forEach((line, i) => {
    const stroke = colour(i);
    if (line.band) {
      const lowerIndex = data.length;
      data.push(line.band.lower, line.band.upper);
      series.push({ label: line.band.label ?? line.label + ' band (lower)', stroke, width: 0, points: { show: false } });
      series.push({ label: line.band.label ? line.band.label + ' (upper)' : line.label + ' band (upper)', stroke, width: 0,
        points: { show: false } });
      bands.push({ series: [lowerIndex + 1, lowerIndex], fill: stroke + '33' });
    }
    data.push(line.values);
    series.push({ label: line.label, stroke, width: points ? 0 : 1.5, dash: DASHES[i % DASHES.length],
      points: { show: points, size: 4, fill: stroke } });
  });
  const holder = h('figure', { class: 'plot', 'data-plot': JSON.stringify(record(x, lines)) },
    h('figcaption', {}, title));
  const options = {
    width: width ?? 640, height, series, bands,
    scales: { x: { time } },
    axes: [{ label: xLabel }, { label: yLabel }],
    legend: { live: false },
  };
  holder.plot = () => new uPlot(options, data, holder);
  return holder;
}

/** A histogram: counts per bin, bars over bin centres; the bins are recorded too. */
export function histogram({ title, edges, counts, xLabel, yLabel = 'units' }) {
  const centres = counts.map((_, i) => (edges[i] + edges[i + 1]) / 2);
  const holder = h('figure', { class: 'plot', 'data-plot': JSON.stringify({ edges, counts }) }, h('figcaption', {}, title));
  const options = {
    width: 640, height: 220,
    series: [{ label: xLabel }, { label: yLabel, stroke: colour(0), fill: colour(0) + '66',
      paths: uPlot.paths.bars({ size: [0.9, 60] }), points: { show: false } }],
    axes: [{ label: xLabel }, { label: yLabel }],
    scales: { x: { time: false } },
    legend: { live: false },
  };
  holder.plot = () => new uPlot(options, [centres, counts], holder);
  return holder;
}

function record(x, lines) {
  const out = { x, series: {} };
  for (const line of lines) {
    out.series[line.label] = line.values;
    if (line.band) {
      out.series[line.label + ' lower'] = line.band.lower;
      out.series[line.label + ' upper'] = line.band.upper;
    }
  }
  return out;
}

/** Draws every plot inside root once it is in the document (uPlot measures its container). */
export function drawPlots(root) {
  for (const figure of root.querySelectorAll('figure.plot')) {
    if (figure.plot && !figure.dataset.drawn) {
      figure.dataset.drawn = 'true';
      figure.plot();
    }
  }
}

/** A plot sizes itself when drawn, so after the window's width changes each is drawn again at its container's. */
let lastWidth = window.innerWidth;
let redraw = null;
window.addEventListener('resize', () => {
  clearTimeout(redraw);
  redraw = setTimeout(() => {
    if (window.innerWidth === lastWidth) {
      return;
    }
    lastWidth = window.innerWidth;
    for (const figure of document.querySelectorAll('figure.plot[data-drawn]')) {
      figure.querySelector('.uplot')?.remove();
      delete figure.dataset.drawn;
    }
    drawPlots(document);
  }, 200);
});


// Log-scaled plots (fleet and planning pages): χ²/dof and standard errors span decades, so their
// axes are logarithmic. Both keep the drawn numbers in data-plot like the plots above, size
// themselves to their container when drawn, and may carry vertical marks (e.g. χ²/dof = 1).

/** The width a plot gets: its figure's, within sensible limits. */
function fittedWidth(figure) {
  return Math.max(300, Math.min(960, Math.floor(figure.clientWidth || 640)));
}

/** Draws vertical dotted marks [{x, label}] across the plot area, labelled at the top. */
function drawMarks(u, marks) {
  const ctx = u.ctx;
  const { top, height } = u.bbox;
  ctx.save();
  ctx.strokeStyle = ctx.fillStyle = getComputedStyle(document.documentElement).getPropertyValue('--muted').trim() || '#555';
  ctx.lineWidth = devicePixelRatio;
  ctx.setLineDash([2 * devicePixelRatio, 3 * devicePixelRatio]);
  ctx.font = `${11 * devicePixelRatio}px system-ui, sans-serif`;
  ctx.textBaseline = 'top';
  ctx.textAlign = 'left';
  marks.forEach((mark, i) => {
    const x = Math.round(u.valToPos(mark.x, 'x', true));
    if (x < u.bbox.left || x > u.bbox.left + u.bbox.width) {
      return;
    }
    ctx.beginPath();
    ctx.moveTo(x, top);
    ctx.lineTo(x, top + height);
    ctx.stroke();
    ctx.fillText(mark.label, x + 4 * devicePixelRatio, top + (2 + 14 * i) * devicePixelRatio);
  });
  ctx.restore();
}

/** Whole-number ticks for counts. */
const COUNT_STEPS = [1, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 2000, 5000, 10000, 20000, 50000, 100000];

/**
 * A histogram over log-spaced bins: bars between consecutive edges on a logarithmic x axis, so
 * equal ratios take equal widths. data-plot records {edges, counts}; marks: [{x, label}].
 */
export function logHistogram({ title, edges, counts, xLabel, yLabel = 'units', marks = [], height = 300 }) {
  const centres = counts.map((_, i) => Math.sqrt(edges[i] * edges[i + 1]));
  const holder = h('figure', { class: 'plot', 'data-plot': JSON.stringify({ edges, counts }) }, h('figcaption', {}, title));
  const highest = Math.max(1, ...counts);
  holder.plot = () => new uPlot({
    width: fittedWidth(holder), height,
    series: [{ label: xLabel, value: (u, v) => format(v) }, { label: yLabel, stroke: colour(0), fill: colour(0) + '88',
      paths: uPlot.paths.bars({ size: [0.92, 80], align: 0 }), points: { show: false } }],
    scales: { x: { time: false, distr: 3, range: [edges[0], edges[edges.length - 1]] },
      y: { range: [0, Math.ceil(highest * 1.15)] } },
    axes: [{ label: xLabel, values: (u, splits) => splits.map(v => (v === null ? '' : format(v))),
      // a log axis ticks at powers of ten only: within one decade (one bin, say) the outer edges are the ticks
      ...(edges[edges.length - 1] / edges[0] < 10 ? { splits: () => [edges[0], edges[edges.length - 1]] } : {}) },
      { label: yLabel, incrs: COUNT_STEPS, values: (u, splits) => splits.map(String) }],
    legend: { show: false },
    cursor: { show: false },
    hooks: { draw: [u => drawMarks(u, marks)] },
  }, [centres, counts.map(c => c || null)], holder);
  return holder;
}

/**
 * Lines on a logarithmic y axis, e.g. standard error against window length. lines: [{label,
 * values}] differ in dash as well as colour; rule: {value, label} draws a horizontal reference
 * line (recorded in data-plot as rule); xValues formats the x ticks, xSteps (optional) are the tick spacings
 * allowed; marks as in logHistogram.
 */
export function logLinePlot({ title, x, lines, xLabel, yLabel, rule, xValues = v => format(v), xSteps, marks = [],
  height = 320 }) {
  const data = [x, ...lines.map(line => line.values)];
  // Earlier lines are drawn wider, so a line that coincides with a later one still shows around its dashes.
  const series = [{ label: xLabel, value: (u, v) => (v === null ? '' : xValues(v)) }, ...lines.map((line, i) => ({
    label: line.label, stroke: colour(i), width: 1.5 + 1.5 * (lines.length - 1 - i), dash: DASHES[i % DASHES.length],
    points: { show: true, size: 5, fill: colour(i) } }))];
  if (rule) {
    data.push(x.map(() => rule.value));
    series.push({ label: rule.label, stroke: getComputedStyle(document.documentElement).getPropertyValue('--text').trim(),
      width: 1.5, dash: [14, 4, 2, 4], points: { show: false } });
  }
  const plotted = { ...record(x, lines), ...(rule ? { rule } : {}) };
  // The legend draws each line's own dash, so sets differ by pattern as well as colour.
  const entries = lines.map((line, i) => ({ label: line.label, kind: 'line', index: i, dash: DASHES[i % DASHES.length] }));
  if (rule) {
    entries.push({ label: rule.label, kind: 'line', index: 0, dash: [14, 4, 2, 4], ink: 'var(--text)' });
  }
  const holder = h('figure', { class: 'plot', 'data-plot': JSON.stringify(plotted) }, h('figcaption', {}, title),
    legendList(entries));
  holder.plot = () => new uPlot({
    width: fittedWidth(holder), height, series,
    scales: { x: { time: false }, y: { distr: 3 } },
    axes: [{ label: xLabel, incrs: xSteps, values: (u, splits) => splits.map(xValues) },
      { label: yLabel, size: 60, values: (u, splits) => splits.map(v => (v === null ? '' : format(v))) }],
    legend: { show: false },
    hooks: { draw: [u => drawMarks(u, marks)] },
  }, data, holder);
  return holder;
}

// ---- unit page: time plots in UTC with per-line styles, and an interval chart (own SVG) ----

/** Pixels right of a time plot, so a date under a tick at the right edge is not cut. */
const RIGHT_ROOM_FOR_A_DATE = 40;

/** Recording times are UTC: time axes show UTC, whatever the browser's zone. */
const recordingTimeZone = seconds => uPlot.tzDate(new Date(seconds * 1e3), 'Etc/UTC');

/** Tick labels in UTC, 24-hour: the time, with the date under the first tick of each day. */
function recordingTimeTicks(u, splits, axis, space, step) {
  const day = s => new Date(s * 1e3).toISOString().slice(0, 10);
  return splits.map((s, i) => {
    if (step >= 86400) {
      return day(s);
    }
    const time = new Date(s * 1e3).toISOString().slice(11, step < 60 ? 19 : 16);
    return i > 0 && day(splits[i - 1]) === day(s) ? time : time + '\n' + day(s);
  });
}

/** A small legend in HTML: a symbol per entry (dash pattern, dot or shaded swatch) and its words. */
function legendList(entries) {
  return h('ul', { class: 'plot-legend' }, entries.map(({ label, kind, index, dash: pattern, ink: own }) => {
    const ink = own ?? `var(${PALETTE[index % PALETTE.length]})`;
    const dash = pattern.join(' ');
    const mark = kind === 'whisker'
      ? `<path d="M12 2V14M9 2H15M9 14H15" stroke="${ink}" stroke-width="1.5"/><circle cx="12" cy="8" r="3" fill="${ink}"/>`
      : kind === 'band'
      ? `<rect x="1" y="3" width="22" height="10" fill="${ink}" opacity="0.22"/>`
      : kind === 'points' ? `<circle cx="12" cy="8" r="3" fill="${ink}"/>`
      : kind === 'rings' ? `<circle cx="12" cy="8" r="3" fill="none" stroke="${ink}" stroke-width="1.5"/>`
        : `<line x1="1" y1="8" x2="23" y2="8" stroke="${ink}" stroke-width="2" stroke-dasharray="${dash}"/>`;
    const symbol = h('span', { class: 'swatch', 'aria-hidden': 'true' });
    symbol.innerHTML = `<svg width="24" height="16" viewBox="0 0 24 16">${mark}</svg>`;
    return h('li', {}, symbol, label);
  }));
}

/**
 * A plot over recording time (x in epoch seconds, axis in UTC) that fits its container's width.
 * lines: [{label, values, style: 'line' | 'points', band: {lower, upper, label}?, ink?, dash?,
 * whiskers?, hollow?}] (hollow: points drawn as rings) (whiskers: the band drawn as an interval bar at each point instead of an area). data-plot
 * holds x and every drawn series by label (a band as "label lower" / "label upper"), as linePlot's.
 */
export function timePlot({ title, note, x, lines, yLabel, height = 220, padX = false }) {
  const data = [x];
  const series = [{}];
  const bands = [];
  const entries = [];
  const whiskers = [];
  lines.forEach((line, i) => {
    const index = line.ink ?? i;
    const stroke = colour(index);
    if (line.band) {
      data.push(line.band.lower, line.band.upper);
      series.push({ stroke: 'transparent', points: { show: false } }, { stroke: 'transparent', points: { show: false } });
      if (line.whiskers) {
        whiskers.push({ lower: data.length - 2, upper: data.length - 1, stroke });
      } else {
        bands.push({ series: [data.length - 1, data.length - 2], fill: stroke + '38' });
      }
      entries.push({ label: line.band.label, kind: line.whiskers ? 'whisker' : 'band', index, dash: [] });
    }
    data.push(line.values);
    const dots = line.style === 'points';
    const dash = dots ? [] : line.dash ?? DASHES[index % DASHES.length];
    series.push({ label: line.label, stroke, width: dots ? 0 : 1.5, dash,
      paths: dots ? () => null : undefined, points: { show: dots, size: line.whiskers ? 7 : 3.5, width: line.hollow ? 1.5 : 0,
        fill: line.hollow ? background() : stroke } });
    entries.push({ label: line.label, kind: dots ? (line.hollow ? 'rings' : 'points') : 'line', index, dash });
  });
  const holder = h('figure', { class: 'plot time-plot', 'data-plot': JSON.stringify(record(x, lines)) },
    h('figcaption', {}, h('span', { class: 'plot-title' }, title), note ? h('span', { class: 'plot-note' }, note) : null),
    legendList(entries));
  holder.plot = () => {
    const plot = new uPlot({
      width: Math.max(280, holder.clientWidth - 4), height, series, bands, tzDate: recordingTimeZone,
      // room on the right for half of a date label ("2026-11-30") centred on the last tick
      padding: [null, RIGHT_ROOM_FOR_A_DATE, null, null],
      scales: { x: { time: true } },
      // space: pixels a tick needs, room for "18:29:10" when seconds are shown (a window of minutes)
      axes: [{ label: 'recording time (UTC)', labelSize: 22, values: recordingTimeTicks, size: 48, space: 72 },
        { label: yLabel, size: 56, labelSize: 22 }],
      legend: { show: false }, cursor: { drag: { x: true, y: false } },
      hooks: { draw: [u => whiskers.forEach(w => drawWhiskers(u, w))] },
    }, data, holder);
    if (padX || x.length === 1) {
      // room so edge points are not cut; a day around a single time instead of uPlot's years
      const pad = x.length > 1 ? (x[x.length - 1] - x[0]) * 0.04 : 43200;
      plot.setScale('x', { min: x[0] - pad, max: x[x.length - 1] + pad });
    }
    return plot;
  };
  return holder;
}

/** Vertical bars from lower to upper at each x, with caps: an interval per point. */
function drawWhiskers(u, { lower, upper, stroke }) {
  const ctx = u.ctx;
  ctx.save();
  ctx.strokeStyle = stroke;
  ctx.lineWidth = 1.5 * devicePixelRatio;
  ctx.beginPath();
  u.data[0].forEach((t, k) => {
    const [lo, hi] = [u.data[lower][k], u.data[upper][k]];
    if (lo === null || hi === null) {
      return;
    }
    const x = u.valToPos(t, 'x', true);
    const [y0, y1] = [u.valToPos(lo, 'y', true), u.valToPos(hi, 'y', true)];
    const cap = 4 * devicePixelRatio;
    ctx.moveTo(x, y0); ctx.lineTo(x, y1);
    ctx.moveTo(x - cap, y0); ctx.lineTo(x + cap, y0);
    ctx.moveTo(x - cap, y1); ctx.lineTo(x + cap, y1);
  });
  ctx.stroke();
  ctx.restore();
}

/** Round steps for an axis over [low, high]: about `count` ticks at 1, 2 or 5 × 10^k. */
function roundTicks(low, high, count = 6) {
  const raw = (high - low) / count || 1;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map(m => m * power).find(s => s >= raw);
  const out = [];
  for (let t = Math.ceil(low / step) * step; t <= high + step * 1e-9; t += step) {
    out.push(Number(t.toPrecision(12)));
  }
  return out;
}

/**
 * An interval chart drawn in SVG: one row per label, and for each set a marker at its estimate
 * with a bar from lower to upper (sets differ in marker shape as well as colour). sets: [{label,
 * shape: 'dot' | 'diamond', estimate: [], lower: [], upper: []}], one value per label, on one axis
 * (unit). data-plot holds {labels, series: {set label: {estimate, lower, upper}}}.
 */
export function intervalChart({ title, note, labels, sets, unit }) {
  const values = sets.flatMap(s => [...s.lower, ...s.upper, ...s.estimate]).filter(Number.isFinite);
  const span = Math.max(...values) - Math.min(...values) || 1;
  const low = Math.min(...values) - span * 0.04;
  const high = Math.max(...values) + span * 0.04;
  const [left, right, rowHeight, top] = [130, 620, 40, 8];
  const height = top + labels.length * rowHeight + 34;
  const at = v => left + (v - low) / (high - low) * (right - left);
  const parts = [];
  for (const t of roundTicks(low, high)) {
    parts.push(`<line class="grid" x1="${at(t)}" x2="${at(t)}" y1="${top}" y2="${height - 30}"/>`,
      `<text class="tick" x="${at(t)}" y="${height - 16}" text-anchor="middle">${t}</text>`);
  }
  parts.push(`<text class="axis-label" x="${(left + right) / 2}" y="${height - 2}" text-anchor="middle">${escapeSvgText(unit ?? '')}</text>`);
  labels.forEach((label, row) => {
    const middle = top + row * rowHeight + rowHeight / 2;
    parts.push(`<text class="row-label" x="${left - 10}" y="${middle + 4}" text-anchor="end">${escapeSvgText(label)}</text>`);
    sets.forEach((set, k) => {
      const y = middle + (k - (sets.length - 1) / 2) * 12;
      const [e, lo, hi] = [set.estimate[row], set.lower[row], set.upper[row]];
      const ink = `var(${PALETTE[k % PALETTE.length]})`;
      if (Number.isFinite(lo) && Number.isFinite(hi)) {
        parts.push(`<path d="M${at(lo)} ${y}H${at(hi)}M${at(lo)} ${y - 4}V${y + 4}M${at(hi)} ${y - 4}V${y + 4}" stroke="${ink}" stroke-width="2" fill="none"/>`);
      }
      if (Number.isFinite(e)) {
        parts.push(intervalMarker(set.shape, at(e), y, ink));
      }
    });
  });
  const svg = `<svg viewBox="0 0 640 ${height}" role="img" aria-label="${escapeSvgText(title)}">${parts.join('')}</svg>`;
  const holder = h('figure', { class: 'plot interval-chart', 'data-plot': JSON.stringify({ labels, series: Object.fromEntries(
    sets.map(s => [s.label, { estimate: s.estimate, lower: s.lower, upper: s.upper }])) }) },
  h('figcaption', {}, h('span', { class: 'plot-title' }, title), note ? h('span', { class: 'plot-note' }, note) : null));
  const drawing = h('div', { class: 'svg-holder' });
  drawing.innerHTML = svg;
  const key = h('ul', { class: 'plot-legend' }, sets.map((s, k) => {
    const symbol = h('span', { class: 'swatch', 'aria-hidden': 'true' });
    symbol.innerHTML = `<svg width="24" height="16" viewBox="0 0 24 16"><path d="M2 8H22M2 4V12M22 4V12" stroke="var(${PALETTE[k % PALETTE.length]})" stroke-width="2" fill="none"/>${intervalMarker(s.shape, 12, 8, `var(${PALETTE[k % PALETTE.length]})`)}</svg>`;
    return h('li', {}, symbol, s.label);
  }));
  holder.append(key, drawing);
  return holder;
}

function intervalMarker(shape, x, y, ink) {
  return shape === 'diamond'
    ? `<path d="M${x} ${y - 5}L${x + 5} ${y}L${x} ${y + 5}L${x - 5} ${y}Z" fill="var(--panel)" stroke="${ink}" stroke-width="2"/>`
    : `<circle cx="${x}" cy="${y}" r="4.5" fill="${ink}"/>`;
}

function escapeSvgText(text) {
  return String(text).replace(/[&<>"]/g, c => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;' })[c]);
}
