// The console's only door to the service: every URL the pages use is built here, every request
// carries the key typed once (kept in this tab's session storage, never in a URL), and a
// problem+json answer becomes an ApiError whose message names the field at fault.

const KEY_SLOT = 'backstate.apiKey';

export class ApiError extends Error {
  constructor(status, problem) {
    super(ApiError.describe(status, problem));
    this.status = status;
    this.problem = problem;
  }

  static describe(status, problem) {
    if (status === 401) {
      return 'The service needs an API key for this, or refused the one given (401). Type a valid key above.';
    }
    if (status === 403) {
      return 'This key\'s role does not allow this (403): ' + (problem?.detail ?? 'ask for a key with the right role');
    }
    // RFC 9457 extension "errors": one {field, detail} per field at fault; the problem's own detail
    // usually words the first already, so only the others are added.
    const what = problem?.detail ?? problem?.title ?? `HTTP ${status}`;
    const fields = (problem?.errors ?? []).filter(e => !what.includes(e.detail)).map(e => `${e.field}: ${e.detail}`);
    return fields.length ? `${what} (${fields.join('; ')})` : what;
  }
}

export const key = {
  get: () => sessionStorage.getItem(KEY_SLOT),
  set: value => sessionStorage.setItem(KEY_SLOT, value.trim()),
  forget: () => sessionStorage.removeItem(KEY_SLOT),
};

async function request(method, path, body, contentType) {
  const headers = { Accept: 'application/json, application/problem+json' };
  const k = key.get();
  if (k) {
    headers.Authorization = 'Bearer ' + k;
  }
  if (body !== undefined) {
    headers['Content-Type'] = contentType ?? 'application/json';
  }
  const response = await fetch(path, { method, headers, body });
  const text = await response.text();
  const json = text ? JSON.parse(text) : null;
  if (!response.ok) {
    throw new ApiError(response.status, json);
  }
  return json;
}

const enc = encodeURIComponent;

function query(params) {
  const entries = Object.entries(params).filter(([, v]) => v !== undefined && v !== null && v !== '');
  return entries.length ? '?' + new URLSearchParams(entries).toString() : '';
}

export const api = {
  families: () => request('GET', '/v1/models'),
  createFamily: (name, description) => request('POST', '/v1/models', JSON.stringify({ name, description })),
  versions: family => request('GET', `/v1/models/${enc(family)}/versions`),
  version: (family, version) => request('GET', `/v1/models/${enc(family)}/versions/${version}`),
  publish: (family, documentText) => request('POST', `/v1/models/${enc(family)}/versions`, documentText),
  fleetSummary: (family, params = {}) => request('GET', `/v1/fleet/${enc(family)}/summary${query(params)}`),
  fleetUnits: (family, params = {}) => request('GET', `/v1/fleet/${enc(family)}/units${query(params)}`),
  latest: unitId => request('GET', `/v1/units/${enc(unitId)}/estimates/latest`),
  history: (unitId, params = {}) => request('GET', `/v1/units/${enc(unitId)}/estimates${query(params)}`),
  trend: (unitId, params) => request('GET', `/v1/units/${enc(unitId)}/trend${query(params)}`),
  estimate: id => request('GET', `/v1/estimates/${enc(id)}`),
  series: (id, maxPoints) => request('GET', `/v1/estimates/${enc(id)}/series${query({ maxPoints })}`),
  job: id => request('GET', `/v1/jobs/${enc(id)}`),
  regressions: (params = {}) => request('GET', `/v1/regressions${query(params)}`),
  regression: id => request('GET', `/v1/regressions/${enc(id)}`),
  cancelRegression: id => request('POST', `/v1/regressions/${enc(id)}/cancel`),
  plan: (family, version, body) =>
    request('POST', `/v1/models/${enc(family)}/versions/${version}/plans`, JSON.stringify(body)),
};
