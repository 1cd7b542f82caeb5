// The field app's service worker: on install it caches every file of the
// app (the list below is the whole app; the server's test checks it against
// what the server serves), and then answers from that cache first, so the
// app opens with no network at all, also after a reload or a restart.
// Requests outside the app (the API) always go to the network.

const VERSION = 'groundproof-field-1';
const FILES = [
  './',
  './index.html',
  './app.js',
  './app.css',
  './bundle.js',
  './coords.js',
  './crypto.js',
  './exif.js',
  './geo.js',
  './i18n.js',
  './map.js',
  './report.js',
  './returnpkg.js',
  './send.js',
  './store.js',
  './icon.svg',
  './manifest.webmanifest',
  './i18n/en/field.ftl',
  './i18n/es/field.ftl',
  './i18n/fr/field.ftl',
  './i18n/id/field.ftl',
  './i18n/pt/field.ftl',
  './vendor/fluent-bundle/builtins.js',
  './vendor/fluent-bundle/bundle.js',
  './vendor/fluent-bundle/index.js',
  './vendor/fluent-bundle/memoizer.js',
  './vendor/fluent-bundle/resolver.js',
  './vendor/fluent-bundle/resource.js',
  './vendor/fluent-bundle/scope.js',
  './vendor/fluent-bundle/types.js',
  './vendor/fflate.js',
  './vendor/exifr.js',
  './vendor/leaflet.js',
  './vendor/leaflet.css',
];

self.addEventListener('install', (event) => {
  event.waitUntil(caches.open(VERSION).then((c) => c.addAll(FILES)).then(() => self.skipWaiting()));
});

self.addEventListener('activate', (event) => {
  event.waitUntil(caches.keys()
    .then((keys) => Promise.all(keys.filter((k) => k !== VERSION).map((k) => caches.delete(k))))
    .then(() => self.clients.claim()));
});

self.addEventListener('fetch', (event) => {
  const url = new URL(event.request.url);
  const scope = new URL(self.registration.scope);
  if (event.request.method !== 'GET' || url.origin !== scope.origin || !url.pathname.startsWith(scope.pathname)) return;
  event.respondWith(caches.open(VERSION).then(async (cache) => {
    const hit = await cache.match(event.request, { ignoreSearch: true });
    return hit || fetch(event.request);
  }));
});
