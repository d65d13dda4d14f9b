//! The least-cost search: tank size, units of each pump type and array size that meet the
//! target in the horizon year at the lowest life-cycle cost; then the ranked alternatives,
//! the cost–reliability front, the horizon staging and the sensitivity table.
//!
//! `simulate` is used as a black box. Structure used instead of brute force:
//! * Monotonicity (assumed, and tested on the samples): for a fixed pump set, shortfall never
//!   increases as the tank or the array grows. So the smallest adequate tank is found by
//!   bisection over the candidate sizes, and over the array sizes a branch and bound brackets
//!   the tank of every array between the tanks of a larger and a smaller array
//!   (`search_pump_set`); runs of arrays whose cost lower bound cannot beat the cheapest
//!   design found are never simulated, and a bisection stops as soon as the lower end of its
//!   bracket makes every design of its array too dear. Each pump set first tries its cheapest
//!   corner (smallest array and tank), and each bisection the smallest tank of its bracket:
//!   when they meet the target the search of that set or array ends there. Bisection splits
//!   at the lower quarter, because a check that fails stops its years early and one that
//!   passes does not.
//! * A cost lower bound that needs no simulation (capital, replacements, salvage, fixed
//!   maintenance; the whole NPV when no generator or grid pump is installed) prunes pump sets
//!   and arrays.
//! * A weather ensemble is judged by counting years that miss the target; a year stops as soon
//!   as it has missed it, and an ensemble as soon as the answer is certain (too many years have
//!   missed, or too few are left to change it). Years run hardest first (ranked once on the
//!   largest design), so failing designs are found quickly. Within one pump set the verdict of
//!   a weather year is also inferred from its verdicts for other sizes (met with a smaller
//!   array and tank: met; missed with a larger: missed) and, when demand does not fall with
//!   time (growth ≥ 0), for other years (met later: met; missed earlier: missed). The first
//!   year a design misses the target (alternatives, staging) is found by bisection over the
//!   years with the same inference; the report of the chosen design holds the base and
//!   horizon years, and [`complete_horizon`] adds every year between for the documents that
//!   show the table (`tapplan plan`, `tapplan size --json`).
//! * Every year run is remembered by the model (`Model::run_year_with`), so the report, the
//!   alternatives, the front and the sensitivity table do not run a year twice.
//! * The chosen design is confirmed at the end from simulated years only (no inferred
//!   verdicts): it passes, and the next smaller tank fails (this also guards the monotonicity
//!   assumption).

pub mod cost;

use serde::Serialize;

use crate::error::Error;
use crate::rules::RuleSet;
use crate::scheme::{DriveKind, JudgedOn, Scheme, TankSearch, WeatherMode};
use crate::simulate::{
    self, Abort, Design, Ensemble, Model, RunReport, Scenario, YearResult, daily_demand,
    meets_target, years_allowed_to_fail,
};
use cost::{CostBreakdown, Operation};

/// Most designs a search may consider (pump sets × array sizes × tank sizes).
pub const MAX_DESIGNS: usize = 2_000_000;
/// Most pump-set combinations.
pub const MAX_PUMP_SETS: usize = 500;
/// Most year-simulations a search may be estimated to need (see [`SearchEstimate`]).
/// Measured on the Kessa Ridge sample (debug build, 2 shared cores): 2774 year-simulations in
/// 69 s, about 25 ms each, and the search ran 153 of the 744 ensemble checks the estimate
/// allows (pruning and early stops). At this bound the estimate allows about 60,000 actual
/// year-simulations: minutes in a release build, under an hour in a debug build, never hours.
pub const MAX_ESTIMATED_YEAR_SIMULATIONS: usize = 500_000;
/// Above this many estimated year-simulations `tapplan size` says up front how big the
/// search is.
pub const LARGE_SEARCH_YEAR_SIMULATIONS: usize = 50_000;

/// Upper estimate of the work of a search, before it runs.
///
/// ensemble checks ≈ pump sets × array sizes × (⌈log₂ tank sizes⌉ + 1) — one tank bisection
/// per pump set and array size; year-simulations ≈ ensemble checks × weather years.
/// Pruning by cost and early stops make the real count smaller (153 of 744 on Kessa Ridge).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct SearchEstimate {
    pub pump_sets: usize,
    pub array_sizes: usize,
    pub tank_sizes: usize,
    pub designs_in_ranges: usize,
    pub ensemble_checks: usize,
    pub year_simulations: usize,
}

/// Estimates the search of a prepared model (see [`SearchEstimate`]); errors as the search would.
pub fn estimate_search(m: &Model) -> Result<SearchEstimate, Error> {
    let s = &m.scheme;
    let pump_sets = pump_sets(s)?.len();
    let array_sizes = array_candidates(s).len();
    let tank_sizes = tank_candidates(s).len();
    let bisection = (tank_sizes.max(1) as f64).log2().ceil() as usize + 1;
    let ensemble_checks = pump_sets
        .saturating_mul(array_sizes)
        .saturating_mul(bisection);
    Ok(SearchEstimate {
        pump_sets,
        array_sizes,
        tank_sizes,
        designs_in_ranges: pump_sets
            .saturating_mul(array_sizes)
            .saturating_mul(tank_sizes),
        ensemble_checks,
        year_simulations: ensemble_checks.saturating_mul(m.weather_years()),
    })
}

/// One evaluated design.
#[derive(Debug, Clone, Serialize)]
pub struct Evaluated {
    pub design: Design,
    pub design_text: String,
    pub judged_shortfall_hours: f64,
    pub judged_demand_met_fraction: f64,
    pub meets_target: bool,
    pub cost: CostBreakdown,
    /// Usable storage in days of the base year's average demand (days of autonomy).
    pub storage_days: f64,
    /// First year (calendar) the design misses the target, if within the horizon.
    pub first_failing_year: Option<i32>,
}

/// A point of the cost–reliability front.
#[derive(Debug, Clone, Serialize)]
pub struct FrontPoint {
    pub design_text: String,
    pub judged_shortfall_hours: f64,
    pub judged_demand_met_fraction: f64,
    pub npv: f64,
}

