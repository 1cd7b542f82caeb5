// Writing a return (format groundproof-return v1) exactly as the field kit
// does (sync/src/returns/pack.rs): each photo once as photos/<sha256>.jpg
// (stored), reports.json (the reports sorted by report_id), the manifest
// listing every entry with its SHA-256 and size, and signature.json, the
// HMAC-SHA256 of the exact manifest bytes under the bundle's upload key.
// Entries in name order, dated 1980-01-01 00:00, Unix permissions 0644,
// JSON deflated at level 6.

import { zipSync } from './vendor/fflate.js';
import { hmacSha256Hex, sha256Hex } from './crypto.js';
import { cameraZone } from './exif.js';

export const RETURN_FORMAT = 'groundproof-return';
export const RETURN_FORMAT_VERSION = 1;
const MAX_REPORTS = 2000;
const MAX_REPORTS_BYTES = 8 * 2 ** 20;

const enc = new TextEncoder();
const json = (v) => enc.encode(JSON.stringify(v, null, 2));

function entryOptions(level) {
  return {
    level,
    mtime: new Date(1980, 0, 1, 0, 0, 0),
    os: 3,
    attrs: (0o100644 << 16) >>> 0,
  };
}

/**
 * Packs `reports` (Rust-shaped report objects of one trip) with their photos.
 * `photoBytes(sha)` gives the stored bytes of a photo. Returns
 * {bytes, manifest, reportIds}.
 */
export async function packReturn(trip, reports, photoBytes, createdAt = new Date()) {
  if (reports.length === 0) throw new Error('no reports to pack');
  if (reports.length > MAX_REPORTS) throw new Error(`more than ${MAX_REPORTS} reports`);
  const sorted = [...reports].sort((a, b) => (a.report_id < b.report_id ? -1 : a.report_id > b.report_id ? 1 : 0));
  const shas = [...new Set(sorted.flatMap((r) => r.photos.map((p) => p.sha256)))].sort();
  const photos = new Map();
  for (const sha of shas) {
    const bytes = await photoBytes(sha);
    if (!bytes) throw new Error(`photo ${sha} is missing on this phone`);
    // Hash again: a photo changed since it was stored must not slip in.
    if ((await sha256Hex(bytes)) !== sha) throw new Error(`photo ${sha} changed on this phone`);
    photos.set(sha, bytes);
  }
  const reportsJson = json(sorted);
  if (reportsJson.length > MAX_REPORTS_BYTES) throw new Error('reports.json is too large');
  const entries = [...photos].map(([sha, b]) => ({ name: `photos/${sha}.jpg`, sha256: sha, size: b.length }));
  entries.push({ name: 'reports.json', sha256: await sha256Hex(reportsJson), size: reportsJson.length });
  entries.sort((a, b) => (a.name < b.name ? -1 : 1));
  const m = trip.manifest;
  const manifest = {
    format: RETURN_FORMAT,
    format_version: RETURN_FORMAT_VERSION,
    bundle_id: trip.bundle_id,
    upload_key_id: trip.upload_key.key_id,
    team: m.team,
    created_at: createdAt.toISOString(),
    checklist_version: trip.checklist.version,
    report_count: sorted.length,
    photo_count: photos.size,
    entries,
    camera_zone: cameraZone(trip),
  };
  const manifestJson = json(manifest);
  const signature = {
    algorithm: 'HMAC-SHA256',
    key_id: trip.upload_key.key_id,
    mac: await hmacSha256Hex(trip.upload_key.key_hex, manifestJson),
  };
  const files = {};
  for (const [sha, b] of photos) files[`photos/${sha}.jpg`] = [b, entryOptions(0)];
  files['reports.json'] = [reportsJson, entryOptions(6)];
  files['return-manifest.json'] = [manifestJson, entryOptions(6)];
  files['signature.json'] = [json(signature), entryOptions(6)];
  return { bytes: zipSync(files), manifest, reportIds: sorted.map((r) => r.report_id) };
}
