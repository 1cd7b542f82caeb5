// Opening a trip file (bundle.zip, format groundproof-bundle v1) on the
// phone, with the same checks and in the same order as the Rust reader
// (sync/src/bundle/read.rs): ZIP structure and names, manifest format and
// version, the manifest's listing, the size and SHA-256 of every entry,
// expiry, then the content cross-checked with the manifest.
//
// A refusal is a BundleError whose `key` names a message in the catalogue
// and whose `params` fill it in; `detail` is the technical reason (shown
// small, for the coordinator).

import { unzipSync } from './vendor/fflate.js';
import { sha256Hex } from './crypto.js';

export const BUNDLE_FORMAT = 'groundproof-bundle';
export const BUNDLE_FORMAT_VERSION = 1;

// sync/src/bundle/limits.rs, BundleLimits::default().
export const LIMITS = {
  maxBundleBytes: 512 * 2 ** 20,
  maxEntries: 2100,
  maxEntryBytes: 128 * 2 ** 20,
  maxManifestBytes: 2 ** 20,
  maxTotalBytes: 512 * 2 ** 20,
};

// sync/src/bundle/names.rs.
const MANIFEST = 'manifest.json';
const UPLOAD_KEY = 'upload-key.json';
const CHECKLIST = 'checklist.json';
const EVENTS_GEOJSON = 'events.geojson';
const POINTS_GEOJSON = 'points.geojson';
const CORE_ENTRIES = ['bundle.gpkg', CHECKLIST, EVENTS_GEOJSON, MANIFEST, POINTS_GEOJSON, 'route.gpx', UPLOAD_KEY];
const EXTRA_RE = /^extras\/[a-z0-9][a-z0-9_-]{0,63}\.(html|css|png|svg)$/;

export class BundleError extends Error {
  constructor(key, params = {}, detail = '') {
    super(detail || key);
    this.key = key;
    this.params = params;
    this.detail = detail;
  }
}

export function isAllowedEntryName(name) {
  return CORE_ENTRIES.includes(name) || EXTRA_RE.test(name);
}

const isSha256Hex = (s) => typeof s === 'string' && /^[0-9a-f]{64}$/.test(s);
const isKeyId = (s) => typeof s === 'string' && /^[A-Za-z0-9_-]{1,64}$/.test(s);
const isToken = (s) => typeof s === 'string' && /^[a-z0-9_]{1,64}$/.test(s);
export const isValidCode = (s) => typeof s === 'string' && /^[A-Z][0-9]{4}$/.test(s);
const isDate = (s) => {
  if (typeof s !== 'string' || !/^\d{4}-\d{2}-\d{2}$/.test(s)) return false;
  const d = new Date(`${s}T00:00:00Z`);
  return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s;
};
const isTime = (s) => typeof s === 'string' && !Number.isNaN(Date.parse(s));

function checkText(label, s) {
  if (typeof s !== 'string') return `${label} is not text`;
  const n = [...s].length;
  if (n === 0 || n > 128) return `${label} must have 1-128 characters`;
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u001f\u007f-\u009f]/.test(s)) return `${label} contains control characters`;
  return null;
}

const decoder = new TextDecoder('utf-8', { fatal: true });
function parseJson(name, bytes) {
  try {
    return JSON.parse(decoder.decode(bytes));
  } catch (e) {
    throw new BundleError('bundle.bad_entry', { name }, `${name}: ${e.message}`);
  }
}

