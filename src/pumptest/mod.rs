//! Pumping tests: read the records of a borehole's step-drawdown and constant-rate tests
//! (`load`), analyse them with the pure functions of [`crate::physics::pumping_test`]
//! ([`analyse`]) and hand the figures a scheme file needs to the renderers
//! (`crate::output::pumptest`). Nothing here formats text for people except the scheme block.

pub mod load;

pub use load::{
    Borehole, PumpTest, PumpTestError, Reading, Settings, TestKind, TestRecord, WellRecord,
    load_file,
};

use crate::error::Problem;
use crate::physics::aquifer;
use crate::physics::pumping_test::{
    self as pt, CooperJacobLate, HantushBierschenk, LATE_TIME_U_MAX, Recovery, SafeYield,
    StepError, StepRecord, TheisFit, WellModel, YieldLimit,
};

/// Analysis of one well's readings in the constant-rate test.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct WellAnalysis {
    /// Distance from the pumped well, m; None for the pumped well.
    pub distance_m: Option<f64>,
    /// Radius used in the formulas, m (the distance, or half the borehole diameter).
    pub r_m: f64,
    /// Pumping-phase readings (time s, drawdown m).
    pub pumping: Vec<(f64, f64)>,
    /// Recovery readings (time since the pump stopped s, residual drawdown m).
    pub recovery: Vec<(f64, f64)>,
    pub cooper_jacob: Option<CooperJacobLate>,
    pub theis: Option<TheisFit>,
    pub theis_recovery: Option<Recovery>,
    /// Why an analysis could not be made.
    pub problems: Vec<String>,
}

/// The constant-rate test.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ConstantRate {
    pub test: String,
    pub file: String,
    /// Time-weighted mean rate while pumping, m³/s.
    pub rate_m3_per_s: f64,
    /// Pumping time, s.
    pub pumping_time_s: f64,
    pub wells: Vec<WellAnalysis>,
}

/// The step-drawdown test.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct StepTest {
    pub test: String,
    pub file: String,
    /// (rate m³/s, start s, readings in the step).
    pub steps: Vec<(f64, f64, usize)>,
    /// Pumped-well readings (time s, drawdown m), all steps.
    pub readings: Vec<(f64, f64)>,
    pub hantush_bierschenk: HantushBierschenk,
    /// Where the transmissivity of the superposition correction came from.
    pub correction_t_source: String,
}

/// Jacob's well-loss split.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct WellLosses {
    /// Δt at which B was read, s.
    pub dt_s: f64,
    /// B(Δt) from Hantush–Bierschenk, s/m².
    pub b_total_s_per_m2: f64,
    /// Aquifer part W(u(r_w, Δt))/(4πT), s/m² (None without storativity).
    pub b_aquifer_s_per_m2: Option<f64>,
    /// Linear well loss for the scheme (B(Δt) less the aquifer part), s/m².
    pub b_well_s_per_m2: f64,
    pub c_s2_per_m5: f64,
}

/// The figures the scheme file takes, with their sources.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Figures {
    pub t_m2_per_s: Option<f64>,
    pub t_source: String,
    pub storativity: Option<f64>,
    pub s_source: String,
    pub well_losses: Option<WellLosses>,
    /// Tested rate, m³/s.
    pub tested_m3_per_s: f64,
    pub tested_source: String,
    /// Available drawdown: intake − margin − static level, m.
    pub available_drawdown_m: f64,
    pub safe_yield: Option<SafeYield>,
    /// Recommended safe-yield fraction of the tested rate (rounded down to 0.01).
    pub safe_yield_fraction: f64,
    /// The rule, in words.
    pub safe_yield_rule: String,
    /// Well efficiency at named rates: (what, rate m³/s, efficiency 0–1).
    pub efficiency: Vec<(String, f64, f64)>,
}

/// Everything the pumptest command reports.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Report {
    pub file: String,
    pub borehole: Borehole,
    pub settings: Settings,
    pub constant_rate: Option<ConstantRate>,
    pub step: Option<StepTest>,
    pub figures: Figures,
    /// Handling the user should see (readings left out, units converted, fallbacks).
    pub notes: Vec<String>,
    /// Every assumption the figures rest on.
    pub assumptions: Vec<String>,
}

