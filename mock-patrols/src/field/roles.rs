//! Roles: who gets which visit (pure, seeded).

use groundproof_sync::bundle::Checklist;
use rand::RngExt;
use rand::seq::SliceRandom;
use rand_chacha::ChaCha8Rng;

use super::TripPlan;

/// Invented weights for causes of the mock clearings (our choice, not a statistic).
pub(super) const CAUSE_WEIGHTS: &[(&str, f64)] = &[
    ("smallholder_clearing", 0.35),
    ("plantation_or_pasture_conversion", 0.20),
    ("logging_road", 0.15),
    ("selective_logging", 0.10),
    ("fire", 0.08),
    ("mining", 0.05),
    ("infrastructure_or_settlement", 0.04),
    ("natural_disturbance", 0.02),
    ("other", 0.01),
];
/// Invented weights for false-alarm reasons (our choice).
pub(super) const FALSE_ALARM_WEIGHTS: &[(&str, f64)] = &[
    ("no_change", 0.40),
    ("cloud_or_shadow", 0.25),
    ("cleared_before_window", 0.15),
    ("seasonal_water", 0.10),
    ("not_forest", 0.10),
];
/// Not-reached reasons the brief asks for (access or safety), invented weights.
pub(super) const NOT_REACHED_WEIGHTS: &[(&str, f64)] = &[("access", 0.6), ("safety", 0.4)];

/// What happens at one event.
#[derive(Debug, Clone, PartialEq)]
pub(super) enum EventVisit {
    NotReached {
        reason: String,
    },
    Confirmed {
        cause: Option<String>,
        near_photos: usize,
        far: bool,
        early: bool,
    },
    FalseAlarm {
        reason: String,
        photos: usize,
    },
    Inconclusive,
}

/// What happens at one control point.
#[derive(Debug, Clone, PartialEq)]
pub(super) enum ControlVisit {
    NoClearing { reason: String },
    Clearing { cause: Option<String>, area_ha: f64 },
}

/// The roles of a trip.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Roles {
    /// Every event code with its visit (`None`: left unvisited).
    pub(super) events: Vec<(String, Option<EventVisit>)>,
    pub(super) controls: Vec<(String, ControlVisit)>,
    pub(super) amend: Option<String>,
    pub(super) dispute: Option<String>,
    /// Index in the route after which the new clearing is found.
    pub(super) new_clearing_after: Option<usize>,
}

impl Roles {
    pub(super) fn event(&self, code: &str) -> Option<&EventVisit> {
        self.events
            .iter()
            .find(|(c, _)| c == code)
            .and_then(|(_, v)| v.as_ref())
    }

    pub(super) fn control(&self, code: &str) -> Option<&ControlVisit> {
        self.controls
            .iter()
            .find(|(c, _)| c == code)
            .map(|(_, v)| v)
    }

    pub(super) fn unvisited(&self) -> Vec<String> {
        self.events
            .iter()
            .filter(|(_, v)| v.is_none())
            .map(|(c, _)| c.clone())
            .collect()
    }
}

/// Counts of confirmed, false-alarm and inconclusive visits among `m` by largest
/// remainder, then at least one of each outcome whose share is positive while
/// `m` allows, taken from the largest count.
pub(super) fn outcome_mix(m: usize, confirmed: f64, false_alarm: f64) -> [usize; 3] {
    let shares = [
        confirmed,
        false_alarm,
        (1.0 - confirmed - false_alarm).max(0.0),
    ];
    let total: f64 = shares.iter().sum();
    if m == 0 || total <= 0.0 {
        return [0, 0, m];
    }
    let targets = shares.map(|s| m as f64 * s / total);
    let mut counts = targets.map(|t| t.floor() as usize);
    let mut left = m - counts.iter().sum::<usize>();
    let mut by_fraction = [0usize, 1, 2];
    // Stable sort: equal fractions keep the order confirmed, false alarm, inconclusive.
    by_fraction.sort_by(|&a, &b| {
        let (fa, fb) = (targets[a].fract(), targets[b].fract());
        fb.partial_cmp(&fa).unwrap_or(std::cmp::Ordering::Equal)
    });
    for &i in by_fraction.iter().cycle() {
        if left == 0 {
            break;
        }
        counts[i] += 1;
        left -= 1;
    }
    let positive = shares.iter().filter(|s| **s > 0.0).count();
    if m >= positive {
        for i in 0..3 {
            if shares[i] > 0.0 && counts[i] == 0 {
                let largest = (0..3).max_by_key(|&j| counts[j]).unwrap_or(0);
                counts[largest] -= 1;
                counts[i] += 1;
            }
        }
    }
    counts
}