// The manifest's header checks (BundleHeader::validate) and its fields.
function checkManifest(m) {
  const bad = (r) => new BundleError('bundle.bad_entry', { name: MANIFEST }, `${MANIFEST}: ${r}`);
  if (typeof m !== 'object' || m === null || Array.isArray(m)) throw bad('not an object');
  if (m.format !== BUNDLE_FORMAT) throw new BundleError('bundle.wrong_format', {}, `format ${JSON.stringify(m.format)}`);
  if (!Number.isInteger(m.format_version)) throw bad('format_version is missing or not an integer');
  if (m.format_version !== BUNDLE_FORMAT_VERSION) {
    throw new BundleError('bundle.wrong_version', { found: m.format_version }, `format_version ${m.format_version}`);
  }
  if (typeof m.bundle_id !== 'string' || !/^[0-9a-fA-F-]{32,36}$/.test(m.bundle_id)) throw bad('bundle_id is not a UUID');
  if (m.mode !== 'response' && m.mode !== 'assessment') throw bad(`mode ${JSON.stringify(m.mode)}`);
  const t = checkText('team', m.team);
  if (t) throw bad(t);
  if (!isKeyId(m.upload_key_id)) throw bad('upload_key_id must be 1-64 chars of [A-Za-z0-9_-]');
  for (const k of ['issued_at', 'due_at', 'expires_at']) if (!isTime(m[k])) throw bad(`${k} is not a time`);
  const [i, d, x] = ['issued_at', 'due_at', 'expires_at'].map((k) => Date.parse(m[k]));
  if (!(i <= d && d <= x) || i >= x) throw bad('times must satisfy issued_at <= due_at <= expires_at, issued_at < expires_at');
  if (!(m.seed === null || m.seed === undefined || Number.isInteger(m.seed))) throw bad('seed');
  if (!Number.isInteger(m.checklist_version) || m.checklist_version < 0) throw bad('checklist_version');
  const c = m.counts;
  if (!c || !['events', 'control_points', 'route_stops'].every((k) => Number.isInteger(c[k]) && c[k] >= 0)) throw bad('counts');
  if (!Array.isArray(m.entries)) throw bad('entries');
  const z = m.camera_zone;
  if (!(z === null || z === undefined || (typeof z === 'object' && /^[+-]\d{1,2}:\d{2}$/.test(z.offset) && (z.name === undefined || typeof z.name === 'string')))) throw bad('camera_zone');
}

// check_listing in read.rs.
function checkListing(m, inZip) {
  const bad = (r) => new BundleError('bundle.bad_entry', { name: MANIFEST }, `${MANIFEST}: ${r}`);
  const listed = new Set();
  let total = 0;
  for (const e of m.entries) {
    if (!e || typeof e.name !== 'string' || e.name === MANIFEST || !isAllowedEntryName(e.name)) {
      throw bad(`lists an entry with a name that is not allowed: ${JSON.stringify(e && e.name)}`);
    }
    if (listed.has(e.name)) throw bad(`lists ${JSON.stringify(e.name)} twice`);
    listed.add(e.name);
    if (!isSha256Hex(e.sha256)) throw bad(`sha256 of ${JSON.stringify(e.name)} is not 64 lowercase hex digits`);
    if (!Number.isInteger(e.size) || e.size < 0) throw bad(`size of ${JSON.stringify(e.name)}`);
    if (e.size > LIMITS.maxEntryBytes) throw new BundleError('bundle.too_large', {}, `${e.name} is too large`);
    total += e.size;
    if (!inZip.has(e.name)) throw new BundleError('bundle.missing_entry', { name: e.name }, `missing ${e.name}`);
  }
  if (total > LIMITS.maxTotalBytes) throw new BundleError('bundle.too_large', {}, 'total too large');
  for (const core of CORE_ENTRIES) {
    if (core !== MANIFEST && !listed.has(core)) throw new BundleError('bundle.missing_entry', { name: core }, `missing ${core}`);
  }
  for (const n of inZip) {
    if (n !== MANIFEST && !listed.has(n)) throw new BundleError('bundle.unlisted_entry', { name: n }, `unlisted ${n}`);
  }
}