/// A staged alternative: build less now, add the rest when the smaller design first fails.
#[derive(Debug, Clone, Serialize)]
pub struct Stage {
    pub start_with: String,
    /// The design built first.
    pub start_design: Design,
    pub fails_from_year: Option<i32>,
    pub then_add: String,
    /// NPV of building the chosen design at once minus the staged NPV (positive: staging saves).
    pub capital_saving_pw: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct SensitivityRow {
    pub case: String,
    pub applicable: bool,
    pub judged_shortfall_hours: f64,
    pub judged_demand_met_fraction: f64,
    pub meets_target: bool,
    pub npv: f64,
}

/// When nothing in the ranges meets the target.
#[derive(Debug, Clone, Serialize)]
pub struct Unreachable {
    pub best_design: String,
    pub best_shortfall_hours: f64,
    pub best_demand_met_fraction: f64,
    /// What limits it: source yield, energy, or pump capacity, with the figures behind it.
    pub limited_by: String,
    /// Each limit relaxed on its own, and whether that alone would meet the target.
    pub relaxations: Vec<Relaxation>,
    /// Present worth of the best design found, though it does not meet the target.
    pub present_worth: Option<f64>,
}

/// One limit relaxed on its own for the best design found.
#[derive(Debug, Clone, Serialize)]
pub struct Relaxation {
    pub limit: String,
    /// What was relaxed, in words.
    pub relaxed: String,
    pub meets_target: bool,
    pub judged_shortfall_hours: f64,
}

/// Whether design `d` meets the target in the horizon year on `m` under scenario `sc`, and its
/// judged shortfall hours.
fn horizon_verdict(m: &Model, d: &Design, sc: &Scenario) -> (bool, f64) {
    let s = &m.scheme;
    let h = s.info.horizon_years;
    let years: Vec<YearResult> = (0..m.weather_years_for(d))
        .map(|w| m.run_year_with(d, h, w, false, sc))
        .collect();
    let e = simulate::summarise(s, years);
    (simulate::meets_target(s, &e), e.judged_shortfall_hours)
}

/// Relaxes each limit in turn for the best design found (source yield, drive energy, pump
/// units, tank size) and runs its horizon year again: the limits whose relaxation alone meets
/// the target are the ones that bind.
fn relaxations(m: &Model, d: &Design) -> Vec<Relaxation> {
    let s = &m.scheme;
    let mut out = Vec::new();
    let mut push = |limit: &str, relaxed: String, (ok, h): (bool, f64)| {
        out.push(Relaxation {
            limit: limit.to_string(),
            relaxed,
            meets_target: ok,
            judged_shortfall_hours: h,
        })
    };
    if !s.boreholes.is_empty() {
        let sc = Scenario {
            yield_factor: 100.0,
            ..Scenario::default()
        };
        push(
            "source yield",
            "every borehole's safe yield × 100".into(),
            horizon_verdict(m, d, &sc),
        );
    }
    // drive energy: a three times larger array; generators and mains all day
    let mut s2 = s.clone();
    let mut d2 = d.clone();
    let mut what = Vec::new();
    if s.uses_solar() && d.array_w > 0.0 {
        d2.array_w = d.array_w * 3.0;
        what.push("array × 3");
    }
    let all_day = vec![crate::scheme::Window {
        start_hour: 0,
        end_hour: 24,
    }];
    if let Some(g) = s2.generator.as_mut() {
        g.run_hours = all_day.clone();
        what.push("generator all day");
    }
    if let Some(g) = s2.grid.as_mut() {
        g.supply_hours = all_day;
        what.push("mains all day");
    }
    if !what.is_empty()
        && let Ok(m2) = Model::new(&s2)
    {
        let v = horizon_verdict(&m2, &d2, &Scenario::default());
        m.count_runs_of(&m2);
        push("drive energy", what.join(", "), v);
    }
    let mut d3 = d.clone();
    for u in &mut d3.units {
        if *u > 0 {
            *u *= 2;
        }
    }
    if d3.units != d.units {
        push(
            "pump units",
            "twice the units of each pump type installed".into(),
            horizon_verdict(m, &d3, &Scenario::default()),
        );
    }
    let d4 = Design {
        tank_m3: d.tank_m3 * 4.0,
        ..d.clone()
    };
    push(
        "tank size",
        "a tank four times larger".into(),
        horizon_verdict(m, &d4, &Scenario::default()),
    );
    out
}

/// Solar schemes: the tank the mean days alone would call for, for comparison.
#[derive(Debug, Clone, Serialize)]
pub struct MeanDaysComparison {
    pub tank_on_mean_days_m3: Option<f64>,
    pub tank_on_ensemble_m3: f64,
    pub explanation: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct SearchStats {
    pub pump_sets: usize,
    pub array_sizes: usize,
    pub tank_sizes: usize,
    pub designs_in_ranges: usize,
    pub designs_evaluated: usize,
    pub year_simulations: usize,
    /// Passes over a year beyond the first, run to reach each year's periodic state.
    pub extra_passes: usize,
}

/// The rules' judgement of a design: the ids of the rules it fails (severity fail) and of
/// those it only warns about. The same judgement `tapplan check` prints.
#[derive(Debug, Clone, Default, Serialize)]
pub struct Verdict {
    pub acceptable: bool,
    pub failing_rules: Vec<String>,
    pub warning_rules: Vec<String>,
}

impl Verdict {
    pub fn of(outcomes: &[crate::rules::RuleOutcome]) -> Verdict {
        use crate::rules::Status;
        let ids = |st: Status| {
            outcomes
                .iter()
                .filter(|o| o.status == st)
                .map(|o| o.id.clone())
                .collect::<Vec<_>>()
        };
        let failing_rules = ids(Status::Fail);
        Verdict {
            acceptable: failing_rules.is_empty(),
            failing_rules,
            warning_rules: ids(Status::Warn),
        }
    }
}

/// The one judgement of a design: every rule in force on its simulated report (the scheme's
/// targets are rules of severity fail too), the verdict `check` gives. The declared-figure
/// rules compare a proposal's declared figures with its own design, so they judge the file's
/// design only and are left out for any other design.
pub fn judge(s: &Scheme, report: &RunReport, rules: &RuleSet) -> Verdict {
    let own = simulate::resolve_design(s, &simulate::DesignOverrides::default()).ok();
    let is_own = own.as_ref() == Some(&report.design);
    let outcomes: Vec<crate::rules::RuleOutcome> = crate::rules::evaluate(s, report, rules)
        .into_iter()
        .filter(|o| is_own || !rules.get(&o.id).is_some_and(|r| r.quantity.is_declared()))
        .collect();
    Verdict::of(&outcomes)
}

/// The failing rules of a verdict that a design can change (see
/// [`crate::rules::measure::Quantity::depends_on_design`]): the search looks only among
/// designs with none.
fn blocking_rules(v: &Verdict, rules: &RuleSet) -> Vec<String> {
    v.failing_rules
        .iter()
        .filter(|id| rules.get(id).is_none_or(|r| r.quantity.depends_on_design()))
        .cloned()
        .collect()
}

/// Most designs that meet the target but fail a rule the search sets aside before it gives
/// up and shows the cheapest of them with the rules it fails.
const MAX_SET_ASIDE: usize = 24;

/// The result of sizing.
#[derive(Debug, Clone, Serialize)]
pub struct Plan {
    pub scheme: String,
    pub target_text: String,
    pub judged_on: JudgedOn,
    pub weather_years: usize,
    pub chosen: Option<Evaluated>,
    /// The rules' verdict on the chosen design (None when nothing meets the target).
    pub verdict: Option<Verdict>,
    /// Full results of the chosen design (or of the best reachable one when none meets).
    pub report: RunReport,
    pub alternatives: Vec<Evaluated>,
    pub front: Vec<FrontPoint>,
    pub staging: Vec<Stage>,
    pub sensitivity: Vec<SensitivityRow>,
    pub unreachable: Option<Unreachable>,
    pub mean_days: Option<MeanDaysComparison>,
    pub next_smaller_tank_m3: Option<f64>,
    pub stats: SearchStats,
    pub notes: Vec<String>,
}

/// The target in words.
pub fn target_text(s: &Scheme) -> String {
    let mut parts = Vec::new();
    if let Some(h) = s.targets.max_shortfall_hours_per_year {
        parts.push(format!("at most {h:.0} shortfall hours a year"));
    }
    if let Some(m) = s.targets.min_demand_met_fraction {
        parts.push(format!(
            "at least {:.1} % of the year's demand met",
            m * 100.0
        ));
    }
    parts.push(format!(
        "at least {:.0} L per person per day delivered",
        s.targets.min_supply_m3_per_person_day * 1000.0
    ));
    format!(
        "{} in {} (the horizon year)",
        parts.join(" and "),
        s.horizon_year()
    )
}

/// The tank sizes the search may choose from, ascending.
pub fn tank_candidates(s: &Scheme) -> Vec<f64> {
    match &s.tank.search {
        Some(TankSearch::Range {
            min_m3,
            max_m3,
            step_m3,
        }) => {
            let n = ((max_m3 - min_m3) / step_m3 + 1e-9).floor() as usize;
            (0..=n).map(|k| min_m3 + k as f64 * step_m3).collect()
        }
        Some(TankSearch::Sizes(v)) => v.clone(),
        None => s.tank.capacity_m3.into_iter().collect(),
    }
}

/// Array sizes the search may choose from (W), ascending.
pub fn array_candidates(s: &Scheme) -> Vec<f64> {
    let Some(sol) = &s.solar else {
        return vec![0.0];
    };
    match sol.array_range_w {
        Some(r) => {
            let n = ((r.max_w - r.min_w) / r.module_w + 1e-9).floor() as usize;
            (0..=n).map(|k| r.min_w + k as f64 * r.module_w).collect()
        }
        None => sol.array_peak_w.into_iter().collect(),
    }
}

/// Every combination of units (0..=max per type) except all zero, cheapest capital first.
pub fn pump_sets(s: &Scheme) -> Result<Vec<Vec<u32>>, Error> {
    let mut total: usize = 1;
    for p in &s.pumps {
        total = total.saturating_mul(p.max_units as usize + 1);
    }
    if total > MAX_PUMP_SETS {
        return Err(Error::Input(format!(
            "pumps: the pump ranges give {total} combinations of units; at most {MAX_PUMP_SETS} are searched — lower some pumps[].max_units"
        )));
    }
    let mut sets = vec![Vec::new()];
    for p in &s.pumps {
        let mut next = Vec::new();
        for set in &sets {
            for n in 0..=p.max_units {
                let mut v = set.clone();
                v.push(n);
                next.push(v);
            }
        }
        sets = next;
    }
    sets.retain(|v| v.iter().any(|n| *n > 0));
    Ok(sets)
}

fn uses_solar(s: &Scheme, units: &[u32]) -> bool {
    s.pumps
        .iter()
        .zip(units)
        .any(|(p, n)| *n > 0 && p.drive == DriveKind::Solar)
}

/// What a tank bisection found for one array.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum TankIn {
    /// The smallest adequate tank (index).
    At(usize),
    /// Even the largest tank misses the target.
    Fails,
    /// Stopped: the smallest adequate tank is at least this index, and no design of the array
    /// with it could be kept.
    Pruned(usize),
}

/// The search context.
struct Search<'a> {
    m: &'a Model,
    tanks: Vec<f64>,
    /// Weather years in the order they are run (hardest first).
    order: Vec<usize>,
    horizon: u32,
    /// Distinct ensemble checks run.
    evaluated: usize,
    /// Ensemble verdicts already reached, by design and year.
    verdicts: std::collections::HashMap<(u64, u64, Vec<u32>, u32), bool>,
    /// Simulated verdicts of each weather year, by pump set: (array W, tank m³, year, met
    /// the target), for inferring the verdicts of other array and tank sizes and years.
    year_points: std::collections::HashMap<Vec<u32>, Vec<Vec<YearPoint>>>,
    /// Demand does not fall from year to year (population growth ≥ 0), so a verdict also
    /// holds for other years: met in a year, met in every earlier one; missed, missed later.
    demand_grows: bool,
}