fn fail(file: &str, line: Option<usize>, field: &str, message: String) -> PumpTestError {
    PumpTestError {
        problems: vec![(
            file.to_string(),
            Problem {
                field: field.to_string(),
                line,
                column: None,
                message,
            },
        )],
    }
}

/// Splits a test's schedule into pumping periods: (start s, rate m³/s, line) until the first
/// stop; returns the stop time if the pump stopped.
fn periods(t: &TestRecord) -> (Vec<(f64, f64, usize)>, Option<f64>) {
    let mut out: Vec<(f64, f64, usize)> = Vec::new();
    for &(time, q, line) in &t.schedule {
        if q <= 0.0 {
            return (out, Some(time));
        }
        out.push((time, q, line));
    }
    (out, None)
}

/// Analyses a pumping-test file read by [`load_file`].
pub fn analyse(p: &PumpTest) -> Result<Report, PumpTestError> {
    let mut notes = p.notes.clone();
    let bh = &p.borehole;
    let r_well = bh.diameter_m / 2.0;
    let cr_tests: Vec<&TestRecord> = p
        .tests
        .iter()
        .filter(|t| t.kind == TestKind::ConstantRate)
        .collect();
    let step_tests: Vec<&TestRecord> = p
        .tests
        .iter()
        .filter(|t| t.kind == TestKind::Step)
        .collect();
    if cr_tests.len() > 1 {
        notes.push(format!(
            "{} constant-rate tests are given; the figures come from the first, `{}`",
            cr_tests.len(),
            cr_tests[0].name
        ));
    }
    if step_tests.len() > 1 {
        notes.push(format!(
            "{} step tests are given; the figures come from the first, `{}`",
            step_tests.len(),
            step_tests[0].name
        ));
    }
    let constant_rate = match cr_tests.first() {
        Some(t) => Some(constant_rate(t, r_well, &mut notes)?),
        None => None,
    };
    // Aquifer figures: nearest observation well's Theis fit, else the pumped well.
    let mut t_choice: Option<(f64, String)> = None;
    let mut s_choice: Option<(f64, String)> = None;
    if let Some(cr) = &constant_rate {
        let obs = cr
            .wells
            .iter()
            .filter(|w| w.distance_m.is_some())
            .find(|w| w.theis.as_ref().is_some_and(|f| f.converged));
        if let Some(w) = obs {
            let f = w.theis.as_ref().expect("checked");
            let d = w.distance_m.unwrap_or(0.0);
            t_choice = Some((
                f.t_m2_per_s,
                format!("Theis least-squares fit, observation well at {d} m"),
            ));
            s_choice = Some((
                f.storativity,
                format!("Theis least-squares fit, observation well at {d} m"),
            ));
        } else if let Some(w) = cr.wells.iter().find(|w| w.distance_m.is_none()) {
            if let Some(cj) = &w.cooper_jacob {
                t_choice = Some((
                    cj.t_m2_per_s,
                    "Cooper–Jacob late-time line, pumped well".to_string(),
                ));
            } else if let Some(f) = &w.theis {
                t_choice = Some((f.t_m2_per_s, "Theis fit, pumped well".to_string()));
            }
            if let Some(f) = &w.theis {
                s_choice = Some((
                    f.storativity,
                    "Theis fit in the pumped well: apparent, the well losses shift it; measure it in an observation well".to_string(),
                ));
            }
        }
    }
    let step = match step_tests.first() {
        Some(t) => Some(step_test(
            t,
            p.settings.step_elapsed_s,
            t_choice.as_ref().map(|c| c.0),
            &mut notes,
        )?),
        None => None,
    };
    if t_choice.is_none()
        && let Some(st) = &step
    {
        t_choice = Some((
            st.hantush_bierschenk.t_used_m2_per_s,
            "first step of the step test (semi-log slope)".to_string(),
        ));
        notes.push("no constant-rate test: transmissivity from the first step only, storativity unknown; the scheme block leaves both out and B includes the aquifer loss".into());
    }
    let well_losses = step.as_ref().map(|st| {
        let hb = &st.hantush_bierschenk;
        let b_aq = match (&t_choice, &s_choice) {
            (Some((t, _)), Some((s, _))) => Some(pt::aquifer_loss_coefficient_s_per_m2(
                *t, *s, r_well, hb.dt_s,
            )),
            _ => None,
        };
        WellLosses {
            dt_s: hb.dt_s,
            b_total_s_per_m2: hb.b_s_per_m2,
            b_aquifer_s_per_m2: b_aq,
            b_well_s_per_m2: hb.b_s_per_m2 - b_aq.unwrap_or(0.0),
            c_s2_per_m5: hb.c_s2_per_m5,
        }
    });
    if let Some(wl) = &well_losses {
        if wl.b_well_s_per_m2 < 0.0 {
            notes.push(format!(
                "the linear well loss comes out negative ({:.0} s/m²): the well face behaves as if wider than the borehole (gravel pack, development); the scheme block takes 0",
                wl.b_well_s_per_m2
            ));
        }
        if wl.c_s2_per_m5 < 0.0 {
            notes.push(format!(
                "the quadratic well loss comes out negative ({:.0} s²/m⁵): no turbulent loss shows in the steps; the scheme block takes 0",
                wl.c_s2_per_m5
            ));
        }
    }
    let (tested, tested_source) = match (&constant_rate, &step) {
        (Some(cr), _) => (
            cr.rate_m3_per_s,
            format!("mean rate of the constant-rate test `{}`", cr.test),
        ),
        (None, Some(st)) => (
            st.steps.iter().map(|s| s.0).fold(0.0, f64::max),
            "largest step rate (no constant-rate test)".to_string(),
        ),
        (None, None) => {
            return Err(fail(
                &p.label,
                None,
                "tests",
                "no step or constant-rate test could be read; list at least one under `tests:`"
                    .into(),
            ));
        }
    };
    let available = bh.intake_depth_m - bh.submergence_margin_m - bh.static_depth_m;
    let days = p.settings.pumping_days;
    let frac = p.settings.max_fraction_of_tested;
    let model = match (&t_choice, &s_choice) {
        (Some((t, _)), Some((s, _))) => Some(WellModel {
            t_m2_per_s: *t,
            storativity: *s,
            r_well_m: r_well,
            b_s_per_m2: well_losses
                .as_ref()
                .map_or(0.0, |w| w.b_well_s_per_m2.max(0.0)),
            c_s2_per_m5: well_losses.as_ref().map_or(0.0, |w| w.c_s2_per_m5.max(0.0)),
        }),
        _ => None,
    };
    let safe = model
        .as_ref()
        .map(|m| pt::safe_yield(available, m, days * 86_400.0, tested, frac));
    let q_safe = safe.as_ref().map_or(tested * frac, |s| s.q_m3_per_s);
    let fraction = if tested > 0.0 {
        ((q_safe / tested) * 100.0 + 1e-9).floor() / 100.0
    } else {
        0.0
    };
    let rule = format!(
        "the smaller of (a) the rate whose predicted drawdown in the pumped well after {days} days of continuous pumping (Theis at the well face plus the well losses BQ + CQ²) keeps the water {} m above the intake, i.e. uses at most the available drawdown of {:.2} m, and (b) {frac} × the tested rate",
        bh.submergence_margin_m, available
    );
    if safe.is_none() {
        notes.push(format!(
            "without transmissivity and storativity the drawdown limit cannot be predicted; the safe yield is {frac} × the tested rate only"
        ));
    }
    let mut efficiency = Vec::new();
    if let Some(wl) = &well_losses
        && let Some(b_aq) = wl.b_aquifer_s_per_m2
    {
        let mut rates: Vec<(String, f64)> = step
            .as_ref()
            .map(|st| {
                st.steps
                    .iter()
                    .enumerate()
                    .map(|(i, s)| (format!("step {}", i + 1), s.0))
                    .collect()
            })
            .unwrap_or_default();
        rates.push(("tested rate".into(), tested));
        rates.push(("recommended safe yield".into(), q_safe));
        for (what, q) in rates {
            efficiency.push((
                what,
                q,
                pt::well_efficiency(b_aq, wl.b_well_s_per_m2, wl.c_s2_per_m5, q),
            ));
        }
    }
    let mut assumptions = vec![
        "confined, homogeneous aquifer of wide extent (Theis); the fit residuals show how far the record bears this out".to_string(),
        format!(
            "readings at elapsed time 0 and before are not used in the fits; Cooper–Jacob uses only readings with u < {LATE_TIME_U_MAX}"
        ),
        format!(
            "well radius {} m (half the borehole diameter) for the pumped well",
            r_well
        ),
        "each reading's rate column holds the rate from that reading on; a step ends at the reading where the rate changes".to_string(),
    ];
    if step.is_some() {
        assumptions.push("Hantush–Bierschenk: drawdowns read at the same elapsed time in every step, corrected for the earlier steps by Cooper–Jacob superposition".to_string());
        assumptions.push("the scheme's linear well loss is B(Δt) less the Theis aquifer loss at the well face at Δt, so that the engine's Theis drawdown plus BQ + CQ² reproduces the steps".to_string());
    }
    if let Some(s) = &safe
        && s.limit == YieldLimit::Drawdown
    {
        assumptions.push("the safe yield is set by the drawdown limit: pumping harder would draw the water below the intake margin within the stated days".to_string());
    }
    Ok(Report {
        file: p.label.clone(),
        borehole: bh.clone(),
        settings: p.settings.clone(),
        figures: Figures {
            t_m2_per_s: t_choice.as_ref().map(|c| c.0),
            t_source: t_choice.map(|c| c.1).unwrap_or_else(|| "none".into()),
            storativity: s_choice.as_ref().map(|c| c.0),
            s_source: s_choice.map(|c| c.1).unwrap_or_else(|| "none".into()),
            well_losses,
            tested_m3_per_s: tested,
            tested_source,
            available_drawdown_m: available,
            safe_yield: safe,
            safe_yield_fraction: fraction,
            safe_yield_rule: rule,
            efficiency,
        },
        constant_rate,
        step,
        notes,
        assumptions,
    })
}

