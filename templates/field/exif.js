// A photo's EXIF time, position and view direction, read with the vendored
// exifr (7.1.3, mini build) and turned into the report's photo fields the
// way the field kit reads them (sync/src/photo/exif.rs): the time is
// DateTimeOriginal with OffsetTimeOriginal applied; without an offset, the GPS
// UTC stamp (GPSDateStamp + GPSTimeStamp) when there is one; otherwise the
// camera's local time placed in the trip's camera zone (minutes east of UTC;
// 0, UTC, as the field kit until it is set). GPS latitude and
// longitude signed by their Ref tags; GPSImgDirection as written. Missing
// or broken EXIF is not an error: the field stays null. Only the bytes are
// read; nothing is changed (photos are evidence, kept byte for byte).

import { parse } from './vendor/exifr.js';

const TAG_DATE_TIME_ORIGINAL = 0x9003;
const TAG_OFFSET_TIME_ORIGINAL = 0x9011;
const TAG_GPS_IMG_DIRECTION = 0x0011;
const TAG_GPS_TIME_STAMP = 0x0007;
const TAG_GPS_DATE_STAMP = 0x001d;

const OPTIONS = {
  tiff: true,
  ifd0: true,
  exif: true,
  gps: true,
  ifd1: false,
  interop: false,
  xmp: false,
  icc: false,
  iptc: false,
  jfif: false,
  makerNote: false,
  userComment: false,
  reviveValues: false,
  translateValues: false,
  mergeOutput: false,
  silentErrors: true,
};

/** `2026:11:20 10:15:00` (+ `-04:00`) as an RFC 3339 UTC time, or null. */
export function exifTime(text, offset) {
  const m = /^(\d{4}):(\d{2}):(\d{2}) (\d{2}):(\d{2}):(\d{2})/.exec(String(text || ''));
  if (!m) return null;
  const [y, mo, d, h, mi, s] = m.slice(1).map(Number);
  if (mo < 1 || mo > 12 || d < 1 || d > 31 || h > 23 || mi > 59 || s > 60) return null;
  let ms = Date.UTC(y, mo - 1, d, h, mi, s);
  const o = /^([+-])(\d{2}):(\d{2})$/.exec(String(offset || '').trim());
  if (o) ms -= (o[1] === '-' ? -1 : 1) * (Number(o[2]) * 60 + Number(o[3])) * 60000;
  const t = new Date(ms);
  return Number.isNaN(t.getTime()) ? null : t.toISOString().replace('.000Z', 'Z');
}

/** GPSDateStamp `2026:11:20` and GPSTimeStamp [h, m, s] (UTC) as RFC 3339, or null. */
export function gpsTime(date, time) {
  const m = /^(\d{4}):(\d{2}):(\d{2})/.exec(String(date || ''));
  if (!m || !Array.isArray(time) || time.length !== 3) return null;
  const [h, mi, s] = time.map(Number);
  if (!(h >= 0 && h < 24 && mi >= 0 && mi < 60 && s >= 0 && s < 61)) return null;
  const ms = Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3])) + Math.round((h * 3600 + mi * 60 + s) * 1000);
  const t = new Date(ms);
  return Number.isNaN(t.getTime()) ? null : t.toISOString().replace('.000Z', 'Z');
}

/** The photo's time by the field kit's rule (see the top of this file). */
export function photoTime(text, offset, gpsDate, gpsTimeStamp, zoneMinutes = 0) {
  const gps = gpsTime(gpsDate, gpsTimeStamp);
  if (!text) return gps;
  if (/^([+-])(\d{2}):(\d{2})$/.test(String(offset || '').trim())) return exifTime(text, offset);
  if (gps) return gps;
  const z = Math.trunc(Number(zoneMinutes) || 0);
  const sign = z < 0 ? '-' : '+';
  const a = Math.abs(z);
  return exifTime(text, `${sign}${String(Math.floor(a / 60)).padStart(2, '0')}:${String(a % 60).padStart(2, '0')}`);
}

const finite = (v, lo, hi) => (typeof v === 'number' && Number.isFinite(v) && v >= lo && v <= hi ? v : null);

/** {taken_at, lat, lon, direction_deg} of a JPEG's bytes; nulls where EXIF says nothing. */
export async function photoMeta(bytes, zoneMinutes = 0) {
  const none = { taken_at: null, lat: null, lon: null, direction_deg: null };
  let x;
  try {
    x = await parse(bytes, OPTIONS);
  } catch (_) {
    return none;
  }
  if (!x) return none;
  // The mini build names tags by number (Exif 2.3x, CIPA DC-008 tag table).
  const exif = x.exif || {};
  const gps = x.gps || {};
  const lat = finite(gps.latitude, -90, 90);
  const lon = finite(gps.longitude, -180, 180);
  return {
    taken_at: photoTime(exif[TAG_DATE_TIME_ORIGINAL], exif[TAG_OFFSET_TIME_ORIGINAL],
      gps[TAG_GPS_DATE_STAMP], gps[TAG_GPS_TIME_STAMP], zoneMinutes),
    lat: lat !== null && lon !== null ? lat : null,
    lon: lat !== null && lon !== null ? lon : null,
    direction_deg: finite(gps[TAG_GPS_IMG_DIRECTION], 0, 360),
  };
}

/** Minutes east of UTC of an offset written `+HH:MM`/`-HH:MM` within ±14:00, else null. */
export function offsetMinutes(text) {
  const m = /^([+-])(\d{1,2}):(\d{2})$/.exec(String(text ?? '').trim());
  if (!m) return null;
  const h = Number(m[2]);
  const mi = Number(m[3]);
  if (mi >= 60 || h * 60 + mi > 14 * 60) return null;
  return (m[1] === '-' ? -1 : 1) * (h * 60 + mi);
}

/** The trip's camera zone {offset, name}: set on the phone, else the bundle's
 * (the organisation's zone on the issue date), else UTC. */
export function cameraZone(trip) {
  for (const z of [trip && trip.camera_zone, trip && trip.manifest && trip.manifest.camera_zone]) {
    if (z && offsetMinutes(z.offset) !== null) return { offset: z.offset, name: typeof z.name === 'string' ? z.name : '' };
  }
  return { offset: '+00:00', name: 'UTC' };
}
