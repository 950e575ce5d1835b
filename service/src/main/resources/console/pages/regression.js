// Regression runs: the list, newest first, and one run followed live: its progress while it is
// queued or running (polled every half second, stopped when the page is left or the run is
// finished), then the verdict with the rule that decided it and the per-unit changes, worst first.
// Cancelling needs an admin key; the outcome is said in words.
import { api, ApiError } from '../api.js';
import { explain, say } from '../app.js';
import { counted, format, h, link, number, table } from '../dom.js';

const POLL_MS = 500;
const ACTIVE = new Set(['queued', 'running']);

const STATE_WORDS = {
  queued: '◷ queued: waiting for a worker',
  running: '▶ running',
  succeeded: '■ finished',
  failed: '✗ failed: no verdict',
  cancelled: '⊘ cancelled: no verdict',
};

const CHANGE_WORDS = { worse: '▲ worse', better: '▼ better', unchanged: '= unchanged' };

const RULE_WORDS = {
  'worse-share': 'the share of compared units worse beyond tolerance, against the largest share allowed (maxWorseShare)',
  'no-comparable-units': 'the baseline solved none of the selected traces, so nothing could be compared',
};

export async function render(root, { id }) {
  if (id) {
    root.append(runSection(await api.regression(id)));
  } else {
    await renderList(root);
  }
}

export function mounted(main) {
  const section = main.querySelector('#run');
  if (section && ACTIVE.has(section.dataset.state)) {
    follow(section);
  }
}

// ---------- the list ----------

async function renderList(root) {
  const runs = (await api.regressions({ limit: 100 })).items;
  root.append(h('h1', {}, 'Regression runs'),
    h('p', { class: 'lede' }, 'Each run re-solves stored traces under a baseline and a candidate model version and ',
      'judges the candidate unit by unit. Newest first; open a run to follow it.'));
  if (runs.length === 0) {
    root.append(h('p', { class: 'panel' }, 'No regression run yet. A pipeline starts one with POST /v1/regressions ',
      '(or the compare-versions command).'));
    return;
  }
  root.append(h('div', { class: 'panel' }, table('Runs, newest first',
    ['created (UTC)', 'family', 'versions', 'state', 'verdict', 'progress', ''],
    runs.map(run => [
      when(run.createdAt),
      run.family,
      `v${run.baseline} → v${run.candidate}`,
      stateWord(run.state),
      verdictWord(run),
      miniBar(run.progress),
      link(`#/regressions/${encodeURIComponent(run.id)}`, 'open run'),
    ]), { class: 'runs', 'data-runs': runs.map(r => r.id).join(',') })));
}

function miniBar(progress) {
  const done = progress?.done ?? 0;
  const total = progress?.total ?? 0;
  return h('span', { class: 'mini-progress', 'data-done': done, 'data-total': total },
    fill(h('span', { class: 'bar bar-mini', 'aria-hidden': 'true' }, h('span')), done, total), ` ${done} / ${total}`);
}

// ---------- one run ----------

function runSection(run) {
  const bar = h('div', { class: 'bar bar-run', role: 'progressbar', 'aria-label': 'traces compared', 'aria-valuemin': '0' },
    h('span'));
  const button = h('button', { type: 'button', id: 'cancel-run', class: 'danger' }, 'Cancel run');
  const section = h('section', { id: 'run', 'data-run': run.id, 'data-polling': 'off' },
    h('h1', {}, `Regression run · ${run.family} v${run.baseline} → v${run.candidate}`),
    meta(run),
    h('div', { class: 'panel run-status' },
      h('div', { class: 'status-row' },
        h('p', { class: 'run-state' }),
        h('p', { class: 'bar-text' }),
        h('p', { class: 'cancel-line' }, h('span', { id: 'cancel-outcome', role: 'status' }),
          h('span', { class: 'hint cancel-hint' }, 'needs an admin key'), button)),
      bar),
    h('div', { id: 'outcome' }));
  button.addEventListener('click', () => cancel(section));
  show(section, run);
  return section;
}

function meta(run) {
  const t = run.request.tolerances;
  return h('p', { class: 'run-meta' },
    `Run ${run.id} · created ${when(run.createdAt)} UTC · ${counted(run.request.traceCount, 'trace')} selected · tolerances: `,
    `χ²/dof may rise by ${format(t.maxChi2PerDofIncrease)}, share of units worse beyond it ≤ ${format(t.maxWorseShare)}, `,
    t.maxX0ShiftSe === null || t.maxX0ShiftSe === undefined
      ? 'x̂0 shifts reported, not judged' : `x̂0 may shift by ${format(t.maxX0ShiftSe)} standard errors`);
}

