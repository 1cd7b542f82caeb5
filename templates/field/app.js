// The field app: trips opened from a trip file, stops in visit order, the
// way to the chosen stop, visit reports with photos kept byte for byte,
// and the signed return (saved as a file or sent to the office).

import * as store from './store.js';
import { openBundle, BundleError, confidenceLevel } from './bundle.js';
import { distanceBearing } from './geo.js';
import { makeReport, validateReport, ReportProblem, MAX_PHOTO_BYTES, outcomesFor, takesCause, takesArea } from './report.js';
import { packReturn } from './returnpkg.js';
import { sha256Hex } from './crypto.js';
import * as sending from './send.js';
import { toUtm, formatUtm, toMgrs, groupMgrs } from './coords.js';
import { cameraZone, offsetMinutes, photoMeta } from './exif.js';
import { drawMap, dropMap, showPhone, tileUrlAllowed } from './map.js';
import { LANGUAGES, pickLanguage, setLanguage, language, t, token, number, dateTime, date } from './i18n.js';

const state = {
  view: 'home', // home | cautions | trip | stop | form | send
  trip: null,
  reports: [],
  stop: null,
  form: null,
  fix: null,
  fixError: null,
  notice: null, // {kind: 'ok'|'error', text, detail}
  sendResult: null,
  busy: false,
};
let watchId = null;
const main = () => document.getElementById('main');

// ---------------------------------------------------------------- helpers

function h(tag, attrs = {}, ...children) {
  const el = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (v === null || v === undefined || v === false) continue;
    if (k.startsWith('on')) el.addEventListener(k.slice(2), v);
    else if (k === 'class') el.className = v;
    else if (v === true) el.setAttribute(k, '');
    else el.setAttribute(k, v);
  }
  for (const c of children.flat(Infinity)) {
    if (c === null || c === undefined || c === false) continue;
    el.append(c instanceof Node ? c : document.createTextNode(String(c)));
  }
  return el;
}

function bytesText(n) {
  if (n < 1024) return t('size.bytes', { n: number(n) });
  if (n < 1024 * 1024) return t('size.kb', { n: number(n / 1024, 1) });
  return t('size.mb', { n: number(n / (1024 * 1024), 1) });
}

function notice() {
  if (!state.notice) return null;
  const n = state.notice;
  return h('div', { class: `notice ${n.kind}`, role: n.kind === 'error' ? 'alert' : 'status', id: 'notice' },
    h('p', {}, n.text), n.detail ? h('p', { class: 'detail' }, n.detail) : null);
}

function say(kind, text, detail = '') {
  state.notice = { kind, text, detail };
}

function stopsOf(trip) {
  const byCode = new Map();
  for (const e of trip.events) byCode.set(e.code, { kind: 'event', ...e });
  for (const c of trip.controls) byCode.set(c.code, { kind: 'control', ...c });
  return trip.route.map((code) => byCode.get(code));
}

function reportsFor(code) {
  return state.reports.filter((r) => r.report.target.code === code);
}

/** not_visited | unsent | recorded | refused */
function stopState(code) {
  const rs = reportsFor(code);
  if (rs.length === 0) return 'not_visited';
  if (rs.some((r) => r.state === 'unsent')) return 'unsent';
  const last = rs[rs.length - 1];
  return last.state === 'rejected' ? 'refused' : 'recorded';
}

function unsent() {
  return state.reports.filter((r) => r.state === 'unsent');
}

function go(view) {
  state.view = view;
  render();
  window.scrollTo(0, 0);
}

// ---------------------------------------------------------------- position

function startWatching() {
  if (watchId !== null || !('geolocation' in navigator)) return;
  watchId = navigator.geolocation.watchPosition((p) => {
    state.fix = { lat: p.coords.latitude, lon: p.coords.longitude, accuracy: p.coords.accuracy, at: p.timestamp };
    state.fixError = null;
    updateWay();
  }, (e) => {
    state.fixError = e.code === 1 ? 'position.denied' : 'position.unavailable';
    updateWay();
  }, { enableHighAccuracy: true, maximumAge: 5000, timeout: 60000 });
}

function fixText() {
  if (!state.fix) return t(state.fixError || 'position.waiting');
  return t('position.here', {
    lat: state.fix.lat.toFixed(6), lon: state.fix.lon.toFixed(6), acc: number(state.fix.accuracy, 0),
  });
}

/** A point as UTM and MGRS (1 m), as the field sheet gives them. */
function gridText(lat, lon) {
  const u = toUtm(lat, lon);
  if (!u) return '';
  return t('position.grid', { utm: formatUtm(u), mgrs: groupMgrs(toMgrs(lat, lon, 5)) });
}

function fixGridText() {
  return state.fix ? gridText(state.fix.lat, state.fix.lon) : '';
}

function wayText(stop) {
  if (!state.fix) return t(state.fixError || 'position.waiting');
  const { distance, bearing } = distanceBearing(state.fix.lat, state.fix.lon, stop.lat, stop.lon);
  const winds = ['N', 'NE', 'E', 'SE', 'S', 'SW', 'W', 'NW'];
  const wind = t(`compass.${winds[Math.floor(((bearing % 360) + 22.5) / 45) % 8]}`);
  const dist = distance < 1000 ? t('distance.m', { n: number(distance, 0) }) : t('distance.km', { n: number(distance / 1000, 2) });
  return t('way.text', { distance: dist, bearing: number(bearing, 0), wind });
}