fn constant_rate(
    t: &TestRecord,
    r_well: f64,
    notes: &mut Vec<String>,
) -> Result<ConstantRate, PumpTestError> {
    let (per, stop) = periods(t);
    let first = per[0];
    let end = stop.unwrap_or_else(|| {
        t.wells
            .iter()
            .flat_map(|w| w.readings.iter().map(|r| r.time_s))
            .fold(0.0, f64::max)
    });
    if end <= 0.0 {
        return Err(fail(
            &t.file,
            Some(first.2),
            "",
            "the pump stops at elapsed time 0; a constant-rate test needs pumping time".into(),
        ));
    }
    // Time-weighted mean rate and its spread.
    let mut vol = 0.0;
    let (mut lo, mut hi) = (f64::MAX, 0.0_f64);
    for (i, &(start, q, _)) in per.iter().enumerate() {
        let until = per.get(i + 1).map_or(end, |n| n.0).min(end);
        vol += q * (until - start).max(0.0);
        lo = lo.min(q);
        hi = hi.max(q);
    }
    let mean = vol / end;
    if hi > lo * 1.10 {
        let line = per
            .iter()
            .find(|p| p.1 == hi || p.1 == lo)
            .map(|p| p.2)
            .unwrap_or(first.2);
        return Err(fail(
            &t.file,
            Some(line),
            "",
            format!(
                "the rate in the constant-rate test `{}` varies from {:.2} to {:.2} m³/h (more than 10 %); if it is a step test, set `kind: step`",
                t.name,
                lo * 3600.0,
                hi * 3600.0
            ),
        ));
    }
    if hi > lo * 1.02 {
        notes.push(format!(
            "{}: the rate varies from {:.2} to {:.2} m³/h; the analysis uses the time-weighted mean {:.2} m³/h",
            t.file,
            lo * 3600.0,
            hi * 3600.0,
            mean * 3600.0
        ));
    }
    if stop.is_none() {
        notes.push(format!(
            "{}: the pump never stops in the record, so there is no recovery to analyse",
            t.file
        ));
    }
    let mut wells = Vec::new();
    for w in &t.wells {
        let r = w.distance_m.unwrap_or(r_well);
        let pumping: Vec<(f64, f64)> = w
            .readings
            .iter()
            .filter(|x| x.time_s > 0.0 && x.time_s <= end)
            .map(|x| (x.time_s, x.drawdown_m))
            .collect();
        let recovery: Vec<(f64, f64)> = w
            .readings
            .iter()
            .filter(|x| x.time_s > end)
            .map(|x| (x.time_s - end, x.drawdown_m))
            .collect();
        let times: Vec<f64> = pumping.iter().map(|x| x.0).collect();
        let dd: Vec<f64> = pumping.iter().map(|x| x.1).collect();
        let mut problems = Vec::new();
        let where_ = w.distance_m.map_or("pumped well".to_string(), |d| {
            format!("observation well at {d} m")
        });
        let cj = match pt::cooper_jacob_late_time(mean, r, &times, &dd, LATE_TIME_U_MAX) {
            Ok(c) => Some(c),
            Err(e) => {
                problems.push(format!("Cooper–Jacob, {where_}: {e}"));
                None
            }
        };
        let th = match pt::theis_least_squares(mean, r, &times, &dd, None) {
            Ok(f) => Some(f),
            Err(e) => {
                problems.push(format!("Theis fit, {where_}: {e}"));
                None
            }
        };
        let rec = if recovery.len() >= 3 {
            let ts: Vec<f64> = recovery.iter().map(|x| x.0).collect();
            let ss: Vec<f64> = recovery.iter().map(|x| x.1).collect();
            match pt::theis_recovery(mean, end, &ts, &ss) {
                Ok(r) => Some(r),
                Err(e) => {
                    problems.push(format!("Theis recovery, {where_}: {e}"));
                    None
                }
            }
        } else {
            None
        };
        if let Some(c) = &cj
            && !c.u_valid
        {
            notes.push(format!(
                "{}, {where_}: the earliest reading on the Cooper–Jacob line has u = {:.3} ≥ {LATE_TIME_U_MAX}; the record is too short for a valid straight line",
                t.file, c.u_at_first
            ));
        }
        for pmsg in &problems {
            notes.push(format!("{}: {pmsg}", t.file));
        }
        wells.push(WellAnalysis {
            distance_m: w.distance_m,
            r_m: r,
            pumping,
            recovery,
            cooper_jacob: cj,
            theis: th,
            theis_recovery: rec,
            problems,
        });
    }
    if wells
        .iter()
        .all(|w| w.cooper_jacob.is_none() && w.theis.is_none())
    {
        let msg = wells
            .iter()
            .flat_map(|w| w.problems.clone())
            .collect::<Vec<_>>()
            .join("; ");
        return Err(fail(
            &t.file,
            None,
            "",
            format!(
                "no well in the constant-rate test `{}` could be analysed: {msg}",
                t.name
            ),
        ));
    }
    Ok(ConstantRate {
        test: t.name.clone(),
        file: t.file.clone(),
        rate_m3_per_s: mean,
        pumping_time_s: end,
        wells,
    })
}