/** Brings the section up to date with the run as the API gave it. */
function show(section, run) {
  const before = section.dataset.state;
  section.dataset.state = run.state;
  const done = run.progress?.done ?? 0;
  const total = run.progress?.total ?? run.request.traceCount;
  const bar = section.querySelector('.bar-run');
  fill(bar, done, total);
  bar.dataset.done = done;
  bar.dataset.total = total;
  bar.setAttribute('aria-valuenow', done);
  bar.setAttribute('aria-valuemax', total);
  const percent = total ? Math.floor((100 * done) / total) : 0;
  section.querySelector('.bar-text').textContent = `${done} of ${total} traces compared (${percent} %)`;
  const stateLine = section.querySelector('.run-state');
  stateLine.textContent = stateWord(run.state) + (run.cancelRequested && ACTIVE.has(run.state)
    ? ' · cancel requested: it stops after the trace in hand' : '');
  stateLine.dataset.state = run.state;
  const button = section.querySelector('#cancel-run');
  button.hidden = !ACTIVE.has(run.state);
  section.querySelector('.cancel-hint').hidden = button.hidden || Boolean(section.querySelector('#cancel-outcome').textContent);
  button.disabled = run.cancelRequested;
  if (run.state === 'cancelled') {
    const text = `Cancelled after ${done} of ${total} traces; no verdict.`;
    section.querySelector('#cancel-outcome').textContent = text;
    if (section.dataset.cancelAsked && before !== run.state) {
      say(text, 'info');
    }
  }
  if (before !== run.state) {
    section.querySelector('#outcome').replaceChildren(...outcome(run));
  }
}

function fill(bar, done, total) {
  bar.firstElementChild.style.width = (total ? Math.min(100, (100 * done) / total) : 0) + '%';
  return bar;
}

function follow(section) {
  section.dataset.polling = 'on';
  const stop = () => {
    clearTimeout(section.timer);
    section.dataset.polling = 'off';
    window.removeEventListener('hashchange', stop);
  };
  const tick = async () => {
    if (!section.isConnected) {
      stop();
      return;
    }
    try {
      const run = await api.regression(section.dataset.run);
      if (!section.isConnected) {
        stop();
        return;
      }
      show(section, run);
    } catch (error) {
      if (!(error instanceof ApiError && error.status === 503)) {
        explain(error);
        stop();
        return;
      }
    }
    if (ACTIVE.has(section.dataset.state)) {
      section.timer = setTimeout(tick, POLL_MS);
    } else {
      stop();
    }
  };
  window.addEventListener('hashchange', stop);
  section.timer = setTimeout(tick, POLL_MS);
}

async function cancel(section) {
  const button = section.querySelector('#cancel-run');
  const outcomeLine = section.querySelector('#cancel-outcome');
  button.disabled = true;
  try {
    const run = await api.cancelRegression(section.dataset.run);
    section.dataset.cancelAsked = 'true';
    const text = run.state === 'cancelled'
      ? 'Cancelled: the run was still queued, so nothing was compared.'
      : 'Cancel requested: the run stops after the trace in hand and keeps what it compared so far.';
    show(section, run);
    outcomeLine.textContent = text;
    say(text, 'info');
    if (ACTIVE.has(run.state) && section.dataset.polling !== 'on') {
      follow(section);
    }
  } catch (error) {
    button.disabled = false;
    const text = refusal(error);
    outcomeLine.textContent = text;
    section.querySelector('.cancel-hint').hidden = true;
    say(text);
  }
}

function refusal(error) {
  if (!(error instanceof ApiError)) {
    return 'Not cancelled: ' + error.message;
  }
  if (error.status === 403) {
    return 'Not cancelled: this key may not cancel runs (403); cancelling needs an admin key.';
  }
  if (error.status === 409) {
    return 'Not cancelled: the run has already finished (409).';
  }
  return 'Not cancelled: ' + error.message;
}

// ---------- the outcome: verdict, summary, units ----------

function outcome(run) {
  const result = run.result;
  if (ACTIVE.has(run.state)) {
    return [h('p', { class: 'waiting' }, 'The verdict and the per-unit changes appear here when the run has finished.')];
  }
  const parts = [verdictPanel(run)];
  if (result) {
    if (!result.statesComparable && result.statesNote) {
      parts.push(h('p', { class: 'note' }, 'Initial states are not compared: ', result.statesNote));
    }
    parts.push(summaryPanel(result), unitTable(result.units));
  }
  return parts;
}

function verdictPanel(run) {
  const verdict = run.result?.verdict;
  if (!verdict) {
    const why = run.state === 'cancelled'
      ? `The run was cancelled after ${run.result?.tracesDone ?? run.progress.done} of ${run.progress.total} traces; the units compared so far are below.`
      : `The run ${run.state}${run.errors?.length ? ': ' + run.errors.join('; ') : ''}.`;
    return h('div', { id: 'verdict', class: 'verdict verdict-none', 'data-pass': '' },
      h('p', { class: 'verdict-word' }, '— no verdict'), h('p', {}, why));
  }
  return h('div', { id: 'verdict', class: `verdict ${verdict.pass ? 'verdict-pass' : 'verdict-fail'}`,
    'data-pass': String(verdict.pass), 'data-rule': verdict.rule },
  h('p', { class: 'verdict-word' }, verdict.pass
    ? '✓ PASS: the candidate fits these traces about as well as the baseline'
    : '✗ FAIL: the candidate fits these traces worse than allowed'),
  h('p', {}, 'Decided by rule ', h('code', {}, verdict.rule), ': ', RULE_WORDS[verdict.rule] ?? 'see the API documentation', '.'),
  h('p', { class: 'verdict-detail' }, verdict.detail),
  h('p', { class: 'hint' }, 'A pass is evidence about the model on the stored traces, not a guarantee about any cargo.'));
}

