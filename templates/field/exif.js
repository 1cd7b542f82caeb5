// A photo's EXIF time, position and view direction, read with the vendored
// exifr (7.1.3, mini build) and turned into the report's photo fields the
// way the field kit reads them (sync/src/photo/exif.rs): DateTimeOriginal
// with OffsetTimeOriginal applied, or else taken as UTC; GPS latitude and
// longitude signed by their Ref tags; GPSImgDirection as written. Missing
// or broken EXIF is not an error: the field stays null. Only the bytes are
// read; nothing is changed (photos are evidence, kept byte for byte).

import { parse } from './vendor/exifr.js';

const TAG_DATE_TIME_ORIGINAL = 0x9003;
const TAG_OFFSET_TIME_ORIGINAL = 0x9011;
const TAG_GPS_IMG_DIRECTION = 0x0011;

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

const finite = (v, lo, hi) => (typeof v === 'number' && Number.isFinite(v) && v >= lo && v <= hi ? v : null);

/** {taken_at, lat, lon, direction_deg} of a JPEG's bytes; nulls where EXIF says nothing. */
export async function photoMeta(bytes) {
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
    taken_at: exifTime(exif[TAG_DATE_TIME_ORIGINAL], exif[TAG_OFFSET_TIME_ORIGINAL]),
    lat: lat !== null && lon !== null ? lat : null,
    lon: lat !== null && lon !== null ? lon : null,
    direction_deg: finite(gps[TAG_GPS_IMG_DIRECTION], 0, 360),
  };
}
