// Fleet: per family and model version, how well the units' newest estimates fit (a χ²/dof
// histogram on log-spaced bins), how many estimates in the window carry each flag and in how many
// units, the worst-fit units and the stale ones. Everything comes from GET /v1/fleet/{family}/summary and /units.
import { api } from '../api.js';
import { explain } from '../app.js';
import { counted, FLAG_WORDS, format, h, link, number, table } from '../dom.js';
import { drawPlots, logHistogram } from '../plot.js';

const WORST_SHOWN = 10;
const PAGE_SIZE = 500;
const FLAG_ORDER = ['model_mismatch', 'few_samples', 'ill_conditioned', 'unobservable', 'offset_confounded'];

export async function render(root, { family }) {
  const families = (await api.families()).items;
  if (families.length === 0) {
    root.append(h('h1', {}, 'Fleet'), h('p', {}, 'No model family is published yet; publish one on the ',
      link('#/models', 'Models'), ' page.'));
    return;
  }
  const name = family ?? families[0].name;
  const summary = await api.fleetSummary(name);
  const chosen = defaultVersion(summary.versions);
  const detail = h('section', { class: 'fleet-version', 'aria-live': 'polite' });
  const about = families.find(f => f.name === name)?.description;
  root.append(...[
    h('h1', {}, 'Fleet ', h('span', { class: 'subject' }, name), about ? h('small', {}, about) : null),
    familyNav(families, name),
    summary.versions.length === 0
      ? h('p', { class: 'lede' }, `No version of ${name} is published yet; publish one on the `,
        link(`#/models/${encodeURIComponent(name)}`, 'Models'), ' page.')
      : overview(summary),
    chosen === null ? null : versionBar(summary.versions, chosen, v => showVersion(detail, name, v)),
    detail].filter(Boolean));
  if (chosen !== null) {
    await fillVersion(detail, name, chosen);
  }
}

export function mounted(main) {
  drawPlots(main);
}

/** The version shown first: the one with most units, the newer on a tie. */
function defaultVersion(versions) {
  if (versions.length === 0) {
    return null;
  }
  return versions.reduce((best, v) => (v.units > best.units || (v.units === best.units && v.version > best.version) ? v : best))
    .version;
}

function familyNav(families, current) {
  if (families.length < 2) {
    return null;
  }
  return h('nav', { class: 'families', 'aria-label': 'Model families' }, 'Family: ', families.map(f =>
    h('a', { href: `#/fleet/${encodeURIComponent(f.name)}`, 'aria-current': f.name === current ? 'page' : 'false' }, f.name)));
}

/** One row per version: its counts and the spread of χ²/dof. */
function overview(summary) {
  const t = table(`Model versions of ${summary.family}: recordings, estimates and fit, as of ${when(summary.asOf)}`,
    ['version', 'status', 'units', 'traces', 'estimates', 'χ²/dof median', 'χ²/dof p95', 'χ²/dof max',
      'units with a flagged estimate'],
    summary.versions.map(v => [
      String(v.version),
      v.status === 'active' ? '● active' : '○ retired',
      number(v.units), number(v.traces), number(v.estimates),
      number(v.chiSquarePerDof.median), number(v.chiSquarePerDof.p95), number(v.chiSquarePerDof.max),
      flagTally(v.flags),
    ]), { class: 'versions' });
  const fields = ['version', 'status', 'units', 'traces', 'estimates', 'chi2-median', 'chi2-p95', 'chi2-max', 'flags'];
  t.querySelectorAll('tbody tr').forEach((tr, i) => {
    tr.dataset.version = summary.versions[i].version;
    tr.querySelectorAll('td').forEach((td, j) => { td.dataset.field = fields[j]; });
  });
  return h('div', { class: 'panel' }, t);
}

/** Flags with the units that have an estimate carrying them, in words with a symbol: "⚠ model mismatch: 3". */
function flagTally(flags) {
  const raised = FLAG_ORDER.filter(f => flags[f].units > 0);
  if (raised.length === 0) {
    return h('span', { class: 'flag-none' }, '✓ none');
  }
  return h('span', { class: 'flag-raised' }, raised.map((f, i) => [i ? '; ' : '', '⚠ ', words(f), ' ', number(flags[f].units)]));
}

/** The heading of the version shown below, with a choice of version when there are several. */
function versionBar(versions, chosen, onPick) {
  const describe = v => `version ${v.version}: ${counted(v.units, 'unit')}, ${counted(v.estimates, 'estimate')} (${v.status})`;
  if (versions.length === 1) {
    return h('h2', { class: 'version-bar' }, describe(versions[0]));
  }
  const select = h('select', { id: 'fleet-version', name: 'version' }, versions.map(v =>
    h('option', { value: v.version, selected: v.version === chosen }, describe(v))));
  select.addEventListener('change', () => onPick(Number(select.value)));
  return h('h2', { class: 'version-bar' }, h('label', { for: 'fleet-version' }, 'Shown below: '), select);
}