/// A simulated verdict of one weather year: (array W, tank m³, year, met the target).
type YearPoint = (f64, f64, u32, bool);

/// The verdict of one weather year for (array, tank, year) implied by verdicts of the same
/// pump set, if any. Assuming shortfall does not increase with tank or array size, a year met
/// with a smaller-or-equal array and tank is met, and one missed with a larger-or-equal array
/// and tank is missed. Across years only when `demand_grows` (shortfall then does not fall
/// with time): met in a later year implies met, missed in an earlier year implies missed;
/// otherwise only verdicts of the same year count.
fn infer_year(
    points: &[YearPoint],
    array_w: f64,
    tank_m3: f64,
    year: u32,
    demand_grows: bool,
) -> Option<bool> {
    for &(a, t, y, ok) in points {
        let later = if demand_grows { y >= year } else { y == year };
        let earlier = if demand_grows { y <= year } else { y == year };
        if ok && later && a <= array_w && t <= tank_m3 {
            return Some(true);
        }
        if !ok && earlier && a >= array_w && t >= tank_m3 {
            return Some(false);
        }
    }
    None
}

impl Search<'_> {
    /// Does the design meet the target in `year`, judged on every weather year (exact,
    /// stopping as soon as the answer is certain)?
    fn passes(&mut self, d: &Design, year: u32) -> bool {
        let key = (
            d.tank_m3.to_bits(),
            d.array_w.to_bits(),
            d.units.clone(),
            year,
        );
        if let Some(v) = self.verdicts.get(&key) {
            return *v;
        }
        self.evaluated += 1;
        let points = self.year_points.entry(d.units.clone()).or_default();
        let m = self.m;
        let n = m.weather_years_for(d);
        if points.len() < n {
            points.resize(n, Vec::new());
        }
        let mut new_points: Vec<(usize, bool)> = Vec::new();
        let v = {
            let points = &*points;
            ensemble_passes_with(
                m,
                d,
                year,
                &self.order,
                |w| infer_year(&points[w], d.array_w, d.tank_m3, year, self.demand_grows),
                |w, ok| new_points.push((w, ok)),
            )
        };
        for (w, ok) in new_points {
            points[w].push((d.array_w, d.tank_m3, year, ok));
        }
        self.verdicts.insert(key, v);
        v
    }

    /// As [`Self::passes`] but from simulated years only (no verdict inferred from other
    /// designs): used to confirm the answer.
    fn passes_exact(&mut self, d: &Design, year: u32) -> bool {
        ensemble_passes(self.m, d, year, &self.order)
    }

    /// Smallest tank index that passes, by bisection, knowing that every tank below `lo`
    /// fails and that `hi` passes (`None`: not known; when even the largest tank fails there
    /// is no answer). Shortfall is assumed non-increasing in tank size. `worth(i)` says
    /// whether a design of this array with tank index `i` or larger could still be kept
    /// (its cost lower bound beats what was found); once the bracket's lower end is not
    /// worth it the bisection stops there ([`TankIn::Pruned`]).
    fn tank_in(
        &mut self,
        units: &[u32],
        array_w: f64,
        lo: usize,
        hi: Option<usize>,
        top_first: bool,
        worth: &dyn Fn(usize) -> bool,
    ) -> TankIn {
        let d = |t: f64| Design {
            tank_m3: t,
            units: units.to_vec(),
            array_w,
        };
        let top = self.tanks.len() - 1;
        if !worth(lo.min(top)) {
            return TankIn::Pruned(lo.min(top));
        }
        let verified = hi.is_some() || top_first;
        let known_hi = hi;
        let mut hi = hi.unwrap_or(top);
        let mut lo = lo.min(hi);
        // The smallest tank of the bracket first: it passes often when the tank hardly changes
        // between neighbouring arrays, and a check that fails there fails early in the year.
        if lo < hi {
            if self.passes(&d(self.tanks[lo]), self.horizon) {
                return TankIn::At(lo);
            }
            lo += 1;
        }
        // With `hi` unknown the largest tank is checked before the bisection (`top_first`: one
        // check tells an array that cannot meet the target at all), or the bisection runs as if
        // it passed and checks it only if the answer comes out there (one check fewer when it
        // does not).
        if known_hi.is_none() && top_first && !self.passes(&d(self.tanks[top]), self.horizon) {
            return TankIn::Fails;
        }
        // invariant: every tank below lo fails, hi passes (or is the unchecked largest tank)
        while lo < hi {
            if !worth(lo) {
                return TankIn::Pruned(lo);
            }
            // Split at the lower quarter, not the middle: a check that passes runs every
            // weather year it needs to the end of the year, one that fails stops each failing
            // year early, so passes cost several times more and fewer of them pay (of a half,
            // a third, a quarter and a sixth, a quarter used the fewest year-simulations on
            // the samples and 48 varied copies of them).
            let mid = lo + (hi - lo) / 4;
            if self.passes(&d(self.tanks[mid]), self.horizon) {
                hi = mid;
            } else {
                lo = mid + 1;
            }
        }
        if hi == top && !verified {
            if !worth(top) {
                return TankIn::Pruned(top);
            }
            if !self.passes(&d(self.tanks[top]), self.horizon) {
                return TankIn::Fails;
            }
        }
        TankIn::At(hi)
    }
}

/// The point at which a year has surely missed the target.
fn year_abort(m: &Model, year: u32, sc: &Scenario) -> Abort {
    let t = &m.scheme.targets;
    Abort {
        max_shortfall_hours: t.max_shortfall_hours_per_year.unwrap_or(f64::INFINITY),
        max_unmet_m3: t.min_demand_met_fraction.map_or(f64::INFINITY, |f| {
            (1.0 - f) * m.annual_demand_m3(year, sc) + 1e-9
        }),
    }
}

/// Exact ensemble check: true when no more weather years miss the target than the judged
/// percentile allows. Years run in `order`; the check stops once the answer is certain.
pub fn ensemble_passes(m: &Model, d: &Design, year: u32, order: &[usize]) -> bool {
    ensemble_passes_with(m, d, year, order, |_| None, |_, _| {})
}

/// As [`ensemble_passes`], taking the verdict of a weather year from `known` where it gives
/// one (no simulation), and telling `ran` the verdict of every year it simulated.
fn ensemble_passes_with(
    m: &Model,
    d: &Design,
    year: u32,
    order: &[usize],
    known: impl Fn(usize) -> Option<bool>,
    mut ran: impl FnMut(usize, bool),
) -> bool {
    use rayon::prelude::*;
    let s = &m.scheme;
    let sc = Scenario::default();
    let n = m.weather_years_for(d);
    let allowed = years_allowed_to_fail(s.targets.judged_on, n);
    let abort = year_abort(m, year, &sc);
    let years: Vec<usize> = order.iter().copied().filter(|w| *w < n).take(n).collect();
    let (mut fails, mut done) = (0usize, 0usize);
    // the answer is certain once too many years have failed or too few are left to matter
    let settled = |fails: usize, done: usize| -> Option<bool> {
        if fails > allowed {
            Some(false)
        } else if fails + (n - done) <= allowed {
            Some(true)
        } else {
            None
        }
    };
    // Years that must be simulated run a fixed number at a time, in parallel: the same years
    // run on every machine, so the answer and the count of year-simulations do not depend on
    // the core count.
    let mut pending: Vec<usize> = Vec::with_capacity(ENSEMBLE_CHUNK);
    let mut i = 0;
    loop {
        while pending.len() < ENSEMBLE_CHUNK && i < years.len() {
            let w = years[i];
            i += 1;
            match known(w) {
                Some(ok) => {
                    fails += usize::from(!ok);
                    done += 1;
                    if let Some(v) = settled(fails, done) {
                        return v;
                    }
                }
                None => pending.push(w),
            }
        }
        if pending.is_empty() {
            return settled(fails, done).unwrap_or(true);
        }
        let verdicts: Vec<bool> = pending
            .par_iter()
            .map(|w| m.year_passes(d, year, *w, &sc, abort))
            .collect();
        for (w, ok) in pending.drain(..).zip(verdicts) {
            ran(w, ok);
            fails += usize::from(!ok);
            done += 1;
        }
        if let Some(v) = settled(fails, done) {
            return v;
        }
    }
}

/// Weather years judged at a time in an ensemble check.
const ENSEMBLE_CHUNK: usize = 2;

/// Confirms a design: steps the tank up until it passes, then down while the next smaller tank
/// passes too (neither moves when shortfall is monotone in tank size, as assumed). Returns the
/// design (None when even the largest tank fails), the next smaller tank (which fails), and
/// whether a step was needed.
fn confirm(search: &mut Search, mut d: Design) -> (Option<Design>, Option<f64>, bool) {
    let tanks = search.tanks.clone();
    let top = tanks.len() - 1;
    let h = search.horizon;
    let mut idx = tanks.iter().position(|t| *t == d.tank_m3).unwrap_or(0);
    let mut stepped = false;
    while !search.passes_exact(&d, h) {
        if idx == top {
            return (None, None, stepped);
        }
        idx += 1;
        d.tank_m3 = tanks[idx];
        stepped = true;
    }
    while idx > 0 {
        let smaller = Design {
            tank_m3: tanks[idx - 1],
            ..d.clone()
        };
        if !search.passes_exact(&smaller, h) {
            break;
        }
        idx -= 1;
        d = smaller;
    }
    (Some(d), (idx > 0).then(|| tanks[idx - 1]), stepped)
}