function summaryPanel(result) {
  const s = result.summary;
  const items = [
    ['units', s.units], ['compared', s.compared], ['not compared', s.notCompared],
    ['▲ worse', s.worse], ['▼ better', s.better], ['= unchanged', s.unchanged],
    ['⚠ worse beyond tolerance', s.worseBeyondTolerance],
    ['median Δχ²/dof', s.medianDeltaChi2PerDof], ['95th percentile Δχ²/dof', s.p95DeltaChi2PerDof],
  ];
  return h('dl', { class: 'run-summary', 'aria-label': 'summary over compared units' },
    items.map(([label, value]) => h('div', {}, h('dt', {}, label), h('dd', {}, number(value)))));
}

/** Worst first: units worse beyond tolerance, then the other compared units, then those not compared; within each, the largest rise of χ²/dof first, then by unit ID. */
export function worstFirst(a, b) {
  const group = u => (u.beyondTolerance ? 0 : u.compared ? 1 : 2);
  const delta = u => u.deltaChi2PerDof ?? (u.compared ? Infinity : -Infinity);
  const byDelta = delta(b) - delta(a);
  return group(a) - group(b) || (Number.isNaN(byDelta) ? 0 : byDelta) || (a.unitId < b.unitId ? -1 : a.unitId > b.unitId ? 1 : 0);
}

function unitTable(units) {
  const sorted = [...units].sort(worstFirst);
  const largest = Math.max(1e-12, ...sorted.map(u => Math.abs(u.deltaChi2PerDof ?? 0)));
  const t = table('Per-unit changes from baseline to candidate, worst first (beyond tolerance, then by rise of χ²/dof)',
    ['unit', 'change', 'beyond tolerance', 'χ²/dof baseline', 'χ²/dof candidate', 'Δχ²/dof', 'largest x̂0 shift (se)',
      'flags', 'traces', 'reasons'],
    sorted.map(u => [
      link(`#/units/${encodeURIComponent(u.unitId)}`, u.unitId),
      h('span', { class: `change change-${u.change ?? 'none'}` }, CHANGE_WORDS[u.change] ?? '— not compared'),
      u.beyondTolerance ? h('strong', { class: 'beyond' }, '⚠ yes') : h('span', { class: 'within' }, '✓ no'),
      number(u.baselineChi2PerDof),
      number(u.candidateChi2PerDof),
      deltaCell(u.deltaChi2PerDof, largest),
      number(u.maxAbsX0ShiftSe),
      flagChanges(u.traces),
      String(u.traces.length),
      u.reasons.length ? u.reasons.join('; ') : '—',
    ]), { class: 'unit-changes', 'data-units': sorted.map(u => u.unitId).join(',') });
  t.querySelectorAll('tbody tr').forEach((row, i) => {
    row.dataset.unit = sorted[i].unitId;
    row.classList.toggle('row-beyond', Boolean(sorted[i].beyondTolerance));
  });
  return h('div', { class: 'panel' }, h('div', { class: 'table-scroll', tabindex: '0', role: 'region',
    'aria-label': 'Per-unit changes' }, t));
}

function deltaCell(delta, largest) {
  if (delta === null || delta === undefined) {
    return number(delta);
  }
  const width = Math.max(2, Math.round((48 * Math.abs(delta)) / largest));
  const mark = h('span', { class: `delta-mark ${delta > 0 ? 'up' : 'down'}`, 'aria-hidden': 'true' });
  mark.style.width = width + 'px';
  const value = h('span', { class: 'num', 'data-value': String(delta) }, (delta > 0 ? '+' : '') + format(delta));
  return h('span', { class: 'delta' }, mark, value);
}

function flagChanges(traces) {
  const added = new Set(traces.flatMap(t => t.flagsAdded ?? []));
  const removed = new Set(traces.flatMap(t => t.flagsRemoved ?? []));
  if (!added.size && !removed.size) {
    return '—';
  }
  return h('span', { class: 'flag-changes' },
    [...added].map(f => h('span', { class: 'flag-raised' }, '+⚠ ' + f.replaceAll('_', ' '))),
    [...removed].map(f => h('span', { class: 'flag-none' }, '−✓ ' + f.replaceAll('_', ' '))));
}

// ---------- words ----------

function stateWord(state) {
  return STATE_WORDS[state] ?? state;
}

function verdictWord(run) {
  if (run.pass === true) {
    return h('span', { class: 'verdict-pass-word' }, '✓ pass');
  }
  if (run.pass === false) {
    return h('span', { class: 'verdict-fail-word' }, '✗ fail');
  }
  return ACTIVE.has(run.state) ? '… not yet' : '— none';
}

function when(timestamp) {
  return timestamp ? timestamp.replace('T', ' ').replace(/\.\d+Z$|Z$/, '') : '—';
}
