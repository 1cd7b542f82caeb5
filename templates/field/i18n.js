// Message catalogues: every word the app shows comes from i18n/<lang>.json
// (flat keys, `{name}` placeholders). The language is the saved choice, or
// else the first of the phone's languages we have, or else English; a
// missing key falls back to English, then to the key itself.

export const LANGUAGES = ['en', 'es', 'fr', 'pt', 'id'];
let current = 'en';
let messages = {};
let english = {};

async function load(lang) {
  const r = await fetch(`./i18n/${lang}.json`);
  if (!r.ok) throw new Error(`catalogue ${lang}: ${r.status}`);
  return r.json();
}

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
  if (!english.app_name) english = await load('en');
  messages = lang === 'en' ? english : await load(lang);
  current = lang;
  document.documentElement.lang = lang;
}

export function language() {
  return current;
}

/** The message `key` with `{name}` filled from `params`. */
export function t(key, params = {}) {
  const text = messages[key] ?? english[key] ?? key;
  return text.replace(/\{(\w+)\}/g, (_, k) => (params[k] === undefined ? `{${k}}` : String(params[k])));
}

/** Label of a checklist token (outcome, reason, cause); an unknown token is shown as written. */
export function token(group, value) {
  const key = `${group}.${value}`;
  if (messages[key] !== undefined || english[key] !== undefined) return t(key);
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