/// The smallest tank larger than `d`'s, among the candidates, with which the design passes
/// every rule it can change (None when even the largest fails). The rules it is used for
/// (see [`crate::rules::measure::Quantity::larger_tank_helps`]) improve with the tank, so
/// the largest is judged first and the rest by bisection.
fn larger_tank_passing(search: &mut Search, d: &Design, rules: &RuleSet) -> Option<Design> {
    let s = &search.m.scheme;
    let tanks = search.tanks.clone();
    let at = |i: usize| Design {
        tank_m3: tanks[i],
        ..d.clone()
    };
    let start = tanks.iter().position(|t| *t > d.tank_m3)?;
    let ok = |search: &mut Search, i: usize| {
        let r = report_at_ends(search, &at(i));
        blocking_rules(&judge(s, &r, rules), rules).is_empty()
    };
    let (mut lo, mut hi) = (start, tanks.len() - 1);
    if !ok(search, hi) {
        return None;
    }
    while lo < hi {
        let mid = lo + (hi - lo) / 2;
        if ok(search, mid) {
            hi = mid;
        } else {
            lo = mid + 1;
        }
    }
    Some(at(hi))
}

/// Operation figures of a design in a year, from its judged weather year (or the only one).
fn operation(m: &Model, d: &Design, year: u32, weather: usize, sc: &Scenario) -> Operation {
    let r = m.run_year_with(d, year, weather, false, sc);
    Operation {
        fuel_l: r.annual.generator_fuel_l,
        grid_kwh: r.annual.grid_energy_kwh,
        generator_run_hours: if r.annual.generator_energy_kwh > 0.0 {
            r.annual.pump_run_hours
        } else {
            0.0
        },
        delivered_m3: r.annual.delivered_m3,
    }
}

fn cost_of(
    m: &Model,
    d: &Design,
    sc: &Scenario,
    median_w: usize,
    fuel_factor: f64,
) -> CostBreakdown {
    let s = &m.scheme;
    let first = operation(m, d, 0, median_w, sc);
    let last = operation(m, d, s.info.horizon_years, median_w, sc);
    cost::life_cycle_cost(s, d, &first, &last, fuel_factor)
}

impl Search<'_> {
    /// First year the design misses the target, by bisection over the years (demand assumed
    /// non-decreasing with time); None when it meets it through the horizon. The base year
    /// is checked only when every later year checked misses it.
    fn first_failing_year(&mut self, d: &Design) -> Option<i32> {
        let base = self.m.scheme.info.base_year;
        let h = self.horizon;
        if self.passes(d, h) {
            return None;
        }
        // lo meets (None: no year checked meets), hi misses
        let (mut lo, mut hi): (Option<u32>, u32) = (None, h);
        loop {
            let first = lo.map_or(0, |l| l + 1);
            if first >= hi {
                break;
            }
            // the upper three quarters: a year that misses is a cheap check (its weather
            // years stop early), one that meets is not, and only the year before the answer
            // has to meet (on 48 varied copies of the samples it ran as many year-simulations
            // as the middle; on Kessa Ridge's staging one passing check fewer)
            let mid = first + 3 * (hi - 1 - first) / 4;
            if self.passes(d, mid) {
                lo = Some(mid);
            } else {
                hi = mid;
            }
        }
        Some(base + hi as i32)
    }
}

fn evaluated(
    m: &Model,
    d: &Design,
    e: &Ensemble,
    cost: CostBreakdown,
    ffy: Option<i32>,
) -> Evaluated {
    Evaluated {
        design_text: d.describe(&m.scheme),
        design: d.clone(),
        judged_shortfall_hours: e.judged_shortfall_hours,
        judged_demand_met_fraction: e.judged_demand_met_fraction,
        meets_target: meets_target(&m.scheme, e),
        cost,
        storage_days: simulate::storage_days(&m.scheme, d.tank_m3, &daily_demand(&m.scheme, 0)),
        first_failing_year: ffy,
    }
}

/// Index of the weather year at the median of shortfall for a design (for operation costs).
fn median_weather(e: &Ensemble) -> usize {
    let mut idx: Vec<usize> = (0..e.years.len()).collect();
    idx.sort_by(|a, b| {
        e.years[*a]
            .annual
            .shortfall_hours
            .cmp(&e.years[*b].annual.shortfall_hours)
            .then(a.cmp(b))
    });
    idx.get(idx.len() / 2).copied().unwrap_or(0)
}

/// The cheapest designs found so far: overall, and per number of pump units in total (for the
/// alternatives).
#[derive(Default)]
struct Found {
    best: Option<(f64, Design)>,
    per_count: std::collections::BTreeMap<u32, (f64, Design)>,
    /// Pump sets with an array size (W, as bits) set aside because their design fails a rule:
    /// the search's designs for them are not offered.
    excluded: std::collections::HashSet<(Vec<u32>, u64)>,
}

impl Found {
    /// A design is worth looking for while its cost lower bound beats the cheapest design of
    /// its own unit count (each count keeps its cheapest design for the alternatives).
    fn worth(&self, count: u32, lower_bound: f64) -> bool {
        let beats_best = self.best.as_ref().is_none_or(|(c, _)| lower_bound < *c);
        let beats_count = self
            .per_count
            .get(&count)
            .is_none_or(|(c, _)| lower_bound < *c);
        beats_best || beats_count
    }

    fn offer(&mut self, cost: f64, d: &Design) {
        if self
            .excluded
            .contains(&(d.units.clone(), d.array_w.to_bits()))
        {
            return;
        }
        self.offer_checked(cost, d);
    }

    /// Offers a design the rules have already passed (a larger tank of a set-aside pump set).
    fn offer_checked(&mut self, cost: f64, d: &Design) {
        let count: u32 = d.units.iter().sum();
        if self.best.as_ref().is_none_or(|(b, _)| cost < *b) {
            self.best = Some((cost, d.clone()));
        }
        if self.per_count.get(&count).is_none_or(|(b, _)| cost < *b) {
            self.per_count.insert(count, (cost, d.clone()));
        }
    }
}

/// The NPV the search ranks designs by: the simulation-free part when that is the whole NPV
/// (no generator or grid pump), else the full life-cycle cost.
fn search_npv(m: &Model, d: &Design, median_w: usize) -> f64 {
    if cost::npv_needs_no_simulation(&m.scheme, d) {
        cost::npv_lower_bound(&m.scheme, d)
    } else {
        cost_of(m, d, &Scenario::default(), median_w, 1.0).npv
    }
}