function updateWay() {
  showPhone(state.fix);
  const here = document.getElementById('fix');
  if (here) here.textContent = fixText();
  const way = document.getElementById('way');
  if (way && state.stop) {
    way.textContent = wayText(state.stop);
    if (state.fix) {
      const { distance, bearing } = distanceBearing(state.fix.lat, state.fix.lon, state.stop.lat, state.stop.lon);
      way.dataset.distance = String(distance);
      way.dataset.bearing = String(bearing);
      const arrow = document.getElementById('arrow');
      if (arrow) arrow.style.transform = `rotate(${bearing}deg)`;
    }
  }
  const formFix = document.getElementById('form-fix');
  if (formFix) formFix.textContent = fixText();
  const grid = document.getElementById('fix-grid');
  if (grid && state.fix) {
    grid.textContent = fixGridText();
    grid.dataset.utm = formatUtm(toUtm(state.fix.lat, state.fix.lon), 3);
    grid.dataset.mgrs = toMgrs(state.fix.lat, state.fix.lon, 5) || '';
  }
}

// ---------------------------------------------------------------- storage

// Room kept free beyond a report's own bytes: IndexedDB's bookkeeping and
// the next report's form (our choice: 2 MB, about one phone photo).
const STORAGE_MARGIN = 2 * 1024 * 1024;
// Below this much free room the app warns (our choice: about three reports of
// three 5 MB photos).
const STORAGE_LOW = 50 * 1024 * 1024;

/** Bytes this app may still store, or null when the browser cannot say. */
async function freeRoom() {
  if (!(navigator.storage && navigator.storage.estimate)) return null;
  try {
    const e = await navigator.storage.estimate();
    return e.quota ? { free: Math.max(0, e.quota - (e.usage || 0)), used: e.usage || 0, quota: e.quota } : null;
  } catch (_) {
    return null; // the estimate is optional
  }
}

async function storageLine() {
  const all = unsent();
  const bytes = all.reduce((s, r) => s + r.size, 0);
  let text = t('storage.unsent', { n: all.length, size: bytesText(bytes) });
  const room = await freeRoom();
  if (room) text += ` · ${t('storage.phone', { used: bytesText(room.used), free: bytesText(room.free) })}`;
  const el = document.getElementById('storage');
  if (!el) return;
  el.textContent = text;
  const low = room && room.free < STORAGE_LOW;
  el.classList.toggle('warn', Boolean(low));
  if (low) el.append(h('strong', { id: 'storage-low', role: 'alert' }, ` ${t('storage.low', { free: bytesText(room.free) })}`));
}

// ---------------------------------------------------------------- views

function header() {
  const picker = h('select', { id: 'lang', 'aria-label': t('language.label'), onchange: async (e) => {
    await setLanguage(e.target.value);
    await store.setSetting('lang', e.target.value);
    render();
  } }, LANGUAGES.map((l) => h('option', { value: l, selected: l === language() }, t(`language.${l}`))));
  return h('header', { class: 'bar' },
    h('h1', {}, t('app_name')),
    h('label', { class: 'lang' }, h('span', { class: 'sr' }, t('language.label')), picker));
}

async function saveTileUrl() {
  const v = document.getElementById('tile-url').value.trim();
  if (v !== '' && !tileUrlAllowed(v)) {
    say('error', t('map.tiles_bad'));
    return go('home');
  }
  await store.setSetting('tile_url', v === '' ? null : v);
  say('ok', t(v === '' ? 'map.tiles_off' : 'map.tiles_on'));
  return go('home');
}

async function viewHome() {
  const list = await store.trips();
  const tileUrl = (await store.getSetting('tile_url')) || '';
  const counts = new Map();
  for (const r of await store.allReports()) if (r.state === 'unsent') counts.set(r.bundle_id, (counts.get(r.bundle_id) || 0) + 1);
  const input = h('input', { type: 'file', id: 'bundle-file', accept: '.zip,application/zip', onchange: onBundleChosen });
  return [
    h('form', { class: 'card', id: 'pair-form', onsubmit: (e) => { e.preventDefault(); pair(document.getElementById('pair-code').value); } },
      h('h2', {}, t('pair.title')),
      h('p', {}, t('pair.help')),
      h('label', { for: 'pair-code' }, t('pair.code_label')),
      h('input', { id: 'pair-code', type: 'text', autocomplete: 'off', autocapitalize: 'characters', spellcheck: 'false', maxlength: '16', placeholder: '7KQ2M-9XH4D' }),
      h('button', { type: 'submit', class: 'button primary', id: 'pair-button', disabled: state.busy }, t('pair.button'))),
    h('section', { class: 'card' },
      h('h2', {}, t('home.open_title')),
      h('p', {}, t('home.open_help')),
      h('label', { for: 'bundle-file', class: 'button primary' }, t('home.open_button')),
      input),
    h('section', { class: 'card' },
      h('h2', {}, t('home.trips_title')),
      list.length === 0 ? h('p', {}, t('home.no_trips'))
        : h('ul', { class: 'list', id: 'trips' }, list.sort((a, b) => (a.opened_at < b.opened_at ? 1 : -1)).map((tr) => {
          const expired = Date.now() >= Date.parse(tr.manifest.expires_at);
          return h('li', {},
            h('button', { class: 'row', 'data-bundle': tr.bundle_id, onclick: () => openTrip(tr.bundle_id) },
              h('strong', {}, tr.manifest.team),
              h('span', {}, t('home.trip_line', { stops: tr.route.length, due: dateTime(tr.manifest.due_at) })),
              h('span', { class: 'badge unsent' }, t('home.trip_unsent', { n: counts.get(tr.bundle_id) || 0 })),
              expired ? h('span', { class: 'badge refused' }, t('home.trip_expired')) : null));
        }))),
    h('form', { class: 'card', id: 'tiles-form', onsubmit: (e) => { e.preventDefault(); saveTileUrl(); } },
      h('h2', {}, t('map.tiles_title')),
      h('p', {}, t('map.tiles_help')),
      h('label', { for: 'tile-url' }, t('map.tiles_label')),
      h('input', { id: 'tile-url', type: 'text', autocomplete: 'off', spellcheck: 'false', maxlength: '300', value: tileUrl, placeholder: '/tiles/{z}/{x}/{y}.png' }),
      h('button', { type: 'submit', class: 'button' }, t('map.tiles_save'))),
  ];
}

