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