/// The least-cost design of one pump set over the array sizes, by branch and bound.
///
/// Monotonicity assumed (see the module notes): the smallest adequate tank T(a) does not grow
/// with the array a, and an array that fails with the largest tank fails for every smaller
/// array. So T at the ends of a run of array sizes brackets T inside it, and the cost of any
/// array inside is at least the cost lower bound of its smallest array with the tank of its
/// largest. Runs that cannot beat the cheapest design found are dropped unsearched; the
/// others are split at their middle array, whose tank is found by bisection inside the
/// bracket.
fn search_pump_set(
    search: &mut Search,
    found: &mut Found,
    units: &[u32],
    arrays: &[f64],
    median_w: usize,
) {
    let s = &search.m.scheme;
    let count: u32 = units.iter().sum();
    let design = |a: f64, t: f64| Design {
        tank_m3: t,
        units: units.to_vec(),
        array_w: a,
    };
    let top_a = arrays.len() - 1;
    if !found.worth(
        count,
        cost::npv_lower_bound(s, &design(arrays[0], search.tanks[0])),
    ) {
        return;
    }
    // The cheapest corner first (smallest array, smallest tank): when it meets the target it
    // is the least-cost design of the set if cost does not fall with the array (no generator
    // or grid pump whose fuel or energy a larger array could save; cost is taken not to fall
    // with the tank, as everywhere in the search). When it misses, the years fail early, so
    // the check is cheap.
    let corner = design(arrays[0], search.tanks[0]);
    if search.passes(&corner, search.horizon) {
        found.offer(search_npv(search.m, &corner, median_w), &corner);
        if arrays.len() == 1 || cost::npv_needs_no_simulation(s, &corner) {
            return;
        }
    }
    // Whether an array could still give a design worth keeping with a tank of index t or
    // larger (the cost lower bound grows with the tank).
    let tanks = search.tanks.clone();
    let worth_at = |a: f64, found: &Found, t: usize| {
        found.worth(count, cost::npv_lower_bound(s, &design(a, tanks[t])))
    };
    // the largest array first: if even it fails with the largest tank, every array does
    let t_top = {
        let f: &Found = found;
        let worth = |t: usize| worth_at(arrays[top_a], f, t);
        search.tank_in(units, arrays[top_a], 0, None, true, &worth)
    };
    let t_top = match t_top {
        TankIn::Fails => return,
        TankIn::At(t) => {
            let d = design(arrays[top_a], search.tanks[t]);
            found.offer(search_npv(search.m, &d, median_w), &d);
            t
        }
        // every smaller array needs at least this tank
        TankIn::Pruned(t) => t,
    };
    // Runs of arrays (lo, hi) exclusive, with what is known of the tank at each end: at the
    // smaller end an upper bound (None: unknown; Some(None): fails even with the largest
    // tank), at the larger end a lower bound (None: fails even with the largest tank, so
    // does every array below it). The bounds are exact tanks where a bisection ended there.
    type End = Option<Option<usize>>;
    let mut runs: Vec<(Option<usize>, End, usize, Option<usize>)> =
        vec![(None, None, top_a, Some(t_top))];
    while let Some((lo, t_lo, hi, t_hi)) = runs.pop() {
        let first = lo.map_or(0, |l| l + 1);
        if first >= hi {
            continue;
        }
        let Some(t_hi) = t_hi else {
            continue; // the larger end fails with the largest tank: so does every array here
        };
        if !worth_at(arrays[first], found, t_hi) {
            continue;
        }
        let mid = (first + hi - 1) / 2;
        // T(mid) lies between the tanks of the ends: T(hi) ≤ T(mid) ≤ T(lo)
        let upper = match t_lo {
            Some(Some(t)) => Some(t),
            _ => None,
        };
        let t_mid = if upper == Some(t_hi) {
            TankIn::At(t_hi)
        } else {
            // an inside array: no top-first check (fewer checks on the samples)
            let f: &Found = found;
            let worth = |t: usize| worth_at(arrays[mid], f, t);
            search.tank_in(units, arrays[mid], t_hi, upper, false, &worth)
        };
        let (lower_run_hi, upper_run_lo): (Option<usize>, End) = match t_mid {
            TankIn::At(t) => {
                let d = design(arrays[mid], search.tanks[t]);
                found.offer(search_npv(search.m, &d, median_w), &d);
                (Some(t), Some(Some(t)))
            }
            TankIn::Fails => (None, Some(None)),
            // T(mid) is at least t: a lower bound for the smaller arrays, no upper bound for
            // the larger ones
            TankIn::Pruned(t) => (Some(t), None),
        };
        // the cheaper (smaller-array) run is searched second so the larger tightens the bound
        runs.push((lo, t_lo, mid, lower_run_hi));
        runs.push((Some(mid), upper_run_lo, hi, Some(t_hi)));
    }
}

/// Sizes the scheme.
pub fn size(s: &Scheme) -> Result<Plan, Error> {
    let m = Model::new(s)?;
    size_with_model(&m)
}

/// Sizes with a prepared model.
pub fn size_with_model(m: &Model) -> Result<Plan, Error> {
    size_with_rules(m, &RuleSet::defaults())
}

/// The least tank the storage-days rule in force allows, m³ (None when the rule is off or
/// has no fixed limit): its days of the horizon year's average supplied demand over the
/// usable share.
pub fn storage_floor_m3(s: &Scheme, rules: &RuleSet) -> Option<(f64, f64)> {
    let r = rules.get("storage-days").filter(|r| r.enabled)?;
    let days = r.limit_si?;
    let dd = simulate::daily_demand(s, s.info.horizon_years);
    let floor = days * dd.supplied_m3_per_day / s.tank.usable_fraction.max(1e-9);
    (floor > 0.0 && floor.is_finite()).then_some((days, floor))
}

