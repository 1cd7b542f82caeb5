// The phone's store (IndexedDB "groundproof-field"): trips by bundle id,
// reports by report id (indexed by bundle), photos by SHA-256 (the exact
// bytes as picked, never re-encoded), and settings. A write resolves only
// when its transaction has completed, so "saved" is said after the data is
// on the device.

const DB_NAME = 'groundproof-field';
const DB_VERSION = 1;
let dbPromise = null;

function req(r) {
  return new Promise((resolve, reject) => {
    r.onsuccess = () => resolve(r.result);
    r.onerror = () => reject(r.error);
  });
}

function done(tx) {
  return new Promise((resolve, reject) => {
    tx.oncomplete = () => resolve();
    tx.onerror = () => reject(tx.error);
    tx.onabort = () => reject(tx.error || new Error('transaction aborted'));
  });
}

export function openDb() {
  if (!dbPromise) {
    dbPromise = new Promise((resolve, reject) => {
      const r = indexedDB.open(DB_NAME, DB_VERSION);
      r.onupgradeneeded = () => {
        const db = r.result;
        db.createObjectStore('trips', { keyPath: 'bundle_id' });
        const reports = db.createObjectStore('reports', { keyPath: 'report_id' });
        reports.createIndex('bundle_id', 'bundle_id');
        db.createObjectStore('photos', { keyPath: 'sha256' });
        db.createObjectStore('settings');
      };
      r.onsuccess = () => resolve(r.result);
      r.onerror = () => reject(r.error);
    });
  }
  return dbPromise;
}

export async function putTrip(trip) {
  const db = await openDb();
  const tx = db.transaction('trips', 'readwrite');
  tx.objectStore('trips').put(trip);
  return done(tx);
}

export async function trips() {
  const db = await openDb();
  return req(db.transaction('trips').objectStore('trips').getAll());
}

export async function trip(id) {
  const db = await openDb();
  return req(db.transaction('trips').objectStore('trips').get(id));
}

/** Reports of one trip, oldest first. */
export async function reportsOf(bundleId) {
  const db = await openDb();
  const all = await req(db.transaction('reports').objectStore('reports').index('bundle_id').getAll(bundleId));
  return all.sort((a, b) => (a.report.recorded_at < b.report.recorded_at ? -1 : 1));
}

export async function allReports() {
  const db = await openDb();
  return req(db.transaction('reports').objectStore('reports').getAll());
}

/**
 * Stores a report entry with its new photos in one transaction:
 * `photos` is a list of {sha256, bytes: Uint8Array}.
 */
export async function saveReport(entry, photos) {
  const db = await openDb();
  const tx = db.transaction(['reports', 'photos'], 'readwrite');
  for (const p of photos) tx.objectStore('photos').put({ sha256: p.sha256, bytes: p.bytes, size: p.bytes.length });
  tx.objectStore('reports').put(entry);
  return done(tx);
}

/** Updates the sending state of reports: `changes` maps report id to {state, reason}. */
export async function markReports(changes) {
  const db = await openDb();
  const tx = db.transaction('reports', 'readwrite');
  const store = tx.objectStore('reports');
  for (const [id, ch] of changes) {
    const r = store.get(id);
    r.onsuccess = () => {
      if (r.result) store.put({ ...r.result, ...ch });
    };
  }
  return done(tx);
}

export async function photo(sha256) {
  const db = await openDb();
  return req(db.transaction('photos').objectStore('photos').get(sha256));
}

export async function getSetting(key) {
  const db = await openDb();
  return req(db.transaction('settings').objectStore('settings').get(key));
}

export async function setSetting(key, value) {
  const db = await openDb();
  const tx = db.transaction('settings', 'readwrite');
  tx.objectStore('settings').put(value, key);
  return done(tx);
}

export async function deleteSetting(key) {
  const db = await openDb();
  const tx = db.transaction('settings', 'readwrite');
  tx.objectStore('settings').delete(key);
  return done(tx);
}