fn step_test(
    t: &TestRecord,
    dt_given: Option<f64>,
    t_given: Option<f64>,
    notes: &mut Vec<String>,
) -> Result<StepTest, PumpTestError> {
    let (per, stop) = periods(t);
    let Some(pumped) = t.wells.iter().find(|w| w.distance_m.is_none()) else {
        return Err(fail(
            &t.file,
            None,
            "",
            format!(
                "the step test `{}` has no readings in the pumped well (rows without distance_m); Hantush–Bierschenk needs them",
                t.name
            ),
        ));
    };
    if t.wells.len() > 1 {
        notes.push(format!(
            "{}: observation-well readings in the step test are not used",
            t.file
        ));
    }
    // Merge periods whose rates differ by 2 % or less into one step.
    let mut steps: Vec<(f64, f64, usize)> = Vec::new();
    for &(start, q, line) in &per {
        match steps.last() {
            Some(last) if (q - last.1).abs() <= 0.02 * last.1 => {}
            _ => steps.push((start, q, line)),
        }
    }
    let end_all = stop.unwrap_or(f64::INFINITY);
    if stop.is_some() {
        notes.push(format!(
            "{}: readings after the pump stopped in the step test are not used",
            t.file
        ));
    }
    let mut records = Vec::new();
    for (i, &(start, q, line)) in steps.iter().enumerate() {
        let until = steps.get(i + 1).map_or(end_all, |n| n.0);
        let readings: Vec<(f64, f64)> = pumped
            .readings
            .iter()
            .filter(|r| r.time_s > start && r.time_s <= until)
            .map(|r| (r.time_s, r.drawdown_m))
            .collect();
        if readings.len() < 2 {
            let at = pumped
                .readings
                .iter()
                .find(|r| r.time_s > start && r.time_s <= until)
                .map_or(line, |r| r.line);
            return Err(fail(
                &t.file,
                Some(at),
                "",
                format!(
                    "step {} ({:.2} m³/h from elapsed {} s) has {} reading(s) after its start; each step needs at least two (Hantush–Bierschenk reads every step at the same elapsed time)",
                    i + 1,
                    q * 3600.0,
                    start,
                    readings.len()
                ),
            ));
        }
        records.push(StepRecord {
            q_m3_per_s: q,
            start_s: start,
            readings,
        });
    }
    let dt = match dt_given {
        Some(d) => d,
        None => pt::common_elapsed_time_s(&records).unwrap_or(0.0),
    };
    let (t_corr, source) = match t_given {
        Some(v) => (v, "transmissivity from the constant-rate test".to_string()),
        None => match pt::first_step_transmissivity_m2_per_s(&records[0]) {
            Ok(v) => (
                v,
                "transmissivity from the first step's semi-log slope".to_string(),
            ),
            Err(e) => return Err(fail(&t.file, Some(steps[0].2), "", e.to_string())),
        },
    };
    let hb = pt::hantush_bierschenk(&records, dt, t_corr).map_err(|e| {
        let line = match &e {
            StepError::TooFewReadings { step, .. }
            | StepError::ShortStep { step, .. }
            | StepError::Bad { step, .. } => steps.get(step - 1).map(|s| s.2),
            StepError::TooFewSteps(_) => steps.first().map(|s| s.2),
        };
        fail(&t.file, line, "", format!("step test `{}`: {e}", t.name))
    })?;
    Ok(StepTest {
        test: t.name.clone(),
        file: t.file.clone(),
        steps: records
            .iter()
            .map(|r| (r.q_m3_per_s, r.start_s, r.readings.len()))
            .collect(),
        readings: records.iter().flat_map(|r| r.readings.clone()).collect(),
        hantush_bierschenk: hb,
        correction_t_source: source,
    })
}