/// Sizes with a prepared model under the rules in force: the storage-days rule is a lower
/// bound on the tank, and the chosen design is judged by every rule (the verdict `check`
/// gives).
pub fn size_with_rules(m: &Model, rules: &RuleSet) -> Result<Plan, Error> {
    let s = &m.scheme;
    let all_tanks = tank_candidates(s);
    if all_tanks.is_empty() {
        return Err(Error::Input("tank: no tank sizes to search".into()));
    }
    let floor = storage_floor_m3(s, rules);
    let mut tanks: Vec<f64> = match floor {
        Some((_, f)) => all_tanks
            .iter()
            .copied()
            .filter(|t| *t >= f - 1e-9)
            .collect(),
        None => all_tanks.clone(),
    };
    if tanks.is_empty() {
        // every size in the range stores less than the rule asks: keep the largest
        tanks.push(*all_tanks.last().expect("checked above"));
    }
    let arrays_all = array_candidates(s);
    let sets = pump_sets(s)?;
    let designs_in_ranges = sets.len() * arrays_all.len() * tanks.len();
    if designs_in_ranges > MAX_DESIGNS {
        return Err(Error::Input(format!(
            "the ranges hold {designs_in_ranges} designs; at most {MAX_DESIGNS} may be searched — narrow tank.capacity_range_m3, drives.solar.array_range_kwp or pumps[].max_units"
        )));
    }
    let est = estimate_search(m)?;
    if est.year_simulations > MAX_ESTIMATED_YEAR_SIMULATIONS {
        return Err(Error::Input(format!(
            "the search would need about {} ensemble checks ({} pump sets × {} array sizes × {} tank bisection steps) over {} weather years, about {} year-simulations; at most {MAX_ESTIMATED_YEAR_SIMULATIONS} are allowed so a search ends in minutes — narrow drives.solar.array_range_kwp (or a larger module_kwp), lower pumps[].max_units, or use fewer weather.years",
            est.ensemble_checks,
            est.pump_sets,
            est.array_sizes,
            est.ensemble_checks / (est.pump_sets * est.array_sizes).max(1),
            m.weather_years(),
            est.year_simulations
        )));
    }
    let horizon = s.info.horizon_years;
    let top_tank = tanks.len() - 1;
    let biggest = Design {
        tank_m3: tanks[top_tank],
        units: s.pumps.iter().map(|p| p.max_units).collect(),
        array_w: arrays_all.last().copied().unwrap_or(0.0),
    };
    // rank the weather years by how hard they are for the largest design
    let big = m.run_ensemble(&biggest, horizon);
    let mut order: Vec<usize> = (0..big.years.len()).collect();
    order.sort_by(|a, b| {
        let (ya, yb) = (&big.years[*a], &big.years[*b]);
        yb.annual
            .unmet_m3
            .total_cmp(&ya.annual.unmet_m3)
            .then(a.cmp(b))
    });
    let n = m.weather_years();
    let mut search = Search {
        m,
        tanks: tanks.clone(),
        order,
        horizon,
        evaluated: 0,
        verdicts: Default::default(),
        year_points: Default::default(),
        demand_grows: s.demand.growth_rate_per_year >= 0.0,
    };
    let median_w = median_weather(&big);

    // ---- the search
    let mut order_sets: Vec<(f64, Vec<u32>)> = sets
        .iter()
        .map(|u| {
            let a0 = if uses_solar(s, u) { arrays_all[0] } else { 0.0 };
            let d = Design {
                tank_m3: tanks[0],
                units: u.clone(),
                array_w: a0,
            };
            (cost::npv_lower_bound(s, &d), u.clone())
        })
        .collect();
    order_sets.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    // ---- the search, among designs that pass the rules
    // Pump sets that fail a rule before any simulation (their full-speed flow against the
    // tested yield) are left out; the rest are searched for the least-cost design that meets
    // the target, which is then judged on every rule in force ([`judge`]). A design failing a
    // rule it could change is set aside with its pump set and array, and the search is run
    // again without it (its verdicts are remembered, so a repeat costs little); where only
    // rules a larger tank helps fail, the smallest larger tank that passes stays in the race.
    let mut notes = Vec::new();
    let mut left_out: Vec<(String, Vec<String>)> = Vec::new();
    order_sets.retain(|(_, units)| {
        let d = Design {
            tank_m3: tanks[0],
            units: units.clone(),
            array_w: arrays_all.first().copied().unwrap_or(0.0),
        };
        let v = Verdict::of(&crate::rules::evaluate_unsimulated(s, Some(&d), rules));
        let blocking: Vec<String> = blocking_rules(&v, rules)
            .into_iter()
            .filter(|id| {
                rules
                    .get(id)
                    .is_some_and(|r| r.quantity != crate::rules::measure::Quantity::StorageDays)
            })
            .collect();
        if blocking.is_empty() {
            true
        } else {
            left_out.push((d.describe_pumps(s), blocking));
            false
        }
    });
    let mut excluded = std::collections::HashSet::new();
    let mut larger_tanks: Vec<Design> = Vec::new();
    let mut set_aside: Vec<(Design, RunReport, Vec<String>)> = Vec::new();
    let mut stepped_note = false;
    let (chosen_design, next_smaller, per_count, judged) = loop {
        let mut found = Found {
            excluded: excluded.clone(),
            ..Found::default()
        };
        for d in &larger_tanks {
            found.offer_checked(search_npv(m, d, median_w), d);
        }
        for (_, units) in &order_sets {
            let arrays: Vec<f64> = if uses_solar(s, units) {
                arrays_all.clone()
            } else {
                vec![0.0]
            };
            search_pump_set(&mut search, &mut found, units, &arrays, median_w);
        }
        let per_count = found.per_count;
        let Some((_, best)) = found.best else {
            break (None, None, per_count, None);
        };
        // a larger tank of a set-aside pump set is taken as it is (the smaller ones fail a rule)
        let (d, smaller) = if larger_tanks.contains(&best) {
            (Some(best), None)
        } else {
            let (d, smaller, stepped) = confirm(&mut search, best);
            stepped_note |= stepped;
            (d, smaller)
        };
        let Some(d) = d else {
            break (None, None, per_count, None);
        };
        let report = report_at_ends(&mut search, &d);
        let verdict = judge(s, &report, rules);
        let blocking = blocking_rules(&verdict, rules);
        if blocking.is_empty() || set_aside.len() >= MAX_SET_ASIDE {
            break (Some(d), smaller, per_count, Some((report, verdict)));
        }
        excluded.insert((d.units.clone(), d.array_w.to_bits()));
        let tank_helps = blocking.iter().all(|id| {
            rules
                .get(id)
                .is_some_and(|r| r.quantity.larger_tank_helps())
        });
        if tank_helps && let Some(t) = larger_tank_passing(&mut search, &d, rules) {
            larger_tanks.push(t);
        }
        set_aside.push((d, report, blocking));
    };
    if stepped_note {
        notes.push("the tank found by bisection did not pass when re-checked (shortfall was not monotone in tank size here); it was stepped up until it did".to_string());
    }
    // Nothing passes every rule: show the cheapest design that meets the target, with the
    // rules it fails (the verdict says it is not acceptable).
    let (chosen_design, next_smaller, judged) = match (chosen_design, set_aside.first()) {
        (None, Some((d, report, _))) => {
            let verdict = judge(s, report, rules);
            (Some(d.clone()), None, Some((report.clone(), verdict)))
        }
        (d, _) => (d, next_smaller, judged),
    };
    if !left_out.is_empty() {
        let list: Vec<String> = left_out
            .iter()
            .map(|(p, ids)| format!("{p} (fails {})", ids.join(", ")))
            .collect();
        notes.push(format!(
            "pump sets left out of the search because they fail a rule whatever the tank and array: {}",
            list.join("; ")
        ));
    }
    if !set_aside.is_empty() {
        let acceptable = judged.as_ref().is_some_and(|(_, v)| v.acceptable);
        let list: Vec<String> = set_aside
            .iter()
            .take(4)
            .map(|(d, _, ids)| format!("{} (fails {})", d.describe(s), ids.join(", ")))
            .collect();
        let more = set_aside.len().saturating_sub(4);
        notes.push(format!(
            "{} design(s) that meet the target but fail a rule were set aside{}: {}{}",
            set_aside.len(),
            if acceptable {
                " for a dearer one that passes"
            } else if set_aside.len() >= MAX_SET_ASIDE {
                "; the search stopped there and shows the cheapest of them"
            } else {
                "; none in the ranges passes every rule, so the cheapest is shown with the rules it fails"
            },
            list.join("; "),
            if more > 0 {
                format!("; and {more} more")
            } else {
                String::new()
            }
        ));
    }
    if let Some((_, v)) = &judged {
        let fixed: Vec<&String> = v
            .failing_rules
            .iter()
            .filter(|id| {
                rules
                    .get(id)
                    .is_some_and(|r| !r.quantity.depends_on_design())
            })
            .collect();
        if !fixed.is_empty() {
            notes.push(format!(
                "{} {} whatever the tank, pumps and array: {} on the scheme's network or its declared figures, which the search cannot change; the proposal needs that changed, not a larger design",
                fixed.iter().map(|s| s.as_str()).collect::<Vec<_>>().join(", "),
                if fixed.len() == 1 { "fails" } else { "fail" },
                if fixed.len() == 1 { "it rests" } else { "they rest" },
            ));
        }
    }
    // the alternatives get the same confirmation; the chosen design stands for its own count
    let mut confirmed_alts: Vec<Design> = Vec::new();
    for (_, (_, d)) in per_count.iter() {
        let same_set = chosen_design
            .as_ref()
            .is_some_and(|c| c.units.iter().sum::<u32>() == d.units.iter().sum::<u32>());
        if same_set {
            confirmed_alts.push(chosen_design.clone().expect("chosen"));
        } else if larger_tanks.contains(d) {
            confirmed_alts.push(d.clone());
        } else if let (Some(c), _, _) = confirm(&mut search, d.clone()) {
            confirmed_alts.push(c);
        }
    }

    // ---- report on the chosen design or the best reachable
    let (report, verdict) = match judged {
        Some((r, v)) => (r, Some(v)),
        None => (report_at_ends(&mut search, &biggest), None),
    };
    let median_w = median_weather(&report.horizon_year);
    let chosen = chosen_design.as_ref().map(|d| {
        let c = cost_of(m, d, &Scenario::default(), median_w, 1.0);
        evaluated(m, d, &report.horizon_year, c, report.first_failing_year)
    });
    let unreachable = if chosen.is_none() {
        Some(diagnose(m, &biggest, &report, "with the largest design"))
    } else {
        None
    };

    // ---- alternatives, front, staging, sensitivity and the mean-day comparison
    // Two independent halves run side by side: what asks the search for verdicts (the first
    // failing year of each alternative, then the staging) and what only runs ensembles. The
    // years each half asks for do not depend on the other, so neither do the results or the
    // count of year-simulations (a year is counted once, whoever runs it first).
    let chosen_ref = chosen_design.as_ref();
    let ((alt_ffys, staging), (alt_runs, (front, (sensitivity, mean_days)))) = rayon::join(
        || {
            let ffys: Vec<Option<i32>> = confirmed_alts
                .iter()
                .map(|d| search.first_failing_year(d))
                .collect();
            let staging = chosen_ref
                .map(|d| staging(&mut search, d, &arrays_all, median_w))
                .unwrap_or_default();
            (ffys, staging)
        },
        || {
            let alt_runs: Vec<(Ensemble, CostBreakdown)> = confirmed_alts
                .iter()
                .map(|d| {
                    let e = m.run_ensemble(d, horizon);
                    let c = cost_of(m, d, &Scenario::default(), median_weather(&e), 1.0);
                    (e, c)
                })
                .collect();
            // the cost–reliability front over tank sizes around the chosen pump set and array
            let front = chosen_ref
                .map(|d| front(m, d, &tanks, median_w))
                .unwrap_or_default();
            let rest = rayon::join(
                || {
                    chosen_ref
                        .map(|d| sensitivity(m, d, median_w))
                        .transpose()
                        .map(Option::unwrap_or_default)
                },
                // mean days vs the ensemble (solar with varying weather)
                || match (chosen_ref, &s.weather.mode) {
                    (Some(d), WeatherMode::Synthetic { .. } | WeatherMode::File { .. })
                        if s.uses_solar() =>
                    {
                        mean_days_comparison(s, d, &tanks).map(Some)
                    }
                    _ => Ok(None),
                },
            );
            (alt_runs, (front, rest))
        },
    );
    let sensitivity = sensitivity?;
    let mean_days = mean_days?;
    let mut alternatives: Vec<Evaluated> = confirmed_alts
        .iter()
        .zip(alt_runs)
        .zip(alt_ffys)
        .map(|((d, (e, c)), ffy)| evaluated(m, d, &e, c, ffy))
        .collect();
    alternatives.sort_by(|a, b| a.cost.npv.total_cmp(&b.cost.npv));

    let stats = SearchStats {
        pump_sets: sets.len(),
        array_sizes: arrays_all.len(),
        tank_sizes: tanks.len(),
        designs_in_ranges,
        designs_evaluated: search.evaluated,
        year_simulations: m.simulations_run(),
        extra_passes: m.extra_passes_run(),
    };
    if let Some((days, _)) = floor {
        let sets_it = chosen
            .as_ref()
            .is_some_and(|c| c.design.tank_m3 <= tanks[0] + 1e-9 && tanks[0] > all_tanks[0]);
        notes.push(format!(
            "the storage-days rule in force (at least {} days of the horizon year's average demand) makes {} m³ the smallest tank tried{}",
            simulate::fmt_g(days),
            simulate::fmt_g(tanks[0]),
            if sets_it {
                "; it, not the shortfall, sets the chosen tank"
            } else {
                ""
            }
        ));
    }
    Ok(Plan {
        scheme: s.info.name.clone(),
        target_text: target_text(s),
        judged_on: s.targets.judged_on,
        weather_years: n,
        chosen,
        verdict,
        report,
        alternatives,
        front,
        staging,
        sensitivity,
        unreachable,
        mean_days,
        next_smaller_tank_m3: next_smaller,
        stats,
        notes,
    })
}

/// The run report of a design as the search needs it: base and horizon years (the horizon
/// table holds only those two rows) and the first failing year by bisection over the years
/// ([`first_failing_year`]). [`complete_horizon`] fills in every year for the documents
/// that show the table.
fn report_at_ends(search: &mut Search, d: &Design) -> RunReport {
    let mut r = simulate::run_report_with(search.m, d, simulate::HorizonYears::Ends);
    r.first_failing_year = search.first_failing_year(d);
    r
}