function viewCautions() {
  return [
    h('section', { class: 'card cautions', id: 'cautions' },
      h('h2', {}, t('safety.title')),
      h('ul', {},
        h('li', {}, h('strong', {}, t('safety.danger')), ' ', t('safety.danger_more')),
        h('li', {}, t('safety.protocol')),
        h('li', {}, t('safety.consent')),
        h('li', {}, t('safety.sensitive')),
        h('li', {}, t('safety.evidence'))),
      h('button', { class: 'button primary', id: 'cautions-ok', onclick: () => go('trip') }, t('safety.ok'))),
  ];
}

function tripHead() {
  const m = state.trip.manifest;
  return h('section', { class: 'card trip-head' },
    h('h2', {}, m.team),
    h('p', {}, t('trip.due', { due: dateTime(m.due_at), expires: dateTime(m.expires_at) })),
    h('p', { id: 'fix', class: 'fix' }, fixText()),
    h('p', { id: 'storage', class: 'storage' }, ''),
    zoneSetting(),
    h('div', { class: 'actions' },
      h('button', { class: 'button', id: 'to-trips', onclick: () => go('home') }, t('nav.trips')),
      state.view === 'send' ? h('button', { class: 'button', id: 'to-stops', onclick: () => go('trip') }, t('nav.stops')) : null,
      h('button', { class: 'button', onclick: () => go('cautions') }, t('nav.safety')),
      h('button', { class: 'button primary', id: 'go-send', onclick: () => go('send') }, t('nav.send'))));
}

/** The trip's camera zone, shown and changeable: the offset that places a photo
 * time written with neither offset nor GPS time. */
function zoneSetting() {
  const z = cameraZone(state.trip);
  const input = h('input', { id: 'camera-zone', value: z.offset, size: 6, 'aria-label': t('trip.camera_zone_label') });
  const save = async () => {
    if (offsetMinutes(input.value) === null) { say('error', t('trip.camera_zone_bad')); return; }
    state.trip.camera_zone = { offset: input.value.trim(), name: '' };
    await store.putTrip(state.trip);
    say('ok', t('trip.camera_zone_saved', { offset: input.value.trim() }));
  };
  return h('p', { class: 'camera-zone' },
    h('span', { id: 'camera-zone-shown' }, t('trip.camera_zone', { offset: z.offset, name: z.name })), ' ',
    input, ' ',
    h('button', { class: 'button small', id: 'camera-zone-save', onclick: save }, t('trip.camera_zone_save')));
}

/** A clearing found on the way: not a stop of the bundle. */
const NEW_CLEARING = { kind: 'new_clearing', code: null };

function newClearings() {
  const reps = state.reports.filter((r) => r.report.target.kind === 'new_clearing');
  return h('section', { class: 'card', id: 'new-clearings' },
    h('h2', {}, t('clearing.title')),
    h('p', {}, t('clearing.help')),
    h('button', { class: 'button primary', id: 'new-clearing', onclick: () => startForm(NEW_CLEARING, null) }, t('clearing.record')),
    reps.length === 0 ? null : h('ul', { class: 'list' }, reps.map((r) => h('li', { class: 'report', 'data-report': r.report_id },
      h('p', {}, h('strong', {}, r.report.cause ? token('cause', r.report.cause) : ''),
        ` · ${t('stop.area_value', { n: number(r.report.area_ha, 2) })}`),
      h('p', {}, t('report.line', { when: dateTime(r.report.recorded_at), photos: r.report.photos.length })),
      r.report.supersedes ? h('p', {}, t('report.corrects')) : null,
      h('p', {}, h('span', { class: `badge ${r.state}` }, t(`send_state.${r.state}`)), r.reason ? ` ${r.reason}` : ''),
      h('button', { class: 'button small', 'data-correct': r.report_id, onclick: () => startForm(NEW_CLEARING, r.report) }, t('report.correct'))))));
}