/// Picks a name from `allowed` by `weights` (names with no weight count 0; when all
/// weights are 0, uniformly). `None` when `allowed` is empty.
pub(super) fn pick(
    rng: &mut ChaCha8Rng,
    weights: &[(&str, f64)],
    allowed: &[String],
) -> Option<String> {
    if allowed.is_empty() {
        return None;
    }
    let w: Vec<f64> = allowed
        .iter()
        .map(|a| {
            weights
                .iter()
                .find(|(n, _)| n == a)
                .map_or(0.0, |(_, x)| *x)
        })
        .collect();
    let total: f64 = w.iter().sum();
    if total <= 0.0 {
        return allowed.get(rng.random_range(0..allowed.len())).cloned();
    }
    let mut x = rng.random::<f64>() * total;
    for (a, wt) in allowed.iter().zip(&w) {
        if x < *wt {
            return Some(a.clone());
        }
        x -= wt;
    }
    allowed
        .iter()
        .zip(&w)
        .rev()
        .find(|(_, wt)| **wt > 0.0)
        .map(|(a, _)| a.clone())
}

/// `no_change` when the checklist has it, else its first false-alarm reason.
pub(super) fn no_change(c: &Checklist) -> String {
    c.false_alarm_reasons
        .iter()
        .find(|r| r.as_str() == "no_change")
        .or(c.false_alarm_reasons.first())
        .cloned()
        .unwrap_or_default()
}

/// Decides every stop's visit. `events` and `controls` are codes in route order.
pub(super) fn assign_roles(
    events: &[String],
    controls: &[String],
    checklist: &Checklist,
    plan: &TripPlan,
    rng: &mut ChaCha8Rng,
) -> Roles {
    let n = events.len();
    let mut order: Vec<usize> = (0..n).collect();
    order.shuffle(rng);
    let skip = plan.unvisited.min(n.saturating_sub(1));
    let not_reached = plan.not_reached.min((n - skip).saturating_sub(1));
    let visited = &order[skip + not_reached..];
    let [kc, kf, _] = outcome_mix(visited.len(), plan.confirmed_share, plan.false_alarm_share);
    let mut visits: Vec<Option<EventVisit>> = vec![None; n];
    for &i in &order[skip..skip + not_reached] {
        let reason = pick(rng, NOT_REACHED_WEIGHTS, &checklist.not_reached_reasons);
        visits[i] = Some(EventVisit::NotReached {
            reason: reason.unwrap_or_default(),
        });
    }
    let (confirmed, rest) = visited.split_at(kc);
    let (false_alarms, _inconclusive) = rest.split_at(kf);
    for (j, &i) in visited.iter().enumerate() {
        visits[i] = Some(visit_outcome(j, kc, kf, checklist, rng));
    }
    let flagged = flag_photos(confirmed, &mut visits, plan);
    let (dispute, amend) = dispute_and_amend(confirmed, false_alarms, &flagged, plan);
    let route_len = n + controls.len();
    let controls = assign_controls(controls, checklist, plan, rng);
    let new_clearing_after =
        (plan.new_clearing && route_len > 0).then(|| rng.random_range(0..route_len));
    Roles {
        events: events.iter().cloned().zip(visits).collect(),
        controls,
        amend: amend.map(|i| events[i].clone()),
        dispute: dispute.map(|i| events[i].clone()),
        new_clearing_after,
    }
}