/// Fills the plan's horizon table with every year from the base year to the horizon (an
/// ensemble per year for solar schemes), as `tapplan plan` and `tapplan size --json` show
/// it; the first failing year is then read from the table, and the year-simulation count
/// includes these runs.
pub fn complete_horizon(m: &Model, plan: &mut Plan) {
    if plan.report.horizon.len() as u32 == m.scheme.info.horizon_years + 1 {
        return;
    }
    let rows = m.horizon(&plan.report.design);
    plan.report.first_failing_year = rows.iter().find(|r| !r.meets_target).map(|r| r.year);
    plan.report.horizon = rows;
    plan.stats.year_simulations = m.simulations_run();
    plan.stats.extra_passes = m.extra_passes_run();
}

/// One design summed up for the side-by-side comparison of the file's proposed design and
/// the recommended one.
#[derive(Debug, Clone, Serialize)]
pub struct DesignSummary {
    pub design: Design,
    pub design_text: String,
    pub judged_shortfall_hours: f64,
    pub judged_demand_met_fraction: f64,
    /// Litres per person per day delivered in the lower of the first and horizon judged year.
    pub litres_per_person_day: f64,
    pub meets_target: bool,
    pub capital: f64,
    pub present_worth: f64,
    pub cost_per_m3: Option<f64>,
    pub verdict: Verdict,
}

/// Sums up one design under the rules in force: its run report (base and horizon years),
/// its cost and the rules' verdict.
pub fn summarise_design(m: &Model, d: &Design, rules: &RuleSet) -> DesignSummary {
    let s = &m.scheme;
    let report = simulate::run_report_with(m, d, simulate::HorizonYears::Ends);
    let median_w = median_weather(&report.horizon_year);
    let c = cost_of(m, d, &Scenario::default(), median_w, 1.0);
    let ev = evaluated(m, d, &report.horizon_year, c, report.first_failing_year);
    let judged = |e: &Ensemble| {
        e.years
            .get(e.representative)
            .map_or(f64::INFINITY, |y| y.delivered_m3_per_person_day)
    };
    let lpd = judged(&report.first_year).min(judged(&report.horizon_year)) * 1000.0;
    DesignSummary {
        design: d.clone(),
        design_text: d.describe(s),
        judged_shortfall_hours: ev.judged_shortfall_hours,
        judged_demand_met_fraction: ev.judged_demand_met_fraction,
        litres_per_person_day: if lpd.is_finite() { lpd } else { 0.0 },
        meets_target: ev.meets_target,
        capital: ev.cost.capital,
        present_worth: ev.cost.npv,
        cost_per_m3: ev.cost.levelised_per_m3,
        verdict: judge(s, &report, rules),
    }
}

/// Evaluates one given design (no search) into a `Plan`: `chosen` is the design when it meets
/// the target in the horizon year, otherwise `unreachable` says what limits it. The design
/// itself is the only entry of `alternatives` (so its cost is reported either way); the
/// sensitivity table is computed around it; front, staging and the mean-day comparison need a
/// search and are left empty, with a note.
pub fn evaluate_fixed(m: &Model, d: &Design) -> Result<Plan, Error> {
    let s = &m.scheme;
    let report = simulate::run_report(m, d);
    let median_w = median_weather(&report.horizon_year);
    let c = cost_of(m, d, &Scenario::default(), median_w, 1.0);
    let ev = evaluated(m, d, &report.horizon_year, c, report.first_failing_year);
    let chosen = ev.meets_target.then(|| ev.clone());
    let unreachable = (!ev.meets_target).then(|| diagnose(m, d, &report, "with the given design"));
    let sensitivity = sensitivity(m, d, median_w)?;
    let verdict = Some(judge(s, &report, &RuleSet::defaults()));
    Ok(Plan {
        scheme: s.info.name.clone(),
        target_text: target_text(s),
        judged_on: s.targets.judged_on,
        weather_years: m.weather_years(),
        chosen,
        verdict,
        report,
        alternatives: vec![ev],
        front: Vec::new(),
        staging: Vec::new(),
        sensitivity,
        unreachable,
        mean_days: None,
        next_smaller_tank_m3: None,
        stats: SearchStats {
            pump_sets: 1,
            array_sizes: 1,
            tank_sizes: 1,
            designs_in_ranges: 1,
            designs_evaluated: 1,
            year_simulations: m.simulations_run(),
            extra_passes: m.extra_passes_run(),
        },
        notes: vec![format!(
            "fixed design given on the command line ({}); no search was run, so the ranked alternatives, the cost–reliability front, the staging and the mean-day comparison are not computed",
            d.describe(s)
        )],
    })
}

/// What limits the best reachable design.
fn diagnose(m: &Model, d: &Design, r: &RunReport, which: &str) -> Unreachable {
    let s = &m.scheme;
    let y: &YearResult = &r.horizon_year.years[r
        .horizon_year
        .representative
        .min(r.horizon_year.years.len().saturating_sub(1))];
    let demand = y.annual.demand_m3;
    let safe_yield_m3: f64 = s
        .boreholes
        .iter()
        .map(|b| b.safe_yield_m3_per_s() * 3600.0 * 24.0 * 365.0)
        .sum::<f64>()
        + s.streams
            .iter()
            .map(|st| st.flow_m3_per_s * 3600.0 * 24.0 * 365.0)
            .sum::<f64>();
    // installed pump types that can never reach the tank (see `Pump::cannot_lift_m`)
    let installed: Vec<&crate::scheme::Pump> = s
        .pumps
        .iter()
        .zip(&d.units)
        .filter(|(_, n)| **n > 0)
        .map(|(p, _)| p)
        .collect();
    let short_pumps: Vec<String> = installed
        .iter()
        .filter_map(|p| {
            p.cannot_lift_m(&s.boreholes, &s.tank).map(|(h, l)| {
                format!(
                    "`{}` (highest head {h:.1} m against a static lift of {l:.1} m)",
                    p.name
                )
            })
        })
        .collect();
    let limited_by = if !short_pumps.is_empty() && short_pumps.len() == installed.len() {
        format!(
            "the pump: {} cannot lift water to the tank at any speed; more array, generator hours or units do not help — choose a pump with more head",
            short_pumps.join(", ")
        )
    } else if !short_pumps.is_empty() {
        format!(
            "the pumps: {} cannot lift water to the tank at any speed and add nothing; the other pumps alone do not meet the target",
            short_pumps.join(", ")
        )
    } else if y.yield_capped_hours > 100 || (safe_yield_m3 > 0.0 && safe_yield_m3 < demand) {
        format!(
            "source yield: the pumps were held at the safe yield for {} hours of the horizon year; the sources' safe yield is {:.0} m³/year against a demand of {:.0} m³",
            y.yield_capped_hours, safe_yield_m3, demand
        )
    } else if y.dry_run_stop_hours > 100 {
        format!(
            "drawdown: dry-run protection stopped the pumps for {} hours; the intake is too shallow for the drawdown at this pumping rate",
            y.dry_run_stop_hours
        )
    } else if s.uses_solar() || s.generator.is_some() || s.grid.is_some() {
        format!(
            "energy or pump capacity: {which} the pumps ran {:.0} hours and lifted {:.0} m³ against a demand of {:.0} m³; more array, more generator hours or more pump units are needed",
            y.annual.pump_run_hours, y.annual.pumped_m3, demand
        )
    } else {
        format!(
            "pump capacity: the pumps lifted {:.0} m³ against a demand of {:.0} m³",
            y.annual.pumped_m3, demand
        )
    };
    // the evidence: relax each limit on its own and see which would meet the target
    let relax = relaxations(m, d);
    let binding: Vec<&Relaxation> = relax.iter().filter(|x| x.meets_target).collect();
    let limited_by = if !short_pumps.is_empty() && short_pumps.len() == installed.len() {
        limited_by
    } else if binding.is_empty() {
        format!(
            "{limited_by}. No single limit relaxed on its own meets the target ({}): several bind together",
            relax
                .iter()
                .map(|x| format!("{}: {:.0} h", x.relaxed, x.judged_shortfall_hours))
                .collect::<Vec<_>>()
                .join("; ")
        )
    } else {
        format!(
            "{} (relaxed on its own, {} meets the target{}); the pumps ran {:.0} hours and lifted {:.0} m³ against a demand of {:.0} m³",
            binding
                .iter()
                .map(|x| x.limit.as_str())
                .collect::<Vec<_>>()
                .join(" or "),
            binding
                .iter()
                .map(|x| x.relaxed.as_str())
                .collect::<Vec<_>>()
                .join(" or "),
            {
                let not: Vec<&str> = relax
                    .iter()
                    .filter(|x| !x.meets_target)
                    .map(|x| x.limit.as_str())
                    .collect();
                if not.is_empty() {
                    String::new()
                } else {
                    format!("; relaxing {} alone does not", not.join(", "))
                }
            },
            y.annual.pump_run_hours,
            y.annual.pumped_m3,
            demand
        )
    };
    let median_w = median_weather(&r.horizon_year);
    let cost = cost_of(m, d, &Scenario::default(), median_w, 1.0);
    Unreachable {
        best_design: d.describe(s),
        best_shortfall_hours: r.horizon_year.judged_shortfall_hours,
        best_demand_met_fraction: r.horizon_year.judged_demand_met_fraction,
        limited_by,
        relaxations: relax,
        present_worth: (cost.npv > 0.0).then_some(cost.npv),
    }
}