function checkChecklist(c, manifest) {
  const bad = (r) => new BundleError('bundle.bad_entry', { name: CHECKLIST }, `${CHECKLIST}: ${r}`);
  if (typeof c !== 'object' || c === null) throw bad('not an object');
  const lists = ['outcomes', 'false_alarm_reasons', 'not_reached_reasons', 'causes', 'required_fields'];
  for (const k of lists) {
    if (!Array.isArray(c[k])) throw bad(`${k} is missing`);
    c[k].forEach((item, i) => {
      if (!isToken(item)) throw bad(`${k}[${i}] is not a lowercase token`);
      if (c[k].indexOf(item) !== i) throw bad(`${k} lists ${item} twice`);
    });
  }
  // Checklist 2 and later: a control point's own outcomes (optional, as in checklist 1).
  if (c.control_outcomes !== undefined) {
    if (!Array.isArray(c.control_outcomes)) throw bad('control_outcomes is not a list');
    c.control_outcomes.forEach((item, i) => {
      if (!isToken(item)) throw bad(`control_outcomes[${i}] is not a lowercase token`);
      if (c.control_outcomes.indexOf(item) !== i) throw bad(`control_outcomes lists ${item} twice`);
    });
  }
  if (c.outcomes.length === 0) throw bad('checklist has no outcomes');
  if (!Number.isInteger(c.version) || !Number.isInteger(c.min_photos_confirmed) || c.min_photos_confirmed < 0) throw bad('version');
  if (c.version !== manifest.checklist_version) {
    throw bad(`version ${c.version} differs from the manifest's checklist_version ${manifest.checklist_version}`);
  }
}

function checkKey(k, manifest) {
  const bad = (r) => new BundleError('bundle.bad_entry', { name: UPLOAD_KEY }, `${UPLOAD_KEY}: ${r}`);
  if (typeof k !== 'object' || k === null) throw bad('not an object');
  const keys = Object.keys(k).sort().join(',');
  if (keys !== 'key_hex,key_id') throw bad('must hold exactly key_id and key_hex');
  if (!isKeyId(k.key_id)) throw bad('key_id must be 1-64 chars of [A-Za-z0-9_-]');
  if (typeof k.key_hex !== 'string' || !/^[0-9a-fA-F]{64}$/.test(k.key_hex)) throw bad('key_hex must be 64 hexadecimal digits');
  if (k.key_id !== manifest.upload_key_id) throw bad("key_id differs from the manifest's upload_key_id");
}

const lonLat = (c) => Array.isArray(c) && c.length >= 2 && Number.isFinite(c[0]) && Number.isFinite(c[1])
  && c[0] >= -180 && c[0] <= 180 && c[1] >= -90 && c[1] <= 90;

// The alert confidence level, 'high' or 'low', of a confidence word (as the
// sync crate's confidence_level): bundles written before `confidence_level`
// carry only the words confirmed/tentative. null for another word.
export function confidenceLevel(word) {
  if (word === 'confirmed' || word === 'high') return 'high';
  if (word === 'tentative' || word === 'low') return 'low';
  return null;
}