async function showVersion(detail, family, version) {
  try {
    await fillVersion(detail, family, version);
    drawPlots(detail);
  } catch (error) {
    explain(error);
  }
}

/** Fills the version's section: histogram, flags, channels, worst-fit and stale units. */
async function fillVersion(detail, family, version) {
  detail.dataset.state = 'loading';
  const [summary, units, worst] = await Promise.all([
    api.fleetSummary(family, { version }),
    allUnits(family, version),
    api.fleetUnits(family, { version, sort: '-chiSquarePerDof', limit: WORST_SHOWN }),
  ]);
  const v = summary.versions[0];
  detail.replaceChildren(...[
    v.estimates === 0 ? h('p', { class: 'lede' }, 'No estimate with this version in the window yet.') : null,
    h('div', { class: 'grid' },
      h('div', { class: 'panel' }, fitHistogram(units)),
      h('div', { class: 'panel' }, flagTable(v.flags), channelTable(v.channelRms))),
    h('div', { class: 'grid' },
      h('div', { class: 'panel' }, worstTable(worst.items)),
      h('div', { class: 'panel' }, staleTable(summary)))].filter(Boolean));
  detail.dataset.version = version;
  detail.dataset.state = 'ready';
}

/** Every unit's newest estimate with this version, page by page along the cursor. */
async function allUnits(family, version) {
  const units = [];
  let cursor;
  do {
    const page = await api.fleetUnits(family, { version, limit: PAGE_SIZE, cursor, sort: 'unitId' });
    units.push(...page.items);
    cursor = page.nextCursor;
  } while (cursor);
  return units;
}

/**
 * Log-spaced bins over the values: k bins per decade (10, 5, 4, 2 or 1, the finest that gives at
 * most 30 bins), edges 10^(j/k) from the one at or below the smallest value to the one above the
 * largest. A bin holds [lower, upper); the last also holds its upper edge.
 */
export function logBins(values) {
  const lo = Math.log10(Math.min(...values));
  const hi = Math.log10(Math.max(...values));
  const perDecade = [10, 5, 4, 2, 1].find(k => Math.ceil(hi * k) - Math.floor(lo * k) <= 30) ?? 1;
  const first = Math.floor(lo * perDecade);
  const last = Math.max(Math.ceil(hi * perDecade), first + 1);
  const edges = [];
  for (let j = first; j <= last; j++) {
    edges.push(10 ** (j / perDecade));
  }
  const counts = edges.slice(1).map(() => 0);
  for (const value of values) {
    const i = edges.findIndex((e, j) => j < counts.length && value < edges[j + 1]);
    counts[i === -1 ? counts.length - 1 : i]++;
  }
  return { edges, counts, perDecade };
}

function fitHistogram(units) {
  const values = units.map(u => u.chiSquarePerDof).filter(v => v !== null && v !== undefined && v > 0);
  const without = units.length - values.length;
  if (values.length === 0) {
    return h('p', {}, 'No unit has a χ²/dof with this version yet, so there is nothing to bin.');
  }
  const { edges, counts, perDecade } = logBins(values);
  return h('div', { class: 'histogram' },
    logHistogram({ title: 'How well each unit fits: χ²/dof of its newest estimate', edges, counts,
      xLabel: 'χ²/dof (log scale)', yLabel: 'units', marks: [{ x: 1, label: '1: fit as good as the noise' }] }),
    h('p', { class: 'note' }, `${counted(values.length, 'unit')} in ${counts.length} log-spaced bins, ${perDecade} per decade `,
      `(each edge ${format(10 ** (1 / perDecade))}× the one before), from ${format(edges[0])} to ${format(edges[edges.length - 1])}; `,
      'a bin holds its lower edge, not its upper one (the last holds both).',
      without ? ` ${without} unit(s) without a χ²/dof (or with 0) are not binned.` : ''));
}

function flagTable(flags) {
  const t = table('Flags on this version’s estimates in the window: every estimate of a unit counts, not only its newest'
    + ' (a unit’s page shows its newest)',
    ['flag', 'what it means', 'units with one', 'estimates', 'which units'],
    FLAG_ORDER.map(f => {
      const flagged = flags[f];
      return [
        h('span', { class: flagged.units ? 'flag-raised' : 'flag-none' }, flagged.units ? '⚠ ' : '✓ ', h('strong', {}, words(f))),
        FLAG_WORDS[f],
        number(flagged.units),
        number(flagged.estimates),
        flagged.units ? unitLinks(flagged.unitIds, flagged.units) : h('span', { class: 'muted' }, 'none'),
      ];
    }), { class: 'flag-table' });
  t.querySelectorAll('tbody tr').forEach((tr, i) => { tr.dataset.flag = FLAG_ORDER[i]; });
  return t;
}