function viewTrip() {
  const stops = stopsOf(state.trip);
  return [
    tripHead(),
    h('section', { class: 'card' },
      h('h2', {}, t('map.title')),
      h('div', { id: 'map', class: 'map', role: 'region', 'aria-label': t('map.label') }),
      h('p', { class: 'legend' }, t('map.legend'))),
    h('section', { class: 'card' },
      h('h2', {}, t('trip.stops_title')),
      h('ol', { class: 'list stops', id: 'stops' }, stops.map((s, i) => {
        const st = stopState(s.code);
        return h('li', { 'data-code': s.code, 'data-state': st },
          h('button', { class: 'row', onclick: () => openStop(s.code) },
            h('strong', {}, `${i + 1}. ${s.code}`),
            h('span', {}, s.kind === 'event' ? t('stop.kind_event', { area: number(s.area_ha, 2) }) : t('stop.kind_control')),
            h('span', { class: `badge ${st}` }, t(`state.${st}`))),
          h('button', { class: 'button danger small', 'data-safety': s.code, onclick: () => quickSafety(s) }, t('stop.safety_button')));
      }))),
    newClearings(),
  ];
}

// "high"/"low" alert confidence ("confirmed" is only ever a visit's outcome).
function confidenceText(s) {
  const level = s.confidence_level ?? confidenceLevel(s.confidence);
  return level ? t(`stop.confidence_${level}`) : s.confidence;
}

function viewStop() {
  const s = state.stop;
  const reps = reportsFor(s.code);
  const facts = s.kind === 'event'
    ? [
      [t('stop.first_detected'), date(s.first_detected)],
      [t('stop.last_detected'), date(s.last_detected)],
      [t('stop.area'), t('stop.area_value', { n: number(s.area_ha, 2) })],
      [t('stop.sources'), s.sources.join(', ')],
      // A trip kept from an older app has only the word: its level is read here.
      [t('stop.confidence'), h('span', { id: 'stop-confidence' }, confidenceText(s))],
    ]
    : [];
  facts.push([t('stop.target'), `${s.lat.toFixed(6)}, ${s.lon.toFixed(6)}`]);
  const tu = toUtm(s.lat, s.lon);
  if (tu) {
    facts.push([t('stop.target_utm'), h('span', { id: 'target-utm', 'data-utm': formatUtm(tu, 3) }, formatUtm(tu))]);
    facts.push([t('stop.target_mgrs'), h('span', { id: 'target-mgrs', 'data-mgrs': toMgrs(s.lat, s.lon, 5) }, groupMgrs(toMgrs(s.lat, s.lon, 5)))]);
  }
  return [
    h('section', { class: 'card' },
      h('h2', { id: 'stop-title' }, s.kind === 'event' ? t('stop.title_event', { code: s.code }) : t('stop.title_control', { code: s.code })),
      h('dl', { class: 'facts' }, facts.map(([k, v]) => [h('dt', {}, k), h('dd', {}, v)])),
      h('div', { class: 'way' },
        h('span', { id: 'arrow', class: 'arrow', 'aria-hidden': 'true' }, '↑'),
        h('p', { id: 'way', 'aria-live': 'polite' }, wayText(s))),
      h('p', { id: 'fix', class: 'fix' }, fixText()),
      h('p', { id: 'fix-grid', class: 'fix' }, fixGridText()),
      h('p', { id: 'storage', class: 'storage' }, ''),
      h('div', { class: 'actions' },
        h('button', { class: 'button', id: 'to-stops', onclick: () => go('trip') }, t('nav.stops')),
        h('button', { class: 'button primary', id: 'record', onclick: () => startForm(s, null) }, t('stop.record')),
        h('button', { class: 'button danger', onclick: () => quickSafety(s) }, t('stop.safety_button')))),
    h('section', { class: 'card' },
      h('h2', {}, t('stop.reports_title')),
      reps.length === 0 ? h('p', {}, t('stop.no_reports'))
        : h('ul', { class: 'list' }, reps.map((r) => h('li', { class: 'report', 'data-report': r.report_id },
          h('p', {}, h('strong', {}, token('outcome', r.report.outcome)),
            r.report.reason ? ` · ${token('reason', r.report.reason)}` : '',
            r.report.cause ? ` · ${token('cause', r.report.cause)}` : ''),
          h('p', {}, t('report.line', { when: dateTime(r.report.recorded_at), photos: r.report.photos.length })),
          r.report.supersedes ? h('p', {}, t('report.corrects')) : null,
          h('p', {}, h('span', { class: `badge ${r.state}` }, t(`send_state.${r.state}`)), r.reason ? ` ${r.reason}` : ''),
          h('button', { class: 'button small', 'data-correct': r.report_id, onclick: () => startForm(s, r.report) }, t('report.correct')))))),
  ];
}

function choiceGroup(name, legend, values, group, selected) {
  return h('fieldset', { class: 'choices', id: `group-${name}` },
    h('legend', {}, legend),
    values.map((v) => h('label', { class: 'choice' },
      h('input', { type: 'radio', name, value: v, checked: v === selected, onchange: () => { state.form[name] = v; showGroups(); } }),
      h('span', {}, token(group, v)))));
}

function showGroups() {
  const f = state.form;
  const show = (id, on) => { const el = document.getElementById(id); if (el) el.hidden = !on; };
  show('group-false_alarm_reason', f.outcome === 'false_alarm');
  show('group-not_reached_reason', f.outcome === 'not_reached');
  show('group-cause', takesCause(f.outcome));
  show('group-area', takesArea(state.stop.kind, f.outcome));
}