// Events, control points and start from the two GeoJSON entries (parse_places).
function parsePlaces(eventsFc, pointsFc) {
  const ev = (r) => new BundleError('bundle.bad_entry', { name: EVENTS_GEOJSON }, `${EVENTS_GEOJSON}: ${r}`);
  const pt = (r) => new BundleError('bundle.bad_entry', { name: POINTS_GEOJSON }, `${POINTS_GEOJSON}: ${r}`);
  if (!eventsFc || eventsFc.type !== 'FeatureCollection' || !Array.isArray(eventsFc.features)) throw ev('not a FeatureCollection');
  if (!pointsFc || pointsFc.type !== 'FeatureCollection' || !Array.isArray(pointsFc.features)) throw pt('not a FeatureCollection');
  const events = eventsFc.features.map((f) => {
    const p = f.properties || {};
    const g = f.geometry || {};
    if (!isValidCode(p.code)) throw ev(`code ${JSON.stringify(p.code)}`);
    if (!Number.isInteger(p.event_id)) throw ev(`event ${p.code}: event_id`);
    if (!isDate(p.first_detected) || !isDate(p.last_detected) || p.first_detected > p.last_detected) throw ev(`event ${p.code}: dates`);
    if (!(Number.isFinite(p.area_ha) && p.area_ha >= 0)) throw ev(`event ${p.code}: area_ha`);
    if (!Array.isArray(p.sources) || p.sources.length === 0) throw ev(`event ${p.code}: sources`);
    if (!Number.isInteger(p.visit_order) || p.visit_order < 0) throw ev(`event ${p.code}: visit_order`);
    const level = confidenceLevel(p.confidence);
    if (p.confidence_level !== undefined && (p.confidence_level !== level || level === null)) throw ev(`event ${p.code}: confidence_level`);
    if (g.type !== 'MultiPolygon' || !Array.isArray(g.coordinates) || g.coordinates.length === 0) throw ev(`event ${p.code}: footprint`);
    for (const poly of g.coordinates) for (const ring of poly) {
      if (!Array.isArray(ring) || ring.length < 4 || !ring.every(lonLat)) throw ev(`event ${p.code}: footprint ring`);
    }
    return {
      code: p.code, event_id: p.event_id, area_ha: p.area_ha,
      first_detected: p.first_detected, last_detected: p.last_detected,
      sources: p.sources, confidence: p.confidence, confidence_level: level, corroborated: !!p.corroborated,
      visit_order: p.visit_order, stratum: p.stratum ?? null,
      footprint: g.coordinates, lat: null, lon: null,
    };
  });
  const centroids = new Map();
  const controls = [];
  let start = null;
  for (const f of pointsFc.features) {
    const p = f.properties || {};
    const c = f.geometry && f.geometry.type === 'Point' ? f.geometry.coordinates : null;
    if (!lonLat(c)) throw pt('a point is not a valid position');
    if (p.kind === 'event') {
      if (centroids.has(p.code)) throw pt(`centroid of ${p.code} twice`);
      centroids.set(p.code, c);
    } else if (p.kind === 'control') {
      if (!isValidCode(p.code)) throw pt(`control code ${JSON.stringify(p.code)}`);
      if (!Number.isInteger(p.visit_order) || p.visit_order < 0) throw pt(`control ${p.code}: visit_order`);
      controls.push({ code: p.code, visit_order: p.visit_order, lon: c[0], lat: c[1] });
    } else if (p.kind === 'start') {
      if (start) throw pt('two start points');
      const t = checkText('name', p.name);
      if (t) throw pt(`start point: ${t}`);
      start = { name: p.name, lon: c[0], lat: c[1] };
    } else {
      throw pt(`unknown kind ${JSON.stringify(p.kind)}`);
    }
  }
  for (const e of events) {
    const c = centroids.get(e.code);
    if (!c) throw pt(`no centroid for event ${JSON.stringify(e.code)}`);
    centroids.delete(e.code);
    [e.lon, e.lat] = c;
  }
  if (centroids.size) throw pt(`centroid for unknown event ${JSON.stringify([...centroids.keys()][0])}`);
  if (!start) throw pt('no start point');
  return { events, controls, start };
}

/**
 * Opens and fully checks a trip file; refuses it if it expired at or before
 * `now` (a Date). Returns the trip as stored in IndexedDB.
 */
