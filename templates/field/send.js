// Sending a return with the resumable upload the field kit uses
// (sync/src/client/protocol.rs): POST /api/v1/uploads with the package's
// size and SHA-256 → HEAD for the server's offset → PATCH chunks at that
// offset → POST …/complete, which answers each report's result. The
// package and the upload's address are kept on the phone (IndexedDB)
// before the first byte goes, so a cut link, a closed app or a restarted
// server resumes where the server stands, with the same bytes: the server
// takes the same package once (same SHA-256, same upload).

import * as store from './store.js';

/** Bytes per PATCH: small, so a cut on a poor link loses little (the server takes up to 8 MiB). */
export const CHUNK_BYTES = 256 * 1024;
/** Waits between tries after a failure, in milliseconds (then the last one again). */
export const BACKOFF_MS = [1000, 2000, 4000, 8000, 15000, 30000];
/** Tries before the send gives up for now (about ten minutes with the waits above). */
export const MAX_TRIES = 25;

/** A failure the server meant (a refusal): retrying the same bytes will not help. */
export class SendRefused extends Error {
  constructor(status, message) {
    super(message);
    this.status = status;
  }
}

const pendingKey = (bundleId) => `upload:${bundleId}`;

/** The package waiting to be sent for a trip, or undefined. */
export function pending(bundleId) {
  return store.getSetting(pendingKey(bundleId));
}

/** Keeps a packed return on the phone as the one to send for its trip. */
export async function keepPending(bundleId, pkg) {
  await store.setSetting(pendingKey(bundleId), pkg);
  return pkg;
}

export function dropPending(bundleId) {
  return store.deleteSetting(pendingKey(bundleId));
}

const sleep = (ms) => new Promise((r) => { setTimeout(r, ms); });

async function errorText(r) {
  const doc = await r.json().catch(() => ({}));
  return doc.error || `HTTP ${r.status}`;
}

/** One HTTP request; a network failure is returned as null (retry). */
async function call(url, init, token) {
  const headers = { ...(init.headers || {}) };
  if (token) headers.Authorization = `Bearer ${token}`;
  try {
    return await fetch(url, { ...init, headers, credentials: 'omit', cache: 'no-store' });
  } catch (_) {
    return null;
  }
}

/** Whether a status means "try again later" rather than "no". */
const transient = (s) => s === 408 || s === 409 || s === 429 || s >= 500;

/**
 * One pass of the protocol from wherever the server stands. Returns the
 * server's answer to complete, or null when the link failed (retry);
 * throws SendRefused when the server refused.
 */
async function pass(pkg, token, progress) {
  if (!pkg.url) {
    const r = await call('/api/v1/uploads', {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ bundle_id: pkg.bundle_id, size: pkg.size, sha256: pkg.sha256 }),
    }, token);
    if (!r) return null;
    if (!r.ok) {
      if (transient(r.status)) return null;
      throw new SendRefused(r.status, await errorText(r));
    }
    const loc = r.headers.get('Location');
    if (!loc) throw new SendRefused(r.status, 'the server gave no upload address');
    pkg.url = loc;
    await keepPending(pkg.bundle_id, pkg);
  }
  const head = await call(pkg.url, { method: 'HEAD' }, token);
  if (!head) return null;
  if (head.status === 404 || head.status === 410) {
    // The server no longer knows this upload: start again with the same bytes.
    pkg.url = null;
    await keepPending(pkg.bundle_id, pkg);
    return null;
  }
  if (!head.ok) {
    if (transient(head.status)) return null;
    throw new SendRefused(head.status, `HTTP ${head.status}`);
  }
  let offset = Number(head.headers.get('Upload-Offset') || 0);
  progress(offset, pkg.size);
  while (offset < pkg.size) {
    const chunk = pkg.bytes.subarray(offset, Math.min(pkg.size, offset + CHUNK_BYTES));
    const r = await call(pkg.url, {
      method: 'PATCH',
      headers: { 'Content-Type': 'application/partial-upload', 'Upload-Offset': String(offset) },
      body: chunk,
    }, token);
    if (!r) return null;
    if (r.status === 409 && r.headers.get('Upload-Offset')) {
      offset = Number(r.headers.get('Upload-Offset'));
    } else if (!r.ok) {
      if (transient(r.status)) return null;
      throw new SendRefused(r.status, await errorText(r));
    } else {
      offset = Number(r.headers.get('Upload-Offset') || offset + chunk.length);
    }
    progress(offset, pkg.size);
  }
  const done = await call(`${pkg.url}/complete`, { method: 'POST' }, token);
  if (!done) return null;
  if (!done.ok) {
    if (transient(done.status)) return null;
    throw new SendRefused(done.status, await errorText(done));
  }
  return done.json();
}

/**
 * Sends `pkg` ({bundle_id, bytes, size, sha256, url}) until the server has
 * it, backing off between tries. `progress(offset, size)` and
 * `waiting(tries, ms)` tell the page. Returns the server's answer.
 */
export async function send(pkg, token, { progress = () => {}, waiting = () => {} } = {}) {
  for (let tries = 0; tries < MAX_TRIES; tries += 1) {
    const answer = await pass(pkg, token, progress);
    if (answer) {
      await dropPending(pkg.bundle_id);
      return answer;
    }
    const ms = BACKOFF_MS[Math.min(tries, BACKOFF_MS.length - 1)];
    waiting(tries + 1, ms);
    await sleep(ms);
  }
  return null;
}
