// Reports (the return contract's JSON, field for field as
// sync/src/returns/report.rs) and their checks, as the field kit runs them
// before a report is stored (sync/src/returns/validate.rs): a problem is
// said on the spot, in the catalogue's words.

export const MAX_NOTES_CHARS = 4000;
export const MAX_PHOTOS_PER_REPORT = 20;
export const MAX_PHOTO_BYTES = 32 * 2 ** 20;
/** sync/src/returns/validate.rs MAX_AREA_HA. */
export const MAX_AREA_HA = 10000;

/** A problem with a report: `key` in the catalogue, `params` to fill in. */
export class ReportProblem extends Error {
  constructor(key, params = {}) {
    super(key);
    this.key = key;
    this.params = params;
  }
}

/** The report in the exact shape and field order of the Rust `Report`. */
export function makeReport(f) {
  return {
    report_id: f.report_id,
    bundle_id: f.bundle_id,
    target: f.target,
    supersedes: f.supersedes ?? null,
    outcome: f.outcome,
    reason: f.reason ?? null,
    cause: f.cause ?? null,
    position: f.position ?? null,
    observed_at: f.observed_at,
    recorded_at: f.recorded_at,
    area_ha: f.area_ha ?? null,
    notes: f.notes ?? '',
    photos: f.photos ?? [],
  };
}

/** Outcomes only a control point has (checklist 2 and later). */
export const CONTROL_ONLY_OUTCOMES = ['no_clearing_found', 'clearing_found'];

/**
 * The outcomes offered at a stop of `kind` (Checklist::outcomes_for): a
 * control point's own list from checklist 2 on, the event outcomes before.
 */
export function outcomesFor(checklist, kind) {
  const own = Array.isArray(checklist.control_outcomes) && checklist.control_outcomes.length > 0;
  return kind === 'control' && own ? checklist.control_outcomes : checklist.outcomes;
}

/** Outcomes that carry a cause: a confirmed clearing, a clearing found at a control point. */
export function takesCause(outcome) {
  return outcome === 'confirmed' || outcome === 'clearing_found';
}

/** Reports that carry an estimated area: a new clearing, a clearing found at a control point. */
export function takesArea(kind, outcome) {
  return kind === 'new_clearing' || outcome === 'clearing_found';
}

function okLatLon(lat, lon) {
  return Number.isFinite(lat) && lat >= -90 && lat <= 90 && Number.isFinite(lon) && lon >= -180 && lon <= 180;
}

/** check_report_shape and validate_report against `checklist`. */
export function validateReport(r, checklist) {
  if (r.supersedes === r.report_id) throw new ReportProblem('problem.self_supersede');
  if ([...r.notes].length > MAX_NOTES_CHARS) throw new ReportProblem('problem.notes_long', { max: MAX_NOTES_CHARS });
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f-\u009f]/.test(r.notes)) throw new ReportProblem('problem.notes_control');
  if (r.position) {
    if (!okLatLon(r.position.lat, r.position.lon)) throw new ReportProblem('problem.position_range');
    const a = r.position.accuracy_m;
    if (a !== null && !(Number.isFinite(a) && a >= 0)) throw new ReportProblem('problem.position_range');
  }
  if (r.photos.length > MAX_PHOTOS_PER_REPORT) throw new ReportProblem('problem.too_many_photos', { max: MAX_PHOTOS_PER_REPORT });
  const shas = new Set();
  for (const p of r.photos) {
    if (shas.has(p.sha256)) throw new ReportProblem('problem.photo_twice');
    shas.add(p.sha256);
  }
  if (!outcomesFor(checklist, r.target.kind).includes(r.outcome)) throw new ReportProblem('problem.pick_outcome');
  if (CONTROL_ONLY_OUTCOMES.includes(r.outcome) && r.target.kind !== 'control') throw new ReportProblem('problem.pick_outcome');
  const needsReason = r.outcome === 'false_alarm' || r.outcome === 'not_reached';
  if (needsReason) {
    const allowed = r.outcome === 'false_alarm' ? checklist.false_alarm_reasons : checklist.not_reached_reasons;
    if (r.reason === null) throw new ReportProblem('problem.pick_reason');
    if (!allowed.includes(r.reason)) throw new ReportProblem('problem.pick_reason');
  } else if (r.reason !== null) {
    throw new ReportProblem('problem.pick_reason');
  }
  if (r.cause !== null) {
    if (!takesCause(r.outcome) || !checklist.causes.includes(r.cause)) throw new ReportProblem('problem.pick_cause');
  }
  // validate.rs: a clearing found at a control point carries its cause and estimated area.
  if (r.outcome === 'clearing_found') {
    if (r.cause === null) throw new ReportProblem('problem.required_cause');
    if (r.area_ha === null) throw new ReportProblem('problem.required_area_ha');
  }
  if (takesCause(r.outcome) && r.photos.length < checklist.min_photos_confirmed) {
    throw new ReportProblem('problem.min_photos', { min: checklist.min_photos_confirmed, have: r.photos.length });
  }
  if (r.area_ha !== null && !(Number.isFinite(r.area_ha) && r.area_ha > 0 && r.area_ha <= MAX_AREA_HA)) {
    throw new ReportProblem('problem.area_range', { max: MAX_AREA_HA });
  }
  for (const field of checklist.required_fields) {
    const missing = {
      position: r.position === null,
      cause: takesCause(r.outcome) && r.cause === null,
      reason: needsReason && r.reason === null,
      notes: r.notes.trim() === '',
      photos: r.photos.length === 0,
      area_ha: r.area_ha === null,
    }[field];
    if (missing) throw new ReportProblem(`problem.required_${field}`);
  }
  // sync/src/returns/validate.rs: a new clearing is confirmed, with a position and an area.
  if (r.target.kind === 'new_clearing') {
    if (r.outcome !== 'confirmed') throw new ReportProblem('problem.pick_outcome');
    if (r.position === null) throw new ReportProblem('problem.required_position');
    if (r.area_ha === null) throw new ReportProblem('problem.required_area_ha');
  }
}