function photoList() {
  const f = state.form;
  return h('ul', { class: 'list photos', id: 'photo-list' },
    [...f.keptPhotos.map((p) => ({ ...p, kept: true })), ...f.newPhotos].map((p) => h('li', { 'data-sha': p.sha256 },
      p.bytes ? h('img', { src: URL.createObjectURL(new Blob([p.bytes], { type: 'image/jpeg' })), alt: t('form.photo_alt', { name: p.original_name }) }) : null,
      h('span', {}, `${p.original_name} · ${bytesText(p.size)}`),
      h('span', { class: 'exif', 'data-lat': p.lat ?? '', 'data-lon': p.lon ?? '' },
        p.lat !== null && p.lat !== undefined ? t('form.photo_gps', { lat: p.lat.toFixed(6), lon: p.lon.toFixed(6) }) : t('form.photo_no_gps')),
      h('button', { class: 'button small', type: 'button', onclick: () => {
        f.keptPhotos = f.keptPhotos.filter((q) => q.sha256 !== p.sha256);
        f.newPhotos = f.newPhotos.filter((q) => q.sha256 !== p.sha256);
        document.getElementById('photo-list').replaceWith(photoList());
      } }, t('form.photo_remove')))));
}

async function onPhotos(e) {
  const f = state.form;
  for (const file of e.target.files) {
    const bytes = new Uint8Array(await file.arrayBuffer());
    if (bytes.length > MAX_PHOTO_BYTES) { say('error', t('problem.photo_large', { name: file.name })); continue; }
    if (!(bytes[0] === 0xff && bytes[1] === 0xd8 && bytes[2] === 0xff)) { say('error', t('problem.photo_not_jpeg', { name: file.name })); continue; }
    const sha256 = await sha256Hex(bytes);
    if ([...f.keptPhotos, ...f.newPhotos].some((p) => p.sha256 === sha256)) continue;
    const meta = await photoMeta(bytes, offsetMinutes(cameraZone(state.trip).offset));
    f.newPhotos.push({ sha256, bytes, size: bytes.length, original_name: [...file.name].slice(0, 255).join(''), ...meta });
  }
  e.target.value = '';
  document.getElementById('photo-list').replaceWith(photoList());
  const n = document.getElementById('notice');
  if (n) n.remove();
  if (state.notice) document.querySelector('#record-form h2').after(notice());
}

function viewForm() {
  const f = state.form;
  const c = state.trip.checklist;
  const s = state.stop;
  const clearing = s.kind === 'new_clearing';
  let title = f.supersedes ? t('form.title_correct', { code: s.code }) : t('form.title', { code: s.code });
  if (clearing) title = f.supersedes ? t('clearing.title_correct') : t('clearing.form_title');
  return [
    h('form', { class: 'card', id: 'record-form', onsubmit: (e) => { e.preventDefault(); saveForm(); } },
      h('h2', {}, title),
      notice(),
      clearing ? null : choiceGroup('outcome', t('form.outcome'), outcomesFor(c, s.kind), 'outcome', f.outcome),
      choiceGroup('false_alarm_reason', t('form.reason'), c.false_alarm_reasons, 'reason', f.false_alarm_reason),
      choiceGroup('not_reached_reason', t('form.reason'), c.not_reached_reasons, 'reason', f.not_reached_reason),
      choiceGroup('cause', t('form.cause'), c.causes, 'cause', f.cause),
      clearing || s.kind === 'control' ? h('div', { id: 'group-area' },
        h('label', { for: 'area' }, t(clearing ? 'clearing.area' : 'form.area_control')),
        h('input', { id: 'area', type: 'text', inputmode: 'decimal', autocomplete: 'off', maxlength: '12', value: f.area_ha ?? '', oninput: (e) => { f.area_ha = e.target.value; } })) : null,
      h('label', { for: 'notes' }, t('form.notes')),
      h('textarea', { id: 'notes', rows: '4', maxlength: '4000', oninput: (e) => { f.notes = e.target.value; } }, f.notes),
      h('fieldset', { class: 'photos-box' },
        h('legend', {}, t('form.photos', { min: c.min_photos_confirmed })),
        h('label', { for: 'photo-camera', class: 'button' }, t('form.photo_camera')),
        h('input', { type: 'file', id: 'photo-camera', accept: 'image/jpeg', capture: 'environment', onchange: onPhotos }),
        h('label', { for: 'photo-gallery', class: 'button' }, t('form.photo_gallery')),
        h('input', { type: 'file', id: 'photo-gallery', accept: 'image/jpeg', multiple: true, onchange: onPhotos }),
        photoList()),
      h('p', { class: 'fix' }, t('form.position'), ' ', h('span', { id: 'form-fix' }, fixText())),
      h('div', { class: 'actions' },
        h('button', { type: 'button', class: 'button', onclick: () => { state.notice = null; go(clearing ? 'trip' : 'stop'); } }, t('form.cancel')),
        h('button', { type: 'submit', class: 'button primary', id: 'save', disabled: state.busy, onclick: (e) => { e.preventDefault(); if (!state.busy) saveForm(); } }, t('form.save')))),
  ];
}