function unitLinks(ids, total) {
  const more = total - ids.length;
  return h('span', { class: 'unit-links' }, ids.map((id, i) => [i ? ', ' : '', unitLink(id)]),
    more > 0 ? ` and ${more} more` : '');
}

function unitLink(id) {
  return h('a', { href: `#/units/${encodeURIComponent(id)}`, class: 'unit' }, id);
}

function channelTable(channelRms) {
  return table('Residual RMS per output channel (in the output’s unit)', ['output', 'median', 'p95', 'largest'],
    Object.entries(channelRms).map(([output, d]) => [output, number(d.median), number(d.p95), number(d.max)]));
}

function worstTable(units) {
  if (units.length === 0) {
    return h('p', {}, 'No unit has an estimate with this version yet.');
  }
  const t = table(units.length === 1 ? 'Worst fit first: the one unit, with its χ²/dof'
    : `Worst fit first: the ${units.length} units with the largest χ²/dof`,
    ['#', 'unit', 'χ²/dof', 'flags', 'newest recording'],
    units.map((u, i) => [String(i + 1), unitLink(u.unitId), number(u.chiSquarePerDof ?? null), shortFlags(u.flags),
      when(u.windowStart)]), { class: 'worst' });
  t.querySelectorAll('tbody tr').forEach((tr, i) => { tr.dataset.unit = units[i].unitId; });
  return t;
}

function staleTable(summary) {
  const stale = summary.stale;
  if (stale.count === 0) {
    return h('p', { class: 'flag-none' }, `✓ No stale unit: every unit recorded since ${when(stale.before)}.`);
  }
  const listed = stale.oldestFirst;
  const t = table(`Stale: ${counted(stale.count, 'unit')} with no recording started since ${when(stale.before)}`
    + ` (${durationWords(summary.staleAfter)} before now)`,
    ['unit', 'newest recording', 'silent for (since it ended)', 'flags'],
    listed.map(u => [unitLink(u.unitId), when(u.windowStart), age(u.windowEnd, summary.asOf), shortFlags(u.flags)]),
    { class: 'stale', 'data-count': stale.count });
  t.querySelectorAll('tbody tr').forEach((tr, i) => { tr.dataset.unit = listed[i].unitId; });
  return h('div', { class: 'scroll', tabindex: '0', role: 'region', 'aria-label': 'Stale units' }, t,
    stale.count > listed.length ? h('p', { class: 'note' }, `Oldest ${listed.length} of ${stale.count} shown.`) : null);
}

function shortFlags(flags) {
  if (!flags || flags.length === 0) {
    return h('span', { class: 'flag-none' }, '✓ none');
  }
  return h('span', { class: 'flag-raised', title: flags.map(f => FLAG_WORDS[f]).join('; ') },
    flags.map(f => '⚠ ' + words(f)).join(', '));
}

function words(flag) {
  return flag.replaceAll('_', ' ');
}

/** "2026-11-30 11:08 UTC" from an RFC 3339 time; seconds kept when they are not 00 ("11:08:30 UTC"). */
function when(instant) {
  return instant ? instant.replace('T', ' ').replace(/(:00)?(\.\d+)?Z$/, ' UTC') : '—';
}

/** "24 h", "7 d", "2 d 12 h", "90 min" from an ISO 8601 duration such as PT24H or P7D; the text itself otherwise. */
export function durationWords(iso) {
  const m = /^P(?:(\d+)D)?(?:T(?:(\d+)H)?(?:(\d+)M)?(?:(\d+(?:\.\d+)?)S)?)?$/.exec(iso ?? '');
  if (!m) {
    return iso;
  }
  const seconds = (Number(m[1] ?? 0) * 24 + Number(m[2] ?? 0)) * 3600 + Number(m[3] ?? 0) * 60 + Number(m[4] ?? 0);
  const twoDays = seconds < 172800; // up to two days in hours ("24 h", "36 h"), then in days and hours
  const [days, hours, minutes] = [twoDays ? 0 : Math.floor(seconds / 86400),
    Math.floor((twoDays ? seconds : seconds % 86400) / 3600), Math.floor(seconds % 3600 / 60)];
  if (seconds < 120) {
    return `${seconds} s`;
  }
  if (seconds < 7200) {
    return `${Math.round(seconds / 60)} min`;
  }
  const parts = [days ? `${days} d` : '', hours ? `${hours} h` : '', days === 0 && minutes ? `${minutes} min` : ''];
  return parts.filter(Boolean).join(' ');
}

/** "2 d 10 h" between two RFC 3339 times. */
function age(from, to) {
  const hours = Math.floor((Date.parse(to) - Date.parse(from)) / 3.6e6);
  return hours >= 48 ? `${Math.floor(hours / 24)} d ${hours % 24} h` : `${hours} h`;
}
