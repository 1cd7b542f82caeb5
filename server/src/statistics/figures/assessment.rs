//! Estimates from an assessment sample: the sampled events (by alert
//! stratum) and, when there are any, the control points (no-alert strata).
//!
//! Definitions:
//! - A sampled event *responds* when its status is `confirmed` or
//!   `false_alarm`. Every other sampled event is **non-response**, counted
//!   per stratum by kind (`not_reached`, `unvisited`, `inconclusive`,
//!   `disputed`) and never silently dropped. The estimates treat the
//!   respondents of a stratum as a random subsample of its selection
//!   (missing at random within the stratum); a high non-response count is
//!   the reader's cue that this may not hold. A control point responds when
//!   a clearing or no clearing was found there; one visited without a
//!   finding (`inconclusive`), one the team could not reach (`not_reached`)
//!   and one without a report yet (`unvisited`) are non-response, each
//!   counted apart and none an observation of the stratum.
//! - **User's accuracy per alert stratum**: confirmed / respondents, with
//!   the stratified-proportion SE of [`crate::statistics::estimators::stratified_proportion`]
//!   for one stratum, with the finite-population correction 1 − n_h/N_h,
//!   N_h = `stratum_population`. Over all alert strata (weights N_h/N) the
//!   same function gives the user's accuracy of the alerts.
//! - **Error matrix** (when control points exist), Olofsson-style: rows are
//!   the strata, each belonging to a map class (alert strata → "alert",
//!   control strata → "no alert"); columns are the reference classes
//!   clearing / no clearing (a confirmed event or a control point with
//!   clearing found is "clearing"). Row sizes are areas in ha, estimated by
//!   Horvitz–Thompson from the selection: A_h = Σ area_ha/π over the
//!   selected units of the stratum (respondents or not). W_h = A_h/A with
//!   A = Σ A_h over strata with respondents. Each respondent u has a
//!   reference value y_u, the share of its unit that is cleared: 1 or 0 for
//!   an event (confirmed or not); for a control point, which stands for a
//!   plot, y_u = min(a_u, plot)/plot with a_u the area the team estimated for
//!   the clearing found there (1 when no area was recorded, checklist 1), 0
//!   for no clearing: a 0.3 ha clearing at a 1 ha plot is 0.3 of the plot,
//!   not all of it (the reference value of an area unit is the share of its
//!   area in the class, as in Stehman 2014's general estimator, statistics.md
//!   §1.2(c)). A clearing larger than the plot is taken to cover the plot.
//!   q_h = ȳ_h, the mean of y_u over the respondents; s²_h their variance.
//!   - area proportion of clearing p̂ = Σ W_h q_h, V̂ = Σ W_h² s²_h/n_h (=
//!     Σ W_h² q_h(1 − q_h)/(n_h − 1) when every y_u is 0 or 1);
//!     area of clearing = A·p̂, SE = A·SE(p̂) (no fpc, as Olofsson et al. 2014);
//!   - overall accuracy = Σ W_h c_h, c_h = mean share correct (y_u in an
//!     alert stratum, 1 − y_u in a control stratum), same variance form;
//!   - user's accuracy of "alert" = Σ_alert W_h q_h / Σ_alert W_h, of
//!     "no alert" likewise with 1 − q_h;
//!   - producer's accuracy of clearing P̂ = Y/(Y + Z) with Y = Σ_alert W_h q_h,
//!     Z = Σ_control W_h q_h and V̂ = [(1 − P̂)² V̂(Y) + P̂² V̂(Z)]/(Y + Z)²
//!     (the delta method; with one stratum per map class this is exactly the
//!     Olofsson producer's-accuracy variance with the sum over i ≠ j).
//!
//! Each unit has equal weight within its stratum (its own area does not
//! weight its outcome), and the variances treat the A_h as known, as
//! Olofsson et al. treat mapped areas, so they understate the uncertainty
//! when A_h is itself estimated.

use std::collections::BTreeMap;

use serde::Serialize;