export async function openBundle(bytes, now = new Date()) {
  if (bytes.length > LIMITS.maxBundleBytes) throw new BundleError('bundle.too_large', {}, 'file too large');
  const seen = new Set();
  let count = 0;
  let total = 0;
  let files;
  try {
    files = unzipSync(bytes, {
      filter(f) {
        count += 1;
        if (count > LIMITS.maxEntries) throw new BundleError('bundle.too_large', {}, 'too many entries');
        if (!isAllowedEntryName(f.name)) {
          throw new BundleError('bundle.bad_name', { name: f.name }, `not a bundle entry name: ${JSON.stringify(f.name)}`);
        }
        if (seen.has(f.name)) throw new BundleError('bundle.bad_zip', {}, `${f.name} twice`);
        seen.add(f.name);
        const max = f.name === MANIFEST ? LIMITS.maxManifestBytes : LIMITS.maxEntryBytes;
        if (f.originalSize > max) throw new BundleError('bundle.too_large', {}, `${f.name} too large`);
        total += f.originalSize;
        if (total > LIMITS.maxTotalBytes) throw new BundleError('bundle.too_large', {}, 'total too large');
        if (f.compression !== 0 && f.compression !== 8) throw new BundleError('bundle.bad_zip', {}, `${f.name}: compression ${f.compression}`);
        return true;
      },
    });
  } catch (e) {
    if (e instanceof BundleError) throw e;
    throw new BundleError('bundle.bad_zip', {}, String(e && e.message ? e.message : e));
  }
  const inZip = new Set(Object.keys(files));
  if (!inZip.has(MANIFEST)) throw new BundleError('bundle.missing_entry', { name: MANIFEST }, `missing ${MANIFEST}`);

  // 1. Format name and version, before anything else.
  const manifest = parseJson(MANIFEST, files[MANIFEST]);
  checkManifest(manifest);
  checkListing(manifest, inZip);

  // 2. Every size and checksum.
  for (const e of manifest.entries) {
    const b = files[e.name];
    if (b.length !== e.size) {
      throw new BundleError('bundle.checksum', { name: e.name }, `${e.name}: size ${b.length}, manifest says ${e.size}`);
    }
    const actual = await sha256Hex(b);
    if (actual !== e.sha256) {
      throw new BundleError('bundle.checksum', { name: e.name }, `${e.name}: SHA-256 ${actual}, manifest says ${e.sha256}`);
    }
  }

  // 3. Expiry.
  if (now.getTime() >= Date.parse(manifest.expires_at)) {
    throw new BundleError('bundle.expired', { when: manifest.expires_at }, `expired at ${manifest.expires_at}`);
  }

  // 4. Content, cross-checked with the manifest.
  const key = parseJson(UPLOAD_KEY, files[UPLOAD_KEY]);
  checkKey(key, manifest);
  const checklist = parseJson(CHECKLIST, files[CHECKLIST]);
  checkChecklist(checklist, manifest);
  const { events, controls, start } = parsePlaces(parseJson(EVENTS_GEOJSON, files[EVENTS_GEOJSON]),
    parseJson(POINTS_GEOJSON, files[POINTS_GEOJSON]));
  const c = manifest.counts;
  if (c.events !== events.length || c.control_points !== controls.length || c.route_stops !== events.length + controls.length) {
    throw new BundleError('bundle.bad_entry', { name: MANIFEST }, `${MANIFEST}: counts do not match the GeoJSON entries`);
  }
  const stops = [
    ...events.map((e) => ({ kind: 'event', code: e.code, visit_order: e.visit_order })),
    ...controls.map((k) => ({ kind: 'control', code: k.code, visit_order: k.visit_order })),
  ].sort((a, b) => a.visit_order - b.visit_order || (a.code < b.code ? -1 : a.code > b.code ? 1 : 0));
  const codes = new Set();
  stops.forEach((s, i) => {
    if (codes.has(s.code)) throw new BundleError('bundle.bad_entry', { name: POINTS_GEOJSON }, `code ${s.code} twice`);
    codes.add(s.code);
    if (i > 0 && stops[i - 1].visit_order === s.visit_order) {
      throw new BundleError('bundle.bad_entry', { name: POINTS_GEOJSON }, 'visit orders are not distinct');
    }
  });
  return {
    bundle_id: manifest.bundle_id.toLowerCase(),
    manifest,
    checklist,
    upload_key: { key_id: key.key_id, key_hex: key.key_hex.toLowerCase() },
    events,
    controls,
    start,
    route: stops.map((s) => s.code),
    opened_at: now.toISOString(),
    cautions_read: false,
  };
}