async function viewSend() {
  const list = unsent();
  const kept = await sending.pending(state.trip.bundle_id);
  const refused = state.reports.filter((r) => r.state === 'rejected');
  return [
    tripHead(),
    h('section', { class: 'card' },
      h('h2', {}, t('send.title')),
      notice(),
      h('p', { id: 'unsent-count' }, t('send.unsent', { n: list.length })),
      refused.length ? h('p', {}, t('send.refused', { n: refused.length })) : null,
      h('h3', {}, t('send.file_title')),
      h('p', {}, t('send.file_help')),
      h('button', { class: 'button', id: 'save-file', disabled: list.length === 0 || state.busy, onclick: saveReturnFile }, t('send.file_button')),
      h('h3', {}, t('send.online_title')),
      h('p', {}, t('send.online_help')),
      h('label', { for: 'team-token' }, t('send.token')),
      h('input', { id: 'team-token', type: 'password', autocomplete: 'off', value: state.trip.team_token || '' }),
      kept ? h('p', { id: 'send-kept' }, t('send.kept', { n: kept.reportIds.length, size: bytesText(kept.size) })) : null,
      h('button', { class: 'button primary', id: 'send-now', disabled: (list.length === 0 && !kept) || state.busy, onclick: sendNow }, t('send.online_button')),
      h('p', { id: 'send-progress', 'aria-live': 'polite' }, ''),
      state.sendResult ? h('ul', { class: 'list', id: 'send-results' }, state.sendResult.map((r) => h('li', { 'data-report': r.report_id, 'data-status': r.status },
        h('span', { class: `badge ${r.status}` }, t(`send_state.${r.status}`)), ' ', r.code || '', r.reason ? ` — ${r.reason}` : ''))) : null),
  ];
}

async function render() {
  const views = { home: viewHome, cautions: viewCautions, trip: viewTrip, stop: viewStop, form: viewForm, send: viewSend };
  const body = await views[state.view]();
  const m = main();
  dropMap();
  m.replaceChildren(header(), ...(state.view === 'form' || state.view === 'send' ? [] : [notice()]).filter(Boolean), ...body);
  if (state.view === 'form') showGroups();
  if (state.view === 'trip') {
    drawMap(document.getElementById('map'), state.trip, stopsOf(state.trip), {
      tileUrl: await store.getSetting('tile_url'), northLabel: t('map.north'), onStop: openStop,
    });
    showPhone(state.fix);
  }
  if (state.view !== 'home') storageLine();
  updateWay();
  document.title = t('app_name');
}

// ---------------------------------------------------------------- actions

async function onBundleChosen(e) {
  const file = e.target.files[0];
  e.target.value = '';
  if (!file) return;
  try {
    await keepTrip(new Uint8Array(await file.arrayBuffer()), null);
  } catch (err) {
    bundleProblem(err);
    go('home');
  }
}

/** Keeps a checked trip on the phone (with the team token it came with, or
 * the one it had) and opens it. */
async function keepTrip(bytes, teamToken) {
  const trip = await openBundle(bytes, new Date());
  const old = await store.trip(trip.bundle_id);
  trip.team_token = teamToken || (old ? old.team_token : undefined);
  await store.putTrip(trip);
  say('ok', t('home.opened', { team: trip.manifest.team, stops: trip.route.length }));
  await openTrip(trip.bundle_id, true);
}

function bundleProblem(err) {
  if (err instanceof BundleError) say('error', t(err.key, err.params), err.detail);
  else say('error', t('bundle.bad_zip'), String(err && err.message ? err.message : err));
}

/** Exchanges a pairing code for its trip: the bundle is checked as a trip
 * file is (checksums, expiry) before it is kept. */
async function pair(code) {
  const typed = String(code || '').trim();
  state.busy = true;
  state.view = 'home';
  say('ok', t('pair.working'));
  await render();
  let r;
  try {
    r = await fetch('/api/v1/pairings/redeem', {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ code: typed }),
      credentials: 'omit',
      cache: 'no-store',
    });
  } catch (_) {
    state.busy = false;
    say('error', t('pair.offline'));
    return go('home');
  }
  try {
    if (!r.ok) {
      const doc = await r.json().catch(() => ({}));
      const key = doc.refusal ? `pair.refused.${doc.refusal}` : 'pair.failed';
      say('error', t(key), doc.refusal ? '' : (doc.error || String(r.status)));
      return go('home');
    }
    const bytes = new Uint8Array(await r.arrayBuffer());
    state.busy = false;
    await keepTrip(bytes, r.headers.get('Groundproof-Team-Token'));
  } catch (err) {
    bundleProblem(err);
    go('home');
  } finally {
    state.busy = false;
  }
}

async function loadReports() {
  state.reports = await store.reportsOf(state.trip.bundle_id);
}

async function openTrip(id, keepNotice = false) {
  state.trip = await store.trip(id);
  if (!state.trip) return go('home');
  if (!keepNotice) state.notice = null;
  await loadReports();
  await store.setSetting('last_trip', id);
  startWatching();
  go('cautions');
}

function openStop(code) {
  state.stop = stopsOf(state.trip).find((s) => s.code === code);
  state.notice = null;
  go('stop');
}

