// UTM and MGRS on WGS 84, ported line for line from the server's own
// formulas (server/src/planning/coords: transverse Mercator with Krüger's
// series to n^6 as in Karney 2011, the UTM zone rules with the Norway and
// Svalbard exceptions, MGRS letters as GeographicLib's MGRS class, digits
// truncated, never rounded). The browser test checks that the phone shows
// what the server computes, to the millimetre.

const A = 6378137.0;
const F = 1 / 298.257223563;
const K0 = 0.9996;
const FALSE_EASTING = 500000.0;
const FALSE_NORTHING_SOUTH = 10000000.0;

const N = F / (2 - F);
const E = Math.sqrt(F * (2 - F));
const n2 = N * N; const n3 = n2 * N; const n4 = n3 * N; const n5 = n4 * N; const n6 = n5 * N;
const BIG_A = (A / (1 + N)) * (1 + n2 / 4 + n4 / 64 + n6 / 256);
const ALPHA = [
  N / 2 - (2 * n2) / 3 + (5 * n3) / 16 + (41 * n4) / 180 - (127 * n5) / 288 + (7891 * n6) / 37800,
  (13 * n2) / 48 - (3 * n3) / 5 + (557 * n4) / 1440 + (281 * n5) / 630 - (1983433 * n6) / 1935360,
  (61 * n3) / 240 - (103 * n4) / 140 + (15061 * n5) / 26880 + (167603 * n6) / 181440,
  (49561 * n4) / 161280 - (179 * n5) / 168 + (6601661 * n6) / 7257600,
  (34729 * n5) / 80640 - (3418889 * n6) / 1995840,
  (212378941 * n6) / 319334400,
];

const rad = (d) => (d * Math.PI) / 180;

/** Longitude into -180..180 (180 stays 180). */
export function wrapDegrees(x) {
  const y = ((((x + 180) % 360) + 360) % 360) - 180;
  return y === -180 && x > 0 ? 180 : y;
}

function taup(tau) {
  const tau1 = Math.hypot(tau, 1);
  const sig = Math.sinh(E * Math.atanh((E * tau) / tau1));
  return tau * Math.hypot(sig, 1) - sig * tau1;
}

/** Transverse Mercator (lat0 = 0) of (lat, lon) about `lon0`: [easting, northing] before false offsets. */
function forward(lat, lon, lon0) {
  const phi = rad(lat);
  const lam = rad(wrapDegrees(lon - lon0));
  const tauP = taup(Math.tan(phi));
  const xiP = Math.atan2(tauP, Math.cos(lam));
  const etaP = Math.asinh(Math.sin(lam) / Math.hypot(tauP, Math.cos(lam)));
  let xi = xiP;
  let eta = etaP;
  ALPHA.forEach((a, j) => {
    const k = 2 * (j + 1);
    xi += a * Math.sin(k * xiP) * Math.cosh(k * etaP);
    eta += a * Math.cos(k * xiP) * Math.sinh(k * etaP);
  });
  return [K0 * BIG_A * eta, K0 * BIG_A * xi];
}

function latitudeBand(lat) {
  const ilat = Math.floor(lat);
  return Math.min(9, Math.max(-10, Math.floor((ilat + 80) / 8) - 10));
}

function okLatLon(lat, lon) {
  return Number.isFinite(lat) && lat >= -90 && lat <= 90 && Number.isFinite(lon);
}

/** The UTM zone of a point (null outside -80 <= lat < 84). */
export function utmZone(lat, lon) {
  if (!okLatLon(lat, lon) || !(lat >= -80 && lat < 84)) return null;
  let ilon = Math.floor(wrapDegrees(lon));
  if (ilon >= 180) ilon -= 360;
  let zone = Math.trunc((ilon + 186) / 6);
  const band = latitudeBand(lat);
  if (band === 7 && zone === 31 && ilon >= 3) zone = 32;
  else if (band === 9 && ilon >= 0 && ilon < 42) zone = 2 * Math.trunc((ilon + 183) / 12) + 1;
  return Math.min(60, Math.max(1, zone));
}

/** {zone, hemisphere: 'n'|'s', easting, northing}, or null outside UTM. */
export function toUtm(lat, lon) {
  const zone = utmZone(lat, lon);
  if (zone === null) return null;
  const south = lat < 0 || Object.is(lat, -0);
  const [x, y] = forward(lat, lon, 6 * zone - 183);
  return {
    zone, hemisphere: south ? 's' : 'n', easting: FALSE_EASTING + x, northing: (south ? FALSE_NORTHING_SOUTH : 0) + y,
  };
}

/** As the server writes UTM: `20s 830710.588 9656888.872` (metres, 3 decimals). */
export function formatUtm(u, decimals = 0) {
  if (!u) return '';
  return `${String(u.zone).padStart(2, '0')}${u.hemisphere} ${u.easting.toFixed(decimals)} ${u.northing.toFixed(decimals)}`;
}

const BAND_LETTERS = 'CDEFGHJKLMNPQRSTUVWX';
const COLUMN_LETTERS = ['ABCDEFGH', 'JKLMNPQR', 'STUVWXYZ'];
const ROW_LETTERS = 'ABCDEFGHJKLMNPQRSTUV';
const TILE_UM = 100000000000;

function toMicrometres(x, lo, hi) {
  if (!(Number.isFinite(x) && x >= lo * 1e5 && x <= hi * 1e5)) return null;
  const v = Math.floor(x * 1e6);
  const hiUm = hi * TILE_UM;
  return v >= hiUm ? hiUm - 1 : Math.max(v, lo * TILE_UM);
}

/** MGRS with `digits` (0..5) per axis, unspaced (`20MQV3071056888`), or null. */
export function toMgrs(lat, lon, digits = 5) {
  const u = toUtm(lat, lon);
  if (!u || !(digits >= 0 && digits <= 5)) return null;
  const [rowMin, rowMax] = u.hemisphere === 'n' ? [0, 95] : [10, 100];
  const ix = toMicrometres(u.easting, 1, 9);
  const iy = toMicrometres(u.northing, rowMin, rowMax);
  if (ix === null || iy === null) return null;
  const xh = Math.floor(ix / TILE_UM);
  const yh = Math.floor(iy / TILE_UM);
  const band = Math.abs(lat) < 2 ** -46 ? (u.hemisphere === 'n' ? 0 : -1) : latitudeBand(lat);
  const col = COLUMN_LETTERS[(u.zone - 1) % 3][xh - 1];
  const row = ROW_LETTERS[(((yh + (u.zone % 2 === 0 ? 5 : 0)) % 20) + 20) % 20];
  const b = BAND_LETTERS[band + 10];
  if (!col || !row || !b) return null;
  let s = `${String(u.zone).padStart(2, '0')}${b}${col}${row}`;
  if (digits > 0) {
    const div = 10 ** (11 - digits);
    s += String(Math.floor((ix % TILE_UM) / div)).padStart(digits, '0');
    s += String(Math.floor((iy % TILE_UM) / div)).padStart(digits, '0');
  }
  return s;
}

/** `20MQV3071056888` as `20M QV 30710 56888`, as the field sheet prints it. */
export function groupMgrs(m) {
  if (!m || !/^\d{2}[A-Z]{3}(\d\d)*$/.test(m)) return m || '';
  const half = (m.length - 5) / 2;
  const head = `${m.slice(0, 3)} ${m.slice(3, 5)}`;
  return half > 0 ? `${head} ${m.slice(5, 5 + half)} ${m.slice(5 + half)}` : head;
}
