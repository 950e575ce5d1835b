// Plots through uPlot (served from its WebJar). Every plot also keeps the numbers it draws in a
// data-plot attribute (JSON: x and each series by label), so a browser test compares them with
// the API's answer instead of reading pixels.
import uPlot from '/webjars/uplot/1.6.30/dist/uPlot.esm.js';
import { h } from './dom.js';

const PALETTE = ['--ink-1', '--ink-2', '--ink-3', '--ink-4'];
const DASHES = [[], [6, 4], [2, 3], [10, 3, 2, 3]];

function colour(index) {
  return getComputedStyle(document.documentElement).getPropertyValue(PALETTE[index % PALETTE.length]).trim() || '#333';
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

import { format } from './dom.js';

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
    axes: [{ label: xLabel, values: (u, splits) => splits.map(v => (v === null ? '' : format(v))) },
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
  const holder = h('figure', { class: 'plot', 'data-plot': JSON.stringify(plotted) }, h('figcaption', {}, title));
  holder.plot = () => new uPlot({
    width: fittedWidth(holder), height, series,
    scales: { x: { time: false }, y: { distr: 3 } },
    axes: [{ label: xLabel, incrs: xSteps, values: (u, splits) => splits.map(xValues) },
      { label: yLabel, size: 60, values: (u, splits) => splits.map(v => (v === null ? '' : format(v))) }],
    legend: { live: false },
    hooks: { draw: [u => drawMarks(u, marks)] },
  }, data, holder);
  return holder;
}