function startForm(stop, base) {
  state.stop = stop;
  state.notice = null;
  state.form = {
    supersedes: base ? base.report_id : null,
    outcome: base ? base.outcome : null,
    false_alarm_reason: base && base.outcome === 'false_alarm' ? base.reason : null,
    not_reached_reason: base && base.outcome === 'not_reached' ? base.reason : null,
    cause: base ? base.cause : null,
    notes: base ? base.notes : '',
    keptPhotos: base ? base.photos.map((p) => ({ ...p, size: 0 })) : [],
    newPhotos: [],
    area_ha: base && base.area_ha !== null ? String(base.area_ha) : '',
  };
  // A clearing found on the way is confirmed by definition.
  if (stop.kind === 'new_clearing') state.form.outcome = 'confirmed';
  if (base) {
    // Sizes of kept photos, for the list.
    Promise.all(state.form.keptPhotos.map(async (p) => { const s = await store.photo(p.sha256); p.size = s ? s.size : 0; }))
      .then(() => { const el = document.getElementById('photo-list'); if (el) el.replaceWith(photoList()); });
  }
  go('form');
}

function target(stop) {
  if (stop.kind === 'new_clearing') return { kind: 'new_clearing' };
  return stop.kind === 'event' ? { kind: 'event', code: stop.code, event_id: stop.event_id } : { kind: 'control', code: stop.code };
}

/** The phone's position with its accuracy; else the first photo's EXIF position. */
function position(photos = []) {
  if (state.fix) return { lat: state.fix.lat, lon: state.fix.lon, accuracy_m: state.fix.accuracy, source: 'manual' };
  const p = photos.find((x) => x.lat !== null && x.lat !== undefined && x.lon !== null && x.lon !== undefined);
  return p ? { lat: p.lat, lon: p.lon, accuracy_m: null, source: 'photo_gps' } : null;
}

/** Builds, checks and stores a report; true when it is on the phone. */
async function storeReport(fields, newPhotos) {
  const now = new Date().toISOString();
  const report = makeReport({
    report_id: crypto.randomUUID(),
    bundle_id: state.trip.bundle_id,
    target: target(state.stop),
    position: position(fields.photos || []),
    observed_at: now,
    recorded_at: now,
    ...fields,
  });
  try {
    validateReport(report, state.trip.checklist);
  } catch (err) {
    if (err instanceof ReportProblem) {
      const hint = err.key === 'problem.required_position' ? ` ${t('position.waiting')}` : '';
      say('error', t(err.key, err.params) + hint);
      return false;
    }
    throw err;
  }
  const size = new TextEncoder().encode(JSON.stringify(report)).length
    + newPhotos.reduce((s, p) => s + p.bytes.length, 0);
  // Refused before anything is written when it would not fit: what is
  // saved already stays as it is.
  const room = await freeRoom();
  if (room && size + STORAGE_MARGIN > room.free) {
    say('error', t('problem.storage_no_room', { need: bytesText(size), free: bytesText(room.free) }));
    return false;
  }
  try {
    await store.saveReport({ report_id: report.report_id, bundle_id: report.bundle_id, report, state: 'unsent', reason: null, size },
      newPhotos.map((p) => ({ sha256: p.sha256, bytes: p.bytes })));
  } catch (err) {
    const full = err && err.name === 'QuotaExceededError';
    say('error', t(full ? 'problem.storage_full' : 'problem.not_saved'), String(err && err.message ? err.message : err));
    return false;
  }
  await loadReports();
  return true;
}

async function saveForm() {
  const f = state.form;
  state.busy = true;
  const photos = [...f.keptPhotos, ...f.newPhotos].map((p) => ({
    sha256: p.sha256, original_name: p.original_name, taken_at: p.taken_at ?? null, lat: p.lat ?? null, lon: p.lon ?? null, direction_deg: p.direction_deg ?? null,
  }));
  const reason = f.outcome === 'false_alarm' ? f.false_alarm_reason : f.outcome === 'not_reached' ? f.not_reached_reason : null;
  // Typed with a decimal comma or point; anything else is not a number (NaN, refused by the check).
  const areaField = document.getElementById('area');
  if (areaField) f.area_ha = areaField.value;
  const area = takesArea(state.stop.kind, f.outcome) ? String(f.area_ha ?? '').trim().replace(',', '.') : '';
  const ok = await storeReport({
    area_ha: area === '' ? null : (/^\d+(\.\d+)?$/.test(area) ? Number(area) : NaN),
    supersedes: f.supersedes,
    outcome: f.outcome,
    reason,
    cause: takesCause(f.outcome) ? f.cause : null,
    notes: f.notes,
    photos,
  }, f.newPhotos).finally(() => { state.busy = false; });
  if (ok && state.stop.kind === 'new_clearing') {
    say('ok', t('clearing.saved'));
    go('trip');
  } else if (ok) {
    say('ok', t('form.saved', { code: state.stop.code }));
    go('stop');
  } else {
    go('form');
  }
}

async function quickSafety(stop) {
  state.stop = stop;
  if (!state.trip.checklist.outcomes.includes('not_reached') || !state.trip.checklist.not_reached_reasons.includes('safety') || !state.fix) {
    startForm(stop, null);
    state.form.outcome = 'not_reached';
    state.form.not_reached_reason = 'safety';
    return go('form');
  }
  const ok = await storeReport({ outcome: 'not_reached', reason: 'safety' }, []);
  if (ok) say('ok', t('form.saved_safety', { code: stop.code }));
  go(state.view === 'stop' ? 'stop' : 'trip');
}

async function buildReturn() {
  const list = unsent();
  return packReturn(state.trip, list.map((r) => r.report), async (sha) => {
    const p = await store.photo(sha);
    return p ? p.bytes : null;
  });
}