fn front(m: &Model, d: &Design, tanks: &[f64], median_w: usize) -> Vec<FrontPoint> {
    let s = &m.scheme;
    let idx = tanks.iter().position(|t| *t == d.tank_m3).unwrap_or(0);
    let mut picks: Vec<usize> = [0.25, 0.5, 0.75, 1.0, 1.5, 2.0]
        .iter()
        .map(|f| {
            let want = d.tank_m3 * f;
            (0..tanks.len())
                .min_by(|a, b| {
                    (tanks[*a] - want)
                        .abs()
                        .total_cmp(&(tanks[*b] - want).abs())
                })
                .unwrap_or(idx)
        })
        .collect();
    picks.sort_unstable();
    picks.dedup();
    let mut pts: Vec<FrontPoint> = picks
        .into_iter()
        .map(|i| {
            let dd = Design {
                tank_m3: tanks[i],
                ..d.clone()
            };
            let e = m.run_ensemble(&dd, s.info.horizon_years);
            FrontPoint {
                design_text: dd.describe(s),
                judged_shortfall_hours: e.judged_shortfall_hours,
                judged_demand_met_fraction: e.judged_demand_met_fraction,
                npv: cost_of(m, &dd, &Scenario::default(), median_w, 1.0).npv,
            }
        })
        .collect();
    // keep the non-dominated points: cheaper ones must have more shortfall
    pts.sort_by(|a, b| a.npv.total_cmp(&b.npv));
    let mut out: Vec<FrontPoint> = Vec::new();
    for p in pts {
        if out
            .last()
            .is_none_or(|q| p.judged_shortfall_hours < q.judged_shortfall_hours)
        {
            out.push(p);
        }
    }
    out
}

fn staging(search: &mut Search, d: &Design, arrays: &[f64], median_w: usize) -> Vec<Stage> {
    let m = search.m;
    let s = &m.scheme;
    let i = s.costs.discount_rate;
    let full = cost_of(m, d, &Scenario::default(), median_w, 1.0);
    let mut stages = Vec::new();
    let mut smaller = Vec::new();
    for (k, p) in s.pumps.iter().enumerate() {
        if d.units[k] > 0 && d.units.iter().sum::<u32>() > 1 {
            let mut u = d.units.clone();
            u[k] -= 1;
            smaller.push((
                Design {
                    units: u,
                    ..d.clone()
                },
                format!("1 × {}", p.name),
            ));
        }
    }
    if let Some(pos) = arrays.iter().position(|a| *a == d.array_w)
        && pos > 0
        && uses_solar(s, &d.units)
    {
        let step = (pos / 3).max(1);
        let a = arrays[pos - step];
        smaller.push((
            Design {
                array_w: a,
                ..d.clone()
            },
            format!("{:.2} kWp of array", (d.array_w - a) / 1000.0),
        ));
    }
    for (sd, add) in smaller {
        let ffy = search.first_failing_year(&sd);
        let saving = match ffy {
            Some(y) if y > s.info.base_year => {
                let years = (y - s.info.base_year) as f64;
                let extra =
                    full.capital - cost::capital_items(s, &sd).iter().map(|x| x.1).sum::<f64>();
                extra * (1.0 - crate::physics::money::present_worth_factor_single(i, years))
            }
            _ => 0.0,
        };
        stages.push(Stage {
            start_with: sd.describe(s),
            start_design: sd.clone(),
            fails_from_year: ffy,
            then_add: add,
            capital_saving_pw: saving,
        });
    }
    stages
}

fn sensitivity(m: &Model, d: &Design, median_w: usize) -> Result<Vec<SensitivityRow>, Error> {
    let s = &m.scheme;
    let h = s.info.horizon_years;
    let sens = &s.sensitivity;
    let mut rows = Vec::new();
    let row = |case: String, mm: &Model, sc: Scenario, fuel: f64| -> SensitivityRow {
        use rayon::prelude::*;
        let years: Vec<YearResult> = (0..mm.weather_years_for(d))
            .into_par_iter()
            .map(|w| mm.run_year_with(d, h, w, false, &sc))
            .collect();
        let e = simulate::summarise(&mm.scheme, years);
        SensitivityRow {
            case,
            applicable: true,
            judged_shortfall_hours: e.judged_shortfall_hours,
            judged_demand_met_fraction: e.judged_demand_met_fraction,
            meets_target: meets_target(&mm.scheme, &e),
            npv: cost_of(mm, d, &sc, median_w.min(mm.weather_years() - 1), fuel).npv,
        }
    };
    let na = |case: String| SensitivityRow {
        case,
        applicable: false,
        judged_shortfall_hours: 0.0,
        judged_demand_met_fraction: 0.0,
        meets_target: false,
        npv: 0.0,
    };
    rows.push(row("as planned".into(), m, Scenario::default(), 1.0));
    rows.push(row(
        format!("demand {:+.0} %", sens.demand_fraction * 100.0),
        m,
        Scenario {
            demand_factor: 1.0 + sens.demand_fraction,
            ..Scenario::default()
        },
        1.0,
    ));
    {
        let mut s2 = s.clone();
        s2.demand.growth_rate_per_year += sens.growth_points;
        let f = daily_demand(&s2, h).supplied_m3_per_day / daily_demand(s, h).supplied_m3_per_day;
        rows.push(row(
            format!(
                "population growth {:+.1} points",
                sens.growth_points * 100.0
            ),
            m,
            Scenario {
                demand_factor: f,
                ..Scenario::default()
            },
            1.0,
        ));
    }
    let irr_case = format!("irradiation {:+.0} %", sens.irradiation_fraction * 100.0);
    if uses_solar(s, &d.units) {
        let m2 = Model::with_irradiation(s, 1.0 + sens.irradiation_fraction)?;
        rows.push(row(irr_case, &m2, Scenario::default(), 1.0));
        m.count_runs_of(&m2);
    } else {
        rows.push(na(irr_case));
    }
    let y_case = format!("borehole yield {:+.0} %", sens.yield_fraction * 100.0);
    if s.boreholes.is_empty() {
        rows.push(na(y_case));
    } else {
        rows.push(row(
            y_case,
            m,
            Scenario {
                yield_factor: 1.0 + sens.yield_fraction,
                ..Scenario::default()
            },
            1.0,
        ));
    }
    let f_case = format!("fuel price {:+.0} %", sens.fuel_price_fraction * 100.0);
    if s.generator.is_some()
        && s.pumps
            .iter()
            .zip(&d.units)
            .any(|(p, n)| *n > 0 && p.drive == DriveKind::Generator)
    {
        rows.push(row(
            f_case,
            m,
            Scenario::default(),
            1.0 + sens.fuel_price_fraction,
        ));
    } else {
        rows.push(na(f_case));
    }
    Ok(rows)
}

fn mean_days_comparison(
    s: &Scheme,
    d: &Design,
    tanks: &[f64],
) -> Result<MeanDaysComparison, Error> {
    let mut s2 = s.clone();
    s2.weather.mode = WeatherMode::MeanDays;
    let m2 = Model::new(&s2)?;
    let h = s.info.horizon_years;
    let idx = tanks
        .iter()
        .position(|t| *t == d.tank_m3)
        .unwrap_or(tanks.len() - 1);
    let ok = |t: f64| {
        let dd = Design {
            tank_m3: t,
            ..d.clone()
        };
        meets_target(&s2, &m2.run_ensemble(&dd, h))
    };
    let mut found = None;
    if ok(tanks[idx]) {
        let (mut lo, mut hi) = (0usize, idx);
        if ok(tanks[0]) {
            found = Some(tanks[0]);
        } else {
            while hi - lo > 1 {
                let mid = (lo + hi) / 2;
                if ok(tanks[mid]) {
                    hi = mid;
                } else {
                    lo = mid;
                }
            }
            found = Some(tanks[hi]);
        }
    }
    let explanation = match found {
        Some(t) if t < d.tank_m3 => format!(
            "On mean days alone (every day of a month its average, no cloudy spells) a {} m³ tank would meet the target; judged on the {} of the weather years with cloudy spells it needs {} m³. The mean-day figure hides the runs of grey days that empty a tank.",
            simulate::fmt_g(t),
            match s.targets.judged_on { JudgedOn::Median => "median", JudgedOn::P90 => "1-in-10 (90th percentile) shortfall" },
            simulate::fmt_g(d.tank_m3)
        ),
        Some(_) => format!(
            "On mean days alone the same {} m³ tank is needed; the weather ensemble does not change the tank for this pump set and array.",
            simulate::fmt_g(d.tank_m3)
        ),
        None => "On mean days the chosen pump set and array cannot meet the target in the tank range (unexpected: check the irradiation data).".into(),
    };
    Ok(MeanDaysComparison {
        tank_on_mean_days_m3: found,
        tank_on_ensemble_m3: d.tank_m3,
        explanation,
    })
}