/// A number with `sig` significant digits, written plainly (no exponent).
pub fn plain(v: f64, sig: i32) -> String {
    if v == 0.0 || !v.is_finite() {
        return "0".into();
    }
    let mag = v.abs().log10().floor() as i32;
    let decimals = (sig - 1 - mag).max(0) as usize;
    let scale = 10f64.powi(sig - 1 - mag);
    let r = (v * scale).round() / scale;
    let s = format!("{r:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// The scheme file's borehole block filled in from the report, ready to paste. With
/// `pumping_test_file` (the test file's path relative to the scheme's folder) the block names
/// the test as its source, so the plan shows it.
pub fn scheme_block(r: &Report, test_file_name: &str, pumping_test_file: Option<&str>) -> String {
    let f = &r.figures;
    let b = &r.borehole;
    let mut s = String::new();
    s.push_str(&format!(
        "# Borehole figures from the pumping test {test_file_name} (tapplan pumptest).\n"
    ));
    s.push_str(&format!("#   transmissivity: {}\n", f.t_source));
    s.push_str(&format!("#   storativity: {}\n", f.s_source));
    if let Some(wl) = &f.well_losses {
        s.push_str(&format!(
            "#   well losses: Hantush–Bierschenk at {} min; linear loss without the aquifer loss at the well face\n",
            plain(wl.dt_s / 60.0, 4)
        ));
    }
    s.push_str(&format!("#   tested yield: {}\n", f.tested_source));
    s.push_str(&format!(
        "#   safe yield: {} m³/h by the rule: {}\n",
        plain(f.tested_m3_per_s * f.safe_yield_fraction * 3600.0, 3),
        f.safe_yield_rule
    ));
    s.push_str("sources:\n  boreholes:\n");
    s.push_str(&format!("    - name: {}\n", yaml_str(&b.name)));
    s.push_str(&format!(
        "      static_water_level_m: {}\n",
        plain(b.static_depth_m, 4)
    ));
    s.push_str(&format!(
        "      tested_yield_m3_per_h: {}\n",
        plain(f.tested_m3_per_s * 3600.0, 3)
    ));
    s.push_str(&format!(
        "      safe_yield_fraction: {}\n",
        plain(f.safe_yield_fraction, 2)
    ));
    if let (Some(t), Some(st)) = (f.t_m2_per_s, f.storativity) {
        s.push_str(&format!(
            "      transmissivity_m2_per_day: {}\n",
            plain(t * 86_400.0, 3)
        ));
        s.push_str(&format!("      storativity: {}\n", plain(st, 2)));
    }
    if let Some(wl) = &f.well_losses {
        s.push_str(&format!(
            "      well_loss_linear_s_per_m2: {}\n",
            plain(wl.b_well_s_per_m2.max(0.0), 3)
        ));
        s.push_str(&format!(
            "      well_loss_quadratic_s2_per_m5: {}\n",
            plain(wl.c_s2_per_m5.max(0.0), 3)
        ));
    }
    s.push_str(&format!(
        "      pump_intake_depth_m: {}\n",
        plain(b.intake_depth_m, 4)
    ));
    s.push_str(&format!(
        "      diameter_mm: {}\n",
        plain(b.diameter_m * 1000.0, 4)
    ));
    s.push_str(&format!(
        "      submergence_margin_m: {}\n",
        plain(b.submergence_margin_m, 3)
    ));
    if let Some(p) = pumping_test_file {
        s.push_str(&format!("      pumping_test_file: {}\n", yaml_str(p)));
    }
    s
}

/// Path of `target` relative to the folder `from_dir`, with `/` separators; both are made
/// absolute first (they must exist). None when they share no root (other drive).
pub fn relative_path(from_dir: &std::path::Path, target: &std::path::Path) -> Option<String> {
    use std::path::Component;
    let from = std::fs::canonicalize(from_dir).ok()?;
    let to = std::fs::canonicalize(target).ok()?;
    let a: Vec<Component> = from.components().collect();
    let b: Vec<Component> = to.components().collect();
    if a.first() != b.first() {
        return None;
    }
    let common = a.iter().zip(&b).take_while(|(x, y)| x == y).count();
    let mut parts: Vec<String> = vec!["..".to_string(); a.len() - common];
    parts.extend(
        b[common..]
            .iter()
            .map(|c| c.as_os_str().to_string_lossy().into_owned()),
    );
    Some(parts.join("/"))
}

fn yaml_str(s: &str) -> String {
    let plain_ok = !s.is_empty()
        && s.chars()
            .all(|c| c.is_alphanumeric() || matches!(c, ' ' | '-' | '_' | '.' | '/'))
        && !s.starts_with([' ', '-'])
        && !s.ends_with(' ');
    if plain_ok {
        s.to_string()
    } else {
        format!("\"{}\"", s.replace('\\', "\\\\").replace('"', "\\\""))
    }
}

/// Theis drawdown of the fitted curve at a time, for plots; m.
pub fn fitted_theis_m(q: f64, f: &TheisFit, r_m: f64, time_s: f64) -> f64 {
    aquifer::theis_drawdown_m(q, f.t_m2_per_s, f.storativity, r_m, time_s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn plain_numbers() {
        assert_eq!(plain(35.04, 3), "35");
        assert_eq!(plain(0.000803, 2), "0.0008");
        assert_eq!(plain(150_400.0, 3), "150000");
        assert_eq!(plain(401.4, 3), "401");
        assert_eq!(plain(0.7, 2), "0.7");
        assert_eq!(yaml_str("BH-Kessa-1"), "BH-Kessa-1");
        assert_eq!(yaml_str("a: b"), "\"a: b\"");
    }
}