use super::FiguresError;
use super::facts::{ControlFacts, ControlFinding, EventFacts, SampleInfo};
use super::rates::Basis;
use crate::domain::EventStatus;
use crate::statistics::estimators::{
    Estimate, Fpc, StratifiedProportion, StratumCount, StratumResult, StratumStatus, StratumValues,
    stratified_mean, stratified_proportion,
};

/// Sampled items without a usable outcome, by kind.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize)]
pub struct NonResponse {
    pub not_reached: u64,
    pub unvisited: u64,
    pub inconclusive: u64,
    pub disputed: u64,
}

impl NonResponse {
    pub fn total(&self) -> u64 {
        self.not_reached + self.unvisited + self.inconclusive + self.disputed
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AlertStratum {
    pub stratum: String,
    /// N_h.
    pub population: u64,
    /// Selected (sampled) events.
    pub selected: u64,
    pub confirmed: u64,
    pub false_alarm: u64,
    pub non_response: NonResponse,
    /// Σ area_ha / π over the selected events.
    pub mapped_area_ha: f64,
    /// confirmed / (confirmed + false_alarm), SE with fpc; `None` with no respondent.
    pub users_accuracy: Option<Estimate>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ControlStratum {
    pub stratum: String,
    pub selected: u64,
    /// Respondents: a clearing found at the point.
    pub clearing: u64,
    /// Respondents: no clearing found.
    pub no_clearing: u64,
    /// Visited without a finding: not an observation of the stratum.
    pub inconclusive: u64,
    /// Reported not reached: not an observation of the stratum.
    pub not_reached: u64,
    /// No report yet: not an observation of the stratum.
    pub unvisited: u64,
    /// Σ of the areas the teams estimated for the clearings found (ha).
    pub clearing_area_recorded_ha: f64,
    /// Clearings found with no area recorded (checklist 1), each taken as its whole plot.
    pub clearing_without_area: u64,
    /// Σ y_u over the respondents: the cleared plots' worth (a 0.3 ha
    /// clearing on a 1 ha plot adds 0.3).
    pub cleared_plots: f64,
    /// Σ y_u², for the variance.
    #[serde(skip)]
    pub cleared_plots_sq: f64,
    /// Σ area_ha / π over the selected points.
    pub mapped_area_ha: f64,
}

impl ControlStratum {
    /// Selected points that are not observations of the stratum.
    pub fn non_response(&self) -> u64 {
        self.inconclusive + self.not_reached + self.unvisited
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum MapClass {
    Alert,
    NoAlert,
}

/// One row of the error matrix.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ErrorMatrixRow {
    pub stratum: String,
    pub map_class: MapClass,
    /// Respondents with reference class clearing.
    pub clearing: u64,
    pub no_clearing: u64,
    pub mapped_area_ha: f64,
    /// W_h; 0 for a stratum without respondents (left out).
    pub weight: f64,
    /// q_h = ȳ_h, the mean cleared share of the respondents' units.
    pub cleared_share: Option<f64>,
    /// Estimated area proportions W_h·q_h and W_h·(1 − q_h).
    pub cell_clearing: f64,
    pub cell_no_clearing: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AreaAssessment {
    pub rows: Vec<ErrorMatrixRow>,
    /// Σ A_h over all strata.
    pub total_area_ha: f64,
    /// Σ A_h over strata with respondents (what the estimates describe).
    pub area_covered_ha: f64,
    pub overall_accuracy: Estimate,
    pub users_accuracy_alert: Option<Estimate>,
    pub users_accuracy_no_alert: Option<Estimate>,
    pub producers_accuracy_clearing: Option<Estimate>,
    pub clearing_proportion: Estimate,
    /// In ha, over the covered area.
    pub clearing_area_ha: Estimate,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Assessment {
    /// Always [`Basis::SampleEstimate`].
    pub basis: Basis,
    /// Sorted by stratum.
    pub alert_strata: Vec<AlertStratum>,
    /// Over all alert strata, weights N_h/N, with fpc.
    pub users_accuracy_of_alerts: Option<StratifiedProportion>,
    /// Sorted by stratum.
    pub control_strata: Vec<ControlStratum>,
    /// `None` without control points or without respondents.
    pub area: Option<AreaAssessment>,
}

fn check_unit(stratum: &str, area: f64, pi: f64) -> Result<(), FiguresError> {
    if !(area.is_finite() && area >= 0.0) {
        return Err(FiguresError::BadArea {
            stratum: stratum.to_string(),
            area,
        });
    }
    if !(pi.is_finite() && pi > 0.0 && pi <= 1.0) {
        return Err(FiguresError::BadInclusionProbability {
            stratum: stratum.to_string(),
            probability: pi,
        });
    }
    Ok(())
}

/// The alert strata of [`assessment`], gathered event by event. The first
/// bad input stops the gathering and is the error.
#[derive(Debug, Default)]
pub(crate) struct AlertStrata<'a> {
    strata: BTreeMap<&'a str, AlertStratum>,
    error: Option<FiguresError>,
}

impl<'a> AlertStrata<'a> {
    /// Adds a sampled event (others are not in the assessment).
    pub(crate) fn add(&mut self, e: &'a EventFacts) {
        if let (Some(s), None) = (&e.sampled, &self.error) {
            self.error = self.add_sampled(e, s).err();
        }
    }

    fn add_sampled(&mut self, e: &EventFacts, s: &'a SampleInfo) -> Result<(), FiguresError> {
        check_unit(&s.stratum, e.area_ha, s.inclusion_probability)?;
        let row = self
            .strata
            .entry(&s.stratum)
            .or_insert_with(|| AlertStratum {
                stratum: s.stratum.clone(),
                population: s.stratum_population,
                selected: 0,
                confirmed: 0,
                false_alarm: 0,
                non_response: NonResponse::default(),
                mapped_area_ha: 0.0,
                users_accuracy: None,
            });
        if row.population != s.stratum_population {
            return Err(FiguresError::InconsistentStratum {
                stratum: s.stratum.clone(),
                first: row.population,
                other: s.stratum_population,
            });
        }
        row.selected += 1;
        row.mapped_area_ha += e.area_ha / s.inclusion_probability;
        let nr = &mut row.non_response;
        match e.status {
            EventStatus::Confirmed => row.confirmed += 1,
            EventStatus::FalseAlarm => row.false_alarm += 1,
            EventStatus::NotReached => nr.not_reached += 1,
            EventStatus::Unvisited => nr.unvisited += 1,
            EventStatus::Inconclusive => nr.inconclusive += 1,
            EventStatus::Disputed => nr.disputed += 1,
        }
        Ok(())
    }

    /// The strata, sorted, each with its user's accuracy.
    fn finish(self) -> Result<Vec<AlertStratum>, FiguresError> {
        if let Some(e) = self.error {
            return Err(e);
        }
        let mut out: Vec<AlertStratum> = self.strata.into_values().collect();
        for s in &mut out {
            s.users_accuracy =
                stratified_proportion(&[count_of(s)], Fpc::Apply)?.map(|p| p.proportion);
        }
        Ok(out)
    }
}

fn count_of(s: &AlertStratum) -> StratumCount {
    StratumCount {
        label: s.stratum.clone(),
        population: s.population as f64,
        sampled: s.confirmed + s.false_alarm,
        successes: s.confirmed,
    }
}

fn control_strata(controls: &[ControlFacts]) -> Result<Vec<ControlStratum>, FiguresError> {
    let mut strata: BTreeMap<&str, ControlStratum> = BTreeMap::new();
    for c in controls {
        check_unit(&c.stratum, c.area_ha, c.inclusion_probability)?;
        let row = strata.entry(&c.stratum).or_insert_with(|| ControlStratum {
            stratum: c.stratum.clone(),
            selected: 0,
            clearing: 0,
            no_clearing: 0,
            inconclusive: 0,
            not_reached: 0,
            unvisited: 0,
            clearing_area_recorded_ha: 0.0,
            clearing_without_area: 0,
            cleared_plots: 0.0,
            cleared_plots_sq: 0.0,
            mapped_area_ha: 0.0,
        });
        row.selected += 1;
        row.mapped_area_ha += c.area_ha / c.inclusion_probability;
        add_finding(row, c)?;
    }
    Ok(strata.into_values().collect())
}

/// Counts control point `c`'s finding into its stratum `row`.
fn add_finding(row: &mut ControlStratum, c: &ControlFacts) -> Result<(), FiguresError> {
    match c.finding {
        ControlFinding::Clearing { area_ha } => {
            row.clearing += 1;
            match area_ha {
                Some(a) if a.is_finite() && a >= 0.0 => row.clearing_area_recorded_ha += a,
                Some(a) => {
                    return Err(FiguresError::BadArea {
                        stratum: c.stratum.clone(),
                        area: a,
                    });
                }
                None => row.clearing_without_area += 1,
            }
        }
        ControlFinding::NoClearing => row.no_clearing += 1,
        ControlFinding::Inconclusive => row.inconclusive += 1,
        ControlFinding::NotReached => row.not_reached += 1,
        ControlFinding::Unvisited => row.unvisited += 1,
    }
    if let Some(y) = c.finding.cleared_share(c.area_ha) {
        row.cleared_plots += y;
        row.cleared_plots_sq += y * y;
    }
    Ok(())
}

/// A row of the error matrix before estimation.
#[derive(Debug, Clone)]
struct Row {
    stratum: String,
    class: MapClass,
    /// Respondents with a clearing, and without.
    clearing: u64,
    no_clearing: u64,
    /// A_h.
    area: f64,
    /// Σ y_u and Σ y_u² over the respondents (y_u: the unit's cleared share).
    cleared: f64,
    cleared_sq: f64,
}

impl Row {
    fn respondents(&self) -> u64 {
        self.clearing + self.no_clearing
    }

    /// The unit values y_u as sums: (units with y_u > 0, Σy, Σy²).
    fn cleared_values(&self) -> (u64, f64, f64) {
        (self.clearing, self.cleared, self.cleared_sq)
    }

    /// The same for 1 − y_u.
    fn uncleared_values(&self) -> (u64, f64, f64) {
        let n = self.respondents() as f64;
        let sum = (n - self.cleared).max(0.0);
        let sq = (n - 2.0 * self.cleared + self.cleared_sq).clamp(0.0, sum);
        (self.no_clearing, sum, sq)
    }

    /// The values of "map class agrees with the reference".
    fn correct_values(&self) -> (u64, f64, f64) {
        match self.class {
            MapClass::Alert => self.cleared_values(),
            MapClass::NoAlert => self.uncleared_values(),
        }
    }
}

/// The stratified mean of `values` over `rows`, weights A_h, no fpc.
fn mean_of(
    rows: &[&Row],
    values: impl Fn(&Row) -> (u64, f64, f64),
) -> Result<Option<StratifiedProportion>, FiguresError> {
    let strata: Vec<StratumValues> = rows
        .iter()
        .map(|r| {
            let (positive, sum, sum_sq) = values(r);
            StratumValues {
                label: r.stratum.clone(),
                population: r.area,
                sampled: r.respondents(),
                positive,
                sum,
                sum_sq,
            }
        })
        .collect();
    Ok(stratified_mean(&strata, Fpc::Ignore)?)
}

fn area_assessment(
    alerts: &[AlertStratum],
    controls: &[ControlStratum],
) -> Result<Option<AreaAssessment>, FiguresError> {
    let rows = matrix_counts(alerts, controls);
    let all: Vec<&Row> = rows.iter().collect();
    let Some(clearing) = mean_of(&all, Row::cleared_values)? else {
        return Ok(None);
    };
    let Some(correct) = mean_of(&all, Row::correct_values)? else {
        return Ok(None);
    };
    let users_alert =
        mean_of(&of_class(&rows, MapClass::Alert), Row::cleared_values)?.map(|p| p.proportion);
    let users_no_alert =
        mean_of(&of_class(&rows, MapClass::NoAlert), Row::uncleared_values)?.map(|p| p.proportion);
    let producers = producers_accuracy(&rows, &clearing.strata);
    let matrix = matrix_rows(&rows, &clearing.strata);
    Ok(Some(AreaAssessment {
        rows: matrix,
        total_area_ha: clearing.population,
        area_covered_ha: clearing.population_covered,
        overall_accuracy: correct.proportion,
        users_accuracy_alert: users_alert,
        users_accuracy_no_alert: users_no_alert,
        producers_accuracy_clearing: producers,
        clearing_proportion: clearing.proportion,
        clearing_area_ha: clearing.total,
    }))
}

/// The error matrix's counts: the alert strata, then the control strata.
fn matrix_counts(alerts: &[AlertStratum], controls: &[ControlStratum]) -> Vec<Row> {
    alerts
        .iter()
        .map(|s| Row {
            stratum: s.stratum.clone(),
            class: MapClass::Alert,
            clearing: s.confirmed,
            no_clearing: s.false_alarm,
            area: s.mapped_area_ha,
            cleared: s.confirmed as f64,
            cleared_sq: s.confirmed as f64,
        })
        .chain(controls.iter().map(|s| Row {
            stratum: s.stratum.clone(),
            class: MapClass::NoAlert,
            clearing: s.clearing,
            no_clearing: s.no_clearing,
            area: s.mapped_area_ha,
            cleared: s.cleared_plots,
            cleared_sq: s.cleared_plots_sq,
        }))
        .collect()
}

fn of_class(rows: &[Row], class: MapClass) -> Vec<&Row> {
    rows.iter().filter(|r| r.class == class).collect()
}

/// Producer's accuracy of clearing from the per-stratum terms of the
/// clearing proportion (`strata`, in the order of `rows`).
fn producers_accuracy(rows: &[Row], strata: &[StratumResult]) -> Option<Estimate> {
    let (mut y, mut z) = (0.0, 0.0);
    let (mut var_y, mut var_z) = (Some(0.0), Some(0.0));
    for (row, s) in rows.iter().zip(strata) {
        if matches!(s.status, StratumStatus::Empty | StratumStatus::Unsampled) {
            continue;
        }
        let part = s.weight * s.proportion.unwrap_or(0.0);
        let (sum, var) = match row.class {
            MapClass::Alert => (&mut y, &mut var_y),
            MapClass::NoAlert => (&mut z, &mut var_z),
        };
        *sum += part;
        *var = var.zip(s.variance_contribution).map(|(a, b)| a + b);
    }
    (y + z > 0.0).then(|| {
        let p = y / (y + z);
        let var = var_y
            .zip(var_z)
            .map(|(vy, vz)| ((1.0 - p).powi(2) * vy + p * p * vz) / (y + z).powi(2));
        Estimate::normal(p, var.map(|v| v.max(0.0).sqrt()), 0.0, 1.0)
    })
}

/// The error matrix's rows with their weights and cell proportions.
fn matrix_rows(rows: &[Row], strata: &[StratumResult]) -> Vec<ErrorMatrixRow> {
    rows.iter()
        .zip(strata)
        .map(|(r, s)| {
            let q = s.proportion.unwrap_or(0.0);
            ErrorMatrixRow {
                stratum: r.stratum.clone(),
                map_class: r.class,
                clearing: r.clearing,
                no_clearing: r.no_clearing,
                mapped_area_ha: r.area,
                weight: s.weight,
                cleared_share: s.proportion,
                cell_clearing: s.weight * q,
                cell_no_clearing: s.weight * (1.0 - q),
            }
        })
        .collect()
}

/// The assessment figures; `Ok(None)` when no event is sampled and there is
/// no control point. Errors: an inclusion probability outside (0, 1], an
/// area that is negative or not finite, two values of `stratum_population`
/// in one stratum, a control stratum named like an alert stratum, more
/// respondents than N_h.
pub fn assessment(
    events: &[EventFacts],
    controls: &[ControlFacts],
) -> Result<Option<Assessment>, FiguresError> {
    let mut strata = AlertStrata::default();
    events.iter().for_each(|e| strata.add(e));
    assessment_of(strata, controls)
}

/// [`assessment`] of the alert strata gathered already.
pub(crate) fn assessment_of(
    strata: AlertStrata<'_>,
    controls: &[ControlFacts],
) -> Result<Option<Assessment>, FiguresError> {
    let alerts = strata.finish()?;
    let control = control_strata(controls)?;
    if alerts.is_empty() && control.is_empty() {
        return Ok(None);
    }
    if let Some(c) = control
        .iter()
        .find(|c| alerts.iter().any(|a| a.stratum == c.stratum))
    {
        return Err(FiguresError::StratumNameClash(c.stratum.clone()));
    }
    let counts: Vec<StratumCount> = alerts.iter().map(count_of).collect();
    let users_accuracy_of_alerts = stratified_proportion(&counts, Fpc::Apply)?;
    let area = if control.is_empty() {
        None
    } else {
        area_assessment(&alerts, &control)?
    };
    Ok(Some(Assessment {
        basis: Basis::SampleEstimate,
        alert_strata: alerts,
        users_accuracy_of_alerts,
        control_strata: control,
        area,
    }))
}

#[cfg(test)]
mod tests {
    use super::*;
    use groundproof_sync::Outcome;

    fn control(finding: ControlFinding) -> ControlFacts {
        ControlFacts {
            stratum: "control".into(),
            finding,
            area_ha: 1.0,
            inclusion_probability: 0.002,
        }
    }

    /// Control points answered with `words` (no area recorded), each a 1 ha
    /// plot with π = 0.002.
    fn controls(words: &[Outcome]) -> Vec<ControlFacts> {
        words
            .iter()
            .map(|o| control(ControlFinding::of_report(Some((*o, None)))))
            .collect()
    }

    /// The worked matrix's alert stratum of figures/tests.rs
    /// `error_matrix_agrees_with_olofsson`: 8 confirmed, 2 false alarms,
    /// 1 not reached, A = 110 ha.
    fn alert_stratum() -> AlertStratum {
        AlertStratum {
            stratum: "alert".into(),
            population: 100,
            selected: 11,
            confirmed: 8,
            false_alarm: 2,
            non_response: NonResponse {
                not_reached: 1,
                ..NonResponse::default()
            },
            mapped_area_ha: 110.0,
            users_accuracy: None,
        }
    }

    fn area_of(controls: &[ControlFacts]) -> AreaAssessment {
        let strata = control_strata(controls).expect("valid");
        area_assessment(&[alert_stratum()], &strata)
            .expect("valid")
            .expect("some")
    }

    #[test]
    fn control_outcomes_of_both_checklists_feed_the_error_matrix() {
        // (Checked there against estimators::olofsson.) Control stratum: 1
        // clearing (no area recorded: the whole plot), 19 none, 1 without a
        // finding, A = 21/0.002 = 10 500 ha. By hand: clearing area
        // 110·0.8 + 10 500·(1/20) = 613 ha, producer's accuracy 88/613.
        // Checklist 2's words, checklist 1's words, and a mix of the two.
        let mut v2 = vec![Outcome::ClearingFound];
        v2.extend([Outcome::NoClearingFound; 19]);
        v2.push(Outcome::NotReached);
        let mut v1 = vec![Outcome::Confirmed];
        v1.extend([Outcome::FalseAlarm; 19]);
        v1.push(Outcome::Inconclusive);
        let mixed: Vec<Outcome> = v2
            .iter()
            .zip(&v1)
            .enumerate()
            .map(|(i, (a, b))| if i % 2 == 0 { *a } else { *b })
            .collect();
        for words in [v2, v1, mixed] {
            let strata = control_strata(&controls(&words)).expect("valid");
            let s = &strata[0];
            assert_eq!((s.clearing, s.no_clearing, s.non_response()), (1, 19, 1));
            let area = area_of(&controls(&words));
            assert!((area.total_area_ha - 10_610.0).abs() < 1e-9);
            assert!((area.clearing_area_ha.estimate - 613.0).abs() < 1e-9);
            let pa = area.producers_accuracy_clearing.expect("pa").estimate;
            assert!((pa - 88.0 / 613.0).abs() < 1e-12, "{pa}");
        }
    }

    #[test]
    fn inconclusive_and_not_reached_are_counted_apart() {
        let findings = [
            ControlFinding::Clearing { area_ha: Some(2.0) },
            ControlFinding::NoClearing,
            ControlFinding::NoClearing,
            ControlFinding::Inconclusive,
            ControlFinding::Inconclusive,
            ControlFinding::NotReached,
            ControlFinding::Unvisited,
        ];
        let all: Vec<ControlFacts> = findings.iter().map(|f| control(*f)).collect();
        let s = &control_strata(&all).expect("valid")[0];
        assert_eq!((s.selected, s.clearing, s.no_clearing), (7, 1, 2), "{s:?}");
        assert_eq!((s.inconclusive, s.not_reached, s.unvisited), (2, 1, 1));
        // Neither is an observation: the estimates are those of the three
        // respondents whatever the non-respondents' kind.
        let swapped: Vec<ControlFacts> = findings
            .iter()
            .map(|f| match f {
                ControlFinding::Inconclusive => control(ControlFinding::NotReached),
                ControlFinding::NotReached => control(ControlFinding::Inconclusive),
                other => control(*other),
            })
            .collect();
        assert_eq!(area_of(&all), area_of(&swapped));
        // Checklist 2's words map to the kinds one to one.
        assert_eq!(
            ControlFinding::of_report(Some((Outcome::Inconclusive, None))),
            ControlFinding::Inconclusive
        );
        assert_eq!(
            ControlFinding::of_report(Some((Outcome::NotReached, None))),
            ControlFinding::NotReached
        );
        assert_eq!(ControlFinding::of_report(None), ControlFinding::Unvisited);
    }

    #[test]
    fn recorded_clearing_area_enters_the_area_estimate() {
        // The matrix of the test above, but the team estimated the clearing
        // at the point at 0.25 ha of its 1 ha plot: y = 0.25 (worked by hand,
        // Olofsson et al. 2014 / Stehman 2014 form of statistics.md §1.2(b)(c)).
        // Area of clearing = 110·0.8 + 10 500·(0.25/20) = 88 + 131.25 = 219.25 ha.
        // SE = √(110²·0.8·0.2/9 + 10 500²·s²/20), s² = (0.0625 − 20·0.0125²)/19
        // = 0.003125: √(215.1111 + 17 226.5625) = 132.0669 ha.
        // Producer's accuracy of clearing = 88/219.25 = 0.401368.
        let mut all = vec![control(ControlFinding::Clearing {
            area_ha: Some(0.25),
        })];
        all.extend((0..19).map(|_| control(ControlFinding::NoClearing)));
        all.push(control(ControlFinding::NotReached));
        let s = &control_strata(&all).expect("valid")[0];
        assert!((s.clearing_area_recorded_ha - 0.25).abs() < 1e-15);
        assert!((s.cleared_plots - 0.25).abs() < 1e-15);
        let area = area_of(&all);
        assert!(
            (area.clearing_area_ha.estimate - 219.25).abs() < 1e-9,
            "{:?}",
            area.clearing_area_ha
        );
        let se = area.clearing_area_ha.se.expect("se");
        assert!((se - 132.0669).abs() < 5e-5, "{se}");
        let pa = area.producers_accuracy_clearing.expect("pa").estimate;
        assert!((pa - 88.0 / 219.25).abs() < 1e-12, "{pa}");
        // Overall accuracy: (110·0.8 + 10 500·(1 − 0.0125))/10 610 (by hand).
        let oa = area.overall_accuracy.estimate;
        assert!((oa - (88.0 + 10_500.0 * 0.9875) / 10_610.0).abs() < 1e-12);
        // A clearing larger than the plot covers the plot: 613 ha as above.
        all[0] = control(ControlFinding::Clearing { area_ha: Some(3.0) });
        assert!((area_of(&all).clearing_area_ha.estimate - 613.0).abs() < 1e-9);
        // A recorded area that is not a number is refused.
        all[0] = control(ControlFinding::Clearing {
            area_ha: Some(f64::NAN),
        });
        assert!(matches!(
            control_strata(&all),
            Err(FiguresError::BadArea { .. })
        ));
    }
}
