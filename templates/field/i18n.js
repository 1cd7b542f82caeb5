// Message catalogues: every word the app shows comes from the Fluent files
// `i18n/<lang>/field.ftl` (the server serves them from `templates/i18n/`, the
// same catalogues its own pages read; see DEVELOPERS.md "Languages"). The
// language is the saved choice, or else the first of the phone's languages we
// have, or else English; a missing message falls back to English, then to its
// key. Keys are written as before ("pair.refused.used"); a Fluent id cannot hold
// a dot, so "." becomes "-" ("pair-refused-used").

import { FluentBundle, FluentResource } from './vendor/fluent-bundle/index.js';

export const LANGUAGES = ['en', 'es', 'fr', 'pt', 'id'];
let current = 'en';
let bundle = null;
let english = null;

async function load(lang) {
  const r = await fetch(`./i18n/${lang}/field.ftl`);
  if (!r.ok) throw new Error(`catalogue ${lang}: ${r.status}`);
  const b = new FluentBundle(lang, { useIsolating: false });
  const errors = b.addResource(new FluentResource(await r.text()));
  if (errors.length) throw new Error(`catalogue ${lang}: ${errors[0]}`);
  return b;
}

const fluentId = (key) => key.replace(/\./g, '-');

/** The best language for this phone (saved choice first). */
export function pickLanguage(saved, preferred = navigator.languages || [navigator.language]) {
  if (LANGUAGES.includes(saved)) return saved;
  for (const tag of preferred) {
    const base = String(tag || '').toLowerCase().split('-')[0];
    if (base === 'in') return 'id'; // the old code for Indonesian
    if (LANGUAGES.includes(base)) return base;
  }
  return 'en';
}

export async function setLanguage(lang) {
  if (!english) english = await load('en');
  bundle = lang === 'en' ? english : await load(lang);
  current = lang;
  document.documentElement.lang = lang;
}

export function language() {
  return current;
}

function format(b, id, params) {
  const m = b && b.getMessage(id);
  if (!m || !m.value) return undefined;
  const errors = [];
  const text = b.formatPattern(m.value, params, errors);
  return errors.length ? undefined : text;
}

/** The message `key` with its variables (`{ $name }`) filled from `params`. */
export function t(key, params = {}) {
  const id = fluentId(key);
  return format(bundle, id, params) ?? format(english, id, params) ?? key;
}

/** Label of a checklist token (outcome, reason, cause); an unknown token is shown as written. */
export function token(group, value) {
  const id = fluentId(`${group}.${value}`);
  if ((bundle && bundle.hasMessage(id)) || (english && english.hasMessage(id))) return t(`${group}.${value}`);
  return value.replace(/_/g, ' ');
}

export function number(v, digits = 0) {
  return new Intl.NumberFormat(current, { maximumFractionDigits: digits, minimumFractionDigits: digits }).format(v);
}

export function dateTime(iso) {
  return new Intl.DateTimeFormat(current, { dateStyle: 'medium', timeStyle: 'short' }).format(new Date(iso));
}

export function date(ymd) {
  return new Intl.DateTimeFormat(current, { dateStyle: 'medium', timeZone: 'UTC' }).format(new Date(`${ymd}T00:00:00Z`));
}