/// The visit of the `j`-th visited event: the first `kc` confirmed, the next `kf`
/// false alarms, the rest inconclusive.
fn visit_outcome(
    j: usize,
    kc: usize,
    kf: usize,
    checklist: &Checklist,
    rng: &mut ChaCha8Rng,
) -> EventVisit {
    let min_confirmed = (checklist.min_photos_confirmed as usize).clamp(1, 19);
    if j < kc {
        EventVisit::Confirmed {
            cause: pick(rng, CAUSE_WEIGHTS, &checklist.causes),
            near_photos: rng.random_range(2..=3usize).max(min_confirmed),
            far: false,
            early: false,
        }
    } else if j < kc + kf {
        EventVisit::FalseAlarm {
            reason: pick(rng, FALSE_ALARM_WEIGHTS, &checklist.false_alarm_reasons)
                .unwrap_or_default(),
            photos: rng.random_range(1..=2usize),
        }
    } else {
        EventVisit::Inconclusive
    }
}

/// Gives the first confirmed event the far photo and the next one (or the same when
/// it is the only one) the early photo, as `plan` asks; returns the flagged events.
fn flag_photos(
    confirmed: &[usize],
    visits: &mut [Option<EventVisit>],
    plan: &TripPlan,
) -> Vec<usize> {
    let mut flagged = Vec::new();
    if let Some(&first) = confirmed.first() {
        if plan.far_photo {
            flagged.push(first);
            if let Some(EventVisit::Confirmed { far, .. }) = &mut visits[first] {
                *far = true;
            }
        }
        if plan.early_photo {
            let k = confirmed[usize::from(plan.far_photo) % confirmed.len()];
            flagged.push(k);
            if let Some(EventVisit::Confirmed { early, .. }) = &mut visits[k] {
                *early = true;
            }
        }
    }
    flagged
}

/// The event a second device disputes and the event whose report is amended, as
/// `plan` asks: both preferably free of photo flags.
fn dispute_and_amend(
    confirmed: &[usize],
    false_alarms: &[usize],
    flagged: &[usize],
    plan: &TripPlan,
) -> (Option<usize>, Option<usize>) {
    let plain = |i: &&usize| !flagged.contains(*i);
    let dispute = if plan.disputed_pair {
        confirmed
            .iter()
            .find(plain)
            .or(false_alarms.iter().find(plain))
            .copied()
    } else {
        None
    };
    // Amend a report with clean evidence if there is one (a confirmed cause, else a
    // false-alarm reason), so the correction is not mixed up with a flag.
    let amend = if plan.amend {
        let free = |i: &usize| Some(*i) != dispute && !flagged.contains(i);
        confirmed
            .iter()
            .copied()
            .find(free)
            .or(false_alarms.iter().copied().find(free))
            .or(confirmed.iter().copied().find(|i| Some(*i) != dispute))
    } else {
        None
    };
    (dispute, amend)
}

pub(super) fn assign_controls(
    codes: &[String],
    checklist: &Checklist,
    plan: &TripPlan,
    rng: &mut ChaCha8Rng,
) -> Vec<(String, ControlVisit)> {
    if !plan.visit_controls {
        return Vec::new();
    }
    let found = if codes.len() >= 2 {
        ((codes.len() as f64) / 3.0).round().max(1.0) as usize
    } else {
        0
    };
    let mut order: Vec<usize> = (0..codes.len()).collect();
    order.shuffle(rng);
    let mut out: Vec<(String, ControlVisit)> = codes
        .iter()
        .map(|c| {
            (
                c.clone(),
                ControlVisit::NoClearing {
                    reason: no_change(checklist),
                },
            )
        })
        .collect();
    for &i in &order[..found] {
        out[i].1 = ControlVisit::Clearing {
            cause: pick(rng, CAUSE_WEIGHTS, &checklist.causes),
            area_ha: (rng.random_range(20..=150u32) as f64) / 100.0,
        };
    }
    out
}
