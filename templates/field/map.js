// The trip on a map (vendored Leaflet 1.9.4, the global `L` from
// ./vendor/leaflet.js): event footprints, the route from the start through
// the stops in visit order, control points, the start, and the phone's
// position with its accuracy circle. No base layer by default: a plain
// background with a scale bar and a north arrow, so nothing is fetched.
// An organisation may set a tile address on its own server (a path such as
// `/tiles/{z}/{x}/{y}.png`; the page's security policy loads images from
// this server only).

let map = null;
let phone = null;
let accuracy = null;

const STYLE = {
  footprint: { color: '#b3261e', weight: 2, fillOpacity: 0.25 },
  route: { color: '#0b3d2e', weight: 3, dashArray: '6 6' },
  event: { radius: 7, color: '#b3261e', weight: 2, fillColor: '#fff', fillOpacity: 1 },
  control: { radius: 6, color: '#1a4e8a', weight: 2, fillColor: '#cfe0f5', fillOpacity: 1 },
  start: { radius: 8, color: '#000', weight: 3, fillColor: '#f2c94c', fillOpacity: 1 },
  phone: { radius: 7, color: '#fff', weight: 2, fillColor: '#1a73e8', fillOpacity: 1 },
  accuracy: { color: '#1a73e8', weight: 1, fillOpacity: 0.12 },
};

/** Whether a tile address is one this app may use: a path on this server with {z}, {x} and {y}. */
export function tileUrlAllowed(url) {
  return typeof url === 'string' && url.startsWith('/') && !url.startsWith('//')
    && ['{z}', '{x}', '{y}'].every((p) => url.includes(p)) && url.length <= 300;
}

function northArrow(label) {
  const Ctl = L.Control.extend({
    onAdd() {
      const el = L.DomUtil.create('div', 'north-arrow');
      el.setAttribute('role', 'img');
      el.setAttribute('aria-label', label);
      el.textContent = '▲ N';
      return el;
    },
  });
  return new Ctl({ position: 'topright' });
}

/** Removes the map (before its element leaves the page). */
export function dropMap() {
  if (map) map.remove();
  map = null;
  phone = null;
  accuracy = null;
}

/**
 * Draws the trip into `el`. `stops` are the stops in visit order ({code,
 * kind, lat, lon}); `onStop(code)` is called when one is tapped.
 */
export function drawMap(el, trip, stops, { tileUrl = null, northLabel = 'North', onStop = () => {} } = {}) {
  dropMap();
  if (typeof L === 'undefined') return null;
  map = L.map(el, { attributionControl: false, zoomSnap: 0.5 });
  if (tileUrlAllowed(tileUrl)) L.tileLayer(tileUrl, { maxZoom: 19 }).addTo(map);
  L.control.scale({ imperial: false, position: 'bottomleft' }).addTo(map);
  northArrow(northLabel).addTo(map);
  const bounds = L.latLngBounds([]);
  let footprints = 0;
  for (const e of trip.events) {
    const latlngs = e.footprint.map((poly) => poly.map((ring) => ring.map(([lon, lat]) => [lat, lon])));
    const shape = L.polygon(latlngs, STYLE.footprint).addTo(map);
    bounds.extend(shape.getBounds());
    footprints += 1;
  }
  const start = [trip.start.lat, trip.start.lon];
  const line = [start, ...stops.map((s) => [s.lat, s.lon])];
  L.polyline(line, STYLE.route).addTo(map);
  L.circleMarker(start, STYLE.start).bindTooltip(trip.start.name || '').addTo(map);
  bounds.extend(start);
  for (const s of stops) {
    const m = L.circleMarker([s.lat, s.lon], s.kind === 'control' ? STYLE.control : STYLE.event)
      .bindTooltip(s.code)
      .on('click', () => onStop(s.code))
      .addTo(map);
    m.getElement()?.setAttribute('data-code', s.code);
    bounds.extend([s.lat, s.lon]);
  }
  map.fitBounds(bounds.pad(0.1), { maxZoom: 17 });
  el.dataset.footprints = String(footprints);
  el.dataset.stops = String(stops.length);
  el.dataset.controls = String(stops.filter((s) => s.kind === 'control').length);
  el.dataset.routePoints = String(line.length);
  el.dataset.tiles = tileUrlAllowed(tileUrl) ? 'on' : 'off';
  return map;
}

/** Moves the phone's dot and accuracy circle (metres). */
export function showPhone(fix) {
  if (!map || !fix) return;
  const at = [fix.lat, fix.lon];
  if (!phone) {
    accuracy = L.circle(at, { ...STYLE.accuracy, radius: fix.accuracy }).addTo(map);
    phone = L.circleMarker(at, STYLE.phone).addTo(map);
  } else {
    accuracy.setLatLng(at).setRadius(fix.accuracy);
    phone.setLatLng(at);
  }
  const el = map.getContainer();
  el.dataset.phone = `${fix.lat.toFixed(6)},${fix.lon.toFixed(6)}`;
  el.dataset.accuracy = String(fix.accuracy);
}