async function saveReturnFile() {
  state.busy = true;
  try {
    const { bytes } = await buildReturn();
    const stamp = new Date().toISOString().replace(/[:]/g, '').slice(0, 15);
    const a = h('a', { href: URL.createObjectURL(new Blob([bytes], { type: 'application/zip' })), download: `return-${stamp}.zip` });
    document.body.append(a);
    a.click();
    a.remove();
    say('ok', t('send.file_done'));
  } catch (err) {
    say('error', t('send.pack_failed'), String(err && err.message ? err.message : err));
  } finally {
    state.busy = false;
  }
  go('send');
}

/** The package to send for this trip: the one kept from an interrupted
 * send (same bytes, so the server resumes it), or a new one of the unsent
 * reports, kept on the phone before the first byte goes. */
async function packageToSend() {
  const kept = await sending.pending(state.trip.bundle_id);
  if (kept) return kept;
  const { bytes, reportIds } = await buildReturn();
  return sending.keepPending(state.trip.bundle_id, {
    bundle_id: state.trip.bundle_id, bytes, size: bytes.length, sha256: await sha256Hex(bytes), reportIds, url: null,
  });
}

function showProgress(text, offset, size) {
  const el = document.getElementById('send-progress');
  if (!el) return;
  el.textContent = text;
  if (offset !== undefined) {
    el.dataset.offset = String(offset);
    el.dataset.size = String(size);
  }
}

/** Marks each report by the server's answer and shows the results. */
async function takeAnswer(doc, reportIds) {
  const changes = new Map();
  const results = [];
  for (const res of doc.results || []) {
    if (!reportIds.includes(res.report_id)) continue;
    const st = res.status === 'accepted' || res.status === 'duplicate' ? res.status : 'rejected';
    changes.set(res.report_id, { state: st, reason: res.reason || null });
    const entry = state.reports.find((x) => x.report_id === res.report_id);
    results.push({ report_id: res.report_id, status: st, reason: res.reason || '', code: entry ? entry.report.target.code : '' });
  }
  await store.markReports(changes);
  await loadReports();
  state.sendResult = results;
  say('ok', t('send.done', {
    accepted: results.filter((x) => x.status === 'accepted').length,
    duplicate: results.filter((x) => x.status === 'duplicate').length,
    rejected: results.filter((x) => x.status === 'rejected').length,
  }));
}

async function sendNow() {
  const field = document.getElementById('team-token');
  const tokenValue = field ? field.value.trim() : (state.trip.team_token || '');
  state.trip.team_token = tokenValue;
  await store.putTrip(state.trip);
  state.busy = true;
  state.sendResult = null;
  state.notice = null;
  await render();
  try {
    const pkg = await packageToSend();
    const doc = await sending.send(pkg, tokenValue, {
      progress: (offset, size) => showProgress(t('send.progress', { sent: bytesText(offset), size: bytesText(size) }), offset, size),
      waiting: (tries, ms) => showProgress(t('send.retrying', { seconds: number(ms / 1000, 0), tries })),
    });
    if (!doc) {
      say('error', t('send.offline'));
      return;
    }
    await takeAnswer(doc, pkg.reportIds);
  } catch (err) {
    if (err instanceof sending.SendRefused) {
      const key = err.status === 401 || err.status === 403 ? 'send.token_refused' : 'send.refused_whole';
      // The package stays kept: a new token sends the same bytes.
      say('error', t(key), err.message);
    } else {
      say('error', t('send.pack_failed'), String(err && err.message ? err.message : err));
    }
  } finally {
    state.busy = false;
    // Not over a form being filled in: its notice shows on the next view.
    if (state.view !== 'form') render();
  }
}

/** After the app was closed mid-send: the kept package of the open trip
 * goes on from where the server stands. */
async function resumeSend() {
  if (!state.trip || !(await sending.pending(state.trip.bundle_id))) return;
  await sendNow();
}

// ---------------------------------------------------------------- start

/** A QR code opens `/field/#pair=CODE`: the code is taken once and
 * removed from the address, so a reload does not spend it again. */
function pairingFromAddress() {
  const code = new URLSearchParams(location.hash.slice(1)).get('pair');
  if (code) history.replaceState(null, '', location.pathname + location.search);
  return code;
}

async function start() {
  if (!window.isSecureContext || !window.crypto || !crypto.subtle || !window.indexedDB) {
    // Without a secure context there is no WebCrypto and no service worker:
    // say so instead of failing later.
    await setLanguage(pickLanguage(null));
    main().replaceChildren(h('div', { class: 'notice error', role: 'alert', id: 'notice' }, h('p', {}, t('app.insecure'))));
    document.body.dataset.ready = 'insecure';
    return;
  }
  await setLanguage(pickLanguage(await store.getSetting('lang')));
  if ('serviceWorker' in navigator) {
    try {
      await navigator.serviceWorker.register('./sw.js', { scope: './' });
    } catch (_) { /* the app still works online */ }
  }
  if (navigator.storage && navigator.storage.persist) navigator.storage.persist().catch(() => {});
  const pairing = pairingFromAddress();
  // The app already open when a QR link is followed: only the hash changes.
  window.addEventListener('hashchange', () => {
    const code = pairingFromAddress();
    if (code) pair(code);
  });
  const last = await store.getSetting('last_trip');
  if (pairing) await pair(pairing);
  else if (last && (await store.trip(last))) await openTrip(last);
  else await render();
  document.body.dataset.ready = 'yes';
  if (!pairing) resumeSend();
}

start();
