//! The quantities rules are set on, and how each is read from a scheme and its `RunReport`.
//!
//! Values are in the engine's units (m³, m, m/s, hours counted, fractions, days); `unit()` and
//! `format()` give the unit people read (L/person/day, %, …) and `to_si()` converts a limit
//! written in that unit. A quantity that cannot be measured on a scheme (no such part, no
//! simulation) gives the reason instead of a value.

use serde::{Deserialize, Serialize};

use crate::physics::pipes;
use crate::physics::pumps;
use crate::scheme::{PumpKind, Scheme};
use crate::simulate::hydraulics::{SystemCurve, TheisKernel, curve_of};
use crate::simulate::{Design, RunReport, YearResult, daily_demand, storage_days};

/// A quantity a rule may set a limit on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    /// Domestic water delivered per person per day, the lower of the base and horizon years
    /// (judged weather year), m³/person/day.
    SupplyPerPerson,
    /// Horizon-year population per public tap, people.
    PeoplePerTap,
    /// Longest walk from a home to a tap, m (`network.longest_walk_m`).
    WalkToTap,
    /// Judged shortfall hours in the base year, h/year.
    ShortfallHoursFirstYear,
    /// Judged shortfall hours in the horizon year, h/year.
    ShortfallHoursHorizon,
    /// Judged fraction of demand met in the base year.
    DemandMetFirstYear,
    /// Judged fraction of demand met in the horizon year.
    DemandMetHorizon,
    /// Hours the engine held a borehole's pumping down to its safe yield (worst weather year of
    /// the base and horizon years), h/year.
    YieldCappedHours,
    /// Full-speed flow of the installed motor pumps at the static water level over the
    /// borehole's tested yield (the worst borehole), fraction.
    PumpFlowOverTestedYield,
    /// Hours a pump was stopped by the dry-run cut-out (worst weather year), h/year.
    DryRunStopHours,
    /// Least height of the dynamic water level above the intake less the submergence margin
    /// while pumping (worst weather year), m.
    IntakeMargin,
    /// Mean velocity in the rising main at the mean flow while pumping (base year), m/s.
    MainVelocity,
    /// Hours a pump ran outside the range of its curve table (worst weather year), h/year.
    BeyondCurveHours,
    /// Typical per-unit flow, brought to reference speed by the affinity laws, over the
    /// best-efficiency flow (base year, volume-weighted), fraction.
    FlowOverBestEfficiency,
    /// Hours a positive-displacement pump runs outside its measured heads (worst year).
    OutsideTableHours,
    /// Highest input power of a positive-displacement unit over the base year, % of rated.
    PeakPowerOverRated,
    /// Usable storage over the horizon year's average daily supplied demand, days.
    StorageDays,
    /// Shortfall hours inside the repair period with one unit of a pump type out of service
    /// (the worst pump type; see `simulate::repair_cases`), h.
    RepairShortfallHours,
    /// |declared − recomputed| judged base-year shortfall hours, h/year.
    DeclaredShortfallDifference,
    /// |declared − recomputed| judged base-year fraction of demand met.
    DeclaredDemandMetDifference,
}

impl Quantity {
    pub const ALL: &'static [Quantity] = &[
        Quantity::SupplyPerPerson,
        Quantity::PeoplePerTap,
        Quantity::WalkToTap,
        Quantity::ShortfallHoursFirstYear,
        Quantity::ShortfallHoursHorizon,
        Quantity::DemandMetFirstYear,
        Quantity::DemandMetHorizon,
        Quantity::YieldCappedHours,
        Quantity::PumpFlowOverTestedYield,
        Quantity::DryRunStopHours,
        Quantity::IntakeMargin,
        Quantity::MainVelocity,
        Quantity::BeyondCurveHours,
        Quantity::FlowOverBestEfficiency,
        Quantity::OutsideTableHours,
        Quantity::PeakPowerOverRated,
        Quantity::StorageDays,
        Quantity::RepairShortfallHours,
        Quantity::DeclaredShortfallDifference,
        Quantity::DeclaredDemandMetDifference,
    ];

    /// The name used in rules files.
    pub fn name(self) -> &'static str {
        match self {
            Quantity::SupplyPerPerson => "supply_per_person",
            Quantity::PeoplePerTap => "people_per_tap",
            Quantity::WalkToTap => "walk_to_tap",
            Quantity::ShortfallHoursFirstYear => "shortfall_hours_first_year",
            Quantity::ShortfallHoursHorizon => "shortfall_hours_horizon",
            Quantity::DemandMetFirstYear => "demand_met_first_year",
            Quantity::DemandMetHorizon => "demand_met_horizon",
            Quantity::YieldCappedHours => "yield_capped_hours",
            Quantity::PumpFlowOverTestedYield => "pump_flow_over_tested_yield",
            Quantity::DryRunStopHours => "dry_run_stop_hours",
            Quantity::IntakeMargin => "intake_margin",
            Quantity::MainVelocity => "main_velocity",
            Quantity::BeyondCurveHours => "beyond_curve_hours",
            Quantity::FlowOverBestEfficiency => "flow_over_best_efficiency",
            Quantity::OutsideTableHours => "outside_table_hours",
            Quantity::PeakPowerOverRated => "peak_power_over_rated",
            Quantity::StorageDays => "storage_days",
            Quantity::RepairShortfallHours => "repair_shortfall_hours",
            Quantity::DeclaredShortfallDifference => "declared_shortfall_difference",
            Quantity::DeclaredDemandMetDifference => "declared_demand_met_difference",
        }
    }

    /// The unit limits are written in and values are shown in.
    pub fn unit(self) -> &'static str {
        match self {
            Quantity::SupplyPerPerson => "L/person/day",
            Quantity::PeoplePerTap => "people",
            Quantity::WalkToTap | Quantity::IntakeMargin => "m",
            Quantity::ShortfallHoursFirstYear
            | Quantity::ShortfallHoursHorizon
            | Quantity::YieldCappedHours
            | Quantity::DryRunStopHours
            | Quantity::BeyondCurveHours
            | Quantity::OutsideTableHours
            | Quantity::DeclaredShortfallDifference => "h/year",
            Quantity::DemandMetFirstYear
            | Quantity::DemandMetHorizon
            | Quantity::PumpFlowOverTestedYield
            | Quantity::FlowOverBestEfficiency
            | Quantity::PeakPowerOverRated => "%",
            Quantity::DeclaredDemandMetDifference => "percentage points",
            Quantity::MainVelocity => "m/s",
            Quantity::StorageDays => "days",
            Quantity::RepairShortfallHours => "h",
        }
    }

    /// Factor from the shown unit to the engine unit (value_si = shown × factor).
    fn factor(self) -> f64 {
        match self {
            // L → m³
            Quantity::SupplyPerPerson => 1e-3,
            // percent → fraction
            Quantity::DemandMetFirstYear
            | Quantity::DemandMetHorizon
            | Quantity::PumpFlowOverTestedYield
            | Quantity::FlowOverBestEfficiency
            | Quantity::PeakPowerOverRated
            | Quantity::DeclaredDemandMetDifference => 1e-2,
            _ => 1.0,
        }
    }

    /// True for the quantities of positive-displacement pumps only: rules on them are in force
    /// only for schemes that have such a pump (a scheme without one gets no row for them).
    pub fn displacement_only(self) -> bool {
        matches!(
            self,
            Quantity::OutsideTableHours | Quantity::PeakPowerOverRated
        )
    }

    /// False for the quantities no design of tank, pumps and array can change (the network's
    /// people per tap and walk) and for the declared figures, which judge the proposal's own
    /// design only: the search looks for designs that pass every *other* rule of severity fail.
    pub fn depends_on_design(self) -> bool {
        !matches!(
            self,
            Quantity::PeoplePerTap
                | Quantity::WalkToTap
                | Quantity::DeclaredShortfallDifference
                | Quantity::DeclaredDemandMetDifference
        )
    }

    /// True for the quantities a larger tank improves (with the same pumps and array): a
    /// design failing only these is tried with larger tanks before its pumps and array are
    /// given up.
    pub fn larger_tank_helps(self) -> bool {
        matches!(
            self,
            Quantity::SupplyPerPerson
                | Quantity::ShortfallHoursFirstYear
                | Quantity::ShortfallHoursHorizon
                | Quantity::DemandMetFirstYear
                | Quantity::DemandMetHorizon
                | Quantity::StorageDays
                | Quantity::RepairShortfallHours
        )
    }

    /// A limit written in `unit()` converted to the engine unit.
    pub fn to_si(self, shown: f64) -> f64 {
        shown * self.factor()
    }

    /// A value in the engine unit converted to `unit()`.
    pub fn from_si(self, si: f64) -> f64 {
        si / self.factor()
    }

    /// The value in `unit()` with the precision people read.
    pub fn format(self, si: f64) -> String {
        let v = self.from_si(si);
        let decimals = match self {
            Quantity::SupplyPerPerson
            | Quantity::DemandMetFirstYear
            | Quantity::DemandMetHorizon
            | Quantity::DeclaredDemandMetDifference => 1,
            Quantity::IntakeMargin | Quantity::MainVelocity | Quantity::StorageDays => 2,
            _ => 0,
        };
        let t = format!("{v:.decimals$}");
        // "-0" reads oddly
        if t.trim_start_matches('-')
            .chars()
            .all(|c| c == '0' || c == '.')
        {
            t.trim_start_matches('-').to_string()
        } else {
            t
        }
    }

    /// The scheme field that holds this quantity's target, if it has one.
    pub fn target_field(self) -> Option<&'static str> {
        match self {
            Quantity::SupplyPerPerson => Some("targets.min_supply_l_per_person_day"),
            Quantity::ShortfallHoursFirstYear | Quantity::ShortfallHoursHorizon => {
                Some("targets.max_shortfall_hours_per_year")
            }
            Quantity::DemandMetFirstYear | Quantity::DemandMetHorizon => {
                Some("targets.min_demand_met_percent")
            }
            _ => None,
        }
    }

    /// The scheme's own target for this quantity, engine unit.
    pub fn scheme_target(self, s: &Scheme) -> Option<f64> {
        let t = &s.targets;
        match self {
            Quantity::SupplyPerPerson => Some(t.min_supply_m3_per_person_day),
            Quantity::ShortfallHoursFirstYear | Quantity::ShortfallHoursHorizon => {
                t.max_shortfall_hours_per_year
            }
            Quantity::DemandMetFirstYear | Quantity::DemandMetHorizon => t.min_demand_met_fraction,
            _ => None,
        }
    }

    /// True for the declared-figure quantities (the only ones a relative tolerance fits).
    pub fn is_declared(self) -> bool {
        matches!(
            self,
            Quantity::DeclaredShortfallDifference | Quantity::DeclaredDemandMetDifference
        )
    }

    /// True when the value comes from a simulation of the design.
    pub fn needs_simulation(self) -> bool {
        !matches!(
            self,
            Quantity::PeoplePerTap
                | Quantity::WalkToTap
                | Quantity::PumpFlowOverTestedYield
                | Quantity::StorageDays
        )
    }

    pub fn from_name(name: &str) -> Option<Quantity> {
        Quantity::ALL.iter().copied().find(|q| q.name() == name)
    }
}

/// A measured value in the engine unit.
#[derive(Debug, Clone, PartialEq)]
pub struct Measured {
    pub value_si: f64,
    /// The figure a relative tolerance is taken of (declared rules: the recomputed one).
    pub reference_si: Option<f64>,
    pub note: Option<String>,
}

fn measured(value_si: f64, note: String) -> Result<Measured, String> {
    Ok(Measured {
        value_si,
        reference_si: None,
        note: Some(note),
    })
}

/// What the rules can see of one scheme: the scheme, and the simulation of its design if run.
pub struct Facts<'a> {
    pub scheme: &'a Scheme,
    pub report: Option<&'a RunReport>,
    /// The design (from the report, or the file's own as far as it goes).
    pub tank_m3: Option<f64>,
    pub units: Option<Vec<u32>>,
}

impl<'a> Facts<'a> {
    pub fn simulated(scheme: &'a Scheme, report: &'a RunReport) -> Facts<'a> {
        Facts {
            scheme,
            report: Some(report),
            tank_m3: Some(report.design.tank_m3),
            units: Some(report.design.units.clone()),
        }
    }

    pub fn unsimulated(scheme: &'a Scheme, design: Option<&Design>) -> Facts<'a> {
        let tank_m3 = design.map(|d| d.tank_m3).or(scheme.tank.capacity_m3);
        let units = match design {
            Some(d) => Some(d.units.clone()),
            None => scheme.pumps.iter().map(|p| p.units).collect(),
        };
        Facts {
            scheme,
            report: None,
            tank_m3,
            units,
        }
    }

    fn report(&self) -> Result<&'a RunReport, String> {
        self.report
            .ok_or_else(|| "needs a simulation of a complete design".to_string())
    }

    /// Every weather year run for the base and the horizon year.
    fn all_years(&self) -> Result<Vec<&'a YearResult>, String> {
        let r = self.report()?;
        Ok(r.first_year
            .years
            .iter()
            .chain(r.horizon_year.years.iter())
            .collect())
    }

    /// True when an installed unit is a positive-displacement pump.
    fn has_displacement_pump(&self) -> bool {
        let Some(units) = &self.units else {
            return false;
        };
        self.scheme
            .pumps
            .iter()
            .zip(units)
            .any(|(p, n)| *n > 0 && matches!(p.kind, PumpKind::Displacement { .. }))
    }

    /// Why a centrifugal-only rule does not apply: the message for a design without an
    /// installed centrifugal pump.
    fn no_centrifugal(&self) -> String {
        if self.has_displacement_pump() {
            "no centrifugal pump is installed; this rule applies to centrifugal pumps only (a displacement pump is checked by pump-in-table and pump-near-rated)".into()
        } else {
            "no motor pump is installed in this design".into()
        }
    }

    /// True when an installed unit is a motor (curve) pump.
    fn has_motor_pump(&self) -> bool {
        let Some(units) = &self.units else {
            return false;
        };
        self.scheme
            .pumps
            .iter()
            .zip(units)
            .any(|(p, n)| *n > 0 && matches!(p.kind, PumpKind::Curve { .. }))
    }

    /// Measures one quantity, or says why it cannot be measured here.
    pub fn measure(&self, q: Quantity) -> Result<Measured, String> {
        let s = self.scheme;
        match q {
            Quantity::SupplyPerPerson => {
                let r = self.report()?;
                let first = &r.year;
                let e = &r.horizon_year;
                let last = e.years.get(e.representative).unwrap_or(first);
                let (low, which) =
                    if last.delivered_m3_per_person_day < first.delivered_m3_per_person_day {
                        (last.delivered_m3_per_person_day, last.year)
                    } else {
                        (first.delivered_m3_per_person_day, first.year)
                    };
                measured(
                    low,
                    format!(
                        "lower of {} ({:.1} L) and {} ({:.1} L), judged weather year",
                        first.year,
                        first.delivered_m3_per_person_day * 1000.0,
                        last.year,
                        last.delivered_m3_per_person_day * 1000.0
                    ),
                )
                .map(|mut m| {
                    m.note = m.note.map(|n| format!("{n}; the lower is {which}"));
                    m
                })
            }
            Quantity::PeoplePerTap => {
                let taps = s
                    .network
                    .public_taps
                    .filter(|n| *n > 0)
                    .ok_or("the scheme gives no network.public_taps")?;
                let dd = daily_demand(s, s.info.horizon_years);
                let mut note = format!(
                    "{:.0} people in {} on {taps} taps",
                    dd.population,
                    s.horizon_year()
                );
                if s.network.household_connections.is_some_and(|n| n > 0) {
                    note.push_str("; people on household connections are not subtracted");
                }
                measured(dd.population / taps as f64, note)
            }
            Quantity::WalkToTap => {
                let w = s
                    .network
                    .longest_walk_m
                    .ok_or("the scheme gives no network.longest_walk_m")?;
                measured(w, "network.longest_walk_m as given".into())
            }
            Quantity::ShortfallHoursFirstYear | Quantity::ShortfallHoursHorizon => {
                let r = self.report()?;
                let e = if q == Quantity::ShortfallHoursFirstYear {
                    &r.first_year
                } else {
                    &r.horizon_year
                };
                measured(e.judged_shortfall_hours, ensemble_note(e))
            }
            Quantity::DemandMetFirstYear | Quantity::DemandMetHorizon => {
                let r = self.report()?;
                let e = if q == Quantity::DemandMetFirstYear {
                    &r.first_year
                } else {
                    &r.horizon_year
                };
                measured(e.judged_demand_met_fraction, ensemble_note(e))
            }
            Quantity::YieldCappedHours
            | Quantity::DryRunStopHours
            | Quantity::BeyondCurveHours
            | Quantity::OutsideTableHours => {
                let applies = match q {
                    Quantity::BeyondCurveHours => self.has_motor_pump(),
                    Quantity::OutsideTableHours => self.has_displacement_pump(),
                    _ => self.has_motor_pump() || self.has_displacement_pump(),
                };
                if !applies {
                    return Err(match q {
                        Quantity::BeyondCurveHours => self.no_centrifugal(),
                        Quantity::OutsideTableHours => {
                            "no positive-displacement pump is installed in this design".into()
                        }
                        _ => "no motor pump is installed in this design".into(),
                    });
                }
                let years = self.all_years()?;
                let pick = |y: &YearResult| match q {
                    Quantity::YieldCappedHours => y.yield_capped_hours,
                    Quantity::DryRunStopHours => y.dry_run_stop_hours,
                    _ => y.beyond_curve_hours,
                };
                let worst = years
                    .iter()
                    .copied()
                    .max_by_key(|y| pick(y))
                    .ok_or("no year was run")?;
                measured(
                    pick(worst) as f64,
                    format!(
                        "worst of {} weather years in the base and horizon years ({}, {})",
                        years.len(),
                        worst.year,
                        worst.weather
                    ),
                )
            }
            Quantity::IntakeMargin => {
                if !self.has_motor_pump() && !self.has_displacement_pump() {
                    return Err("no motor pump is installed in this design".into());
                }
                let years = self.all_years()?;
                let least = years
                    .iter()
                    .filter_map(|y| y.drawdown_margin_m.map(|m| (m, y.year)))
                    .min_by(|a, b| a.0.total_cmp(&b.0))
                    .ok_or("the motor pumps never ran")?;
                measured(
                    least.0,
                    format!(
                        "least over {} weather years while pumping (in {})",
                        years.len(),
                        least.1
                    ),
                )
            }
            Quantity::PumpFlowOverTestedYield => self.pump_flow_over_tested_yield(),
            Quantity::MainVelocity => {
                let main = s
                    .rising_main
                    .as_ref()
                    .ok_or("the scheme has no rising main")?;
                let r = self.report()?;
                let q = mean_pumping_flow_m3_per_s(&r.year)
                    .ok_or("nothing is pumped through the rising main in this design")?;
                measured(
                    pipes::velocity_m_per_s(q, main.internal_diameter_m),
                    format!(
                        "at the mean flow while pumping, {:.2} L/s in {:.1} mm ({})",
                        q * 1000.0,
                        main.internal_diameter_m * 1000.0,
                        r.year.year
                    ),
                )
            }
            Quantity::FlowOverBestEfficiency => self.flow_over_best_efficiency(),
            Quantity::RepairShortfallHours => {
                let r = self.report()?;
                let worst = r
                    .repair
                    .iter()
                    .max_by(|a, b| {
                        (a.shortfall_hours, a.unmet_m3)
                            .partial_cmp(&(b.shortfall_hours, b.unmet_m3))
                            .unwrap_or(std::cmp::Ordering::Equal)
                    })
                    .ok_or("no pump unit is installed to take out of service")?;
                measured(
                    worst.shortfall_hours as f64,
                    format!(
                        "{} of {} × {} out for {} days from {} {} (the month of the lowest tank level in {}); {} left running",
                        1,
                        worst.units_left + 1,
                        worst.pump,
                        worst.days,
                        worst.start_day,
                        worst.month,
                        r.horizon_year.year,
                        worst.units_left
                    ),
                )
            }
            Quantity::PeakPowerOverRated => self.peak_power_over_rated(),
            Quantity::StorageDays => {
                let tank = self
                    .tank_m3
                    .ok_or("the file gives no tank.capacity_m3 (the tank is left to the search)")?;
                let dd = daily_demand(s, s.info.horizon_years);
                let days = storage_days(s, tank, &dd);
                if !days.is_finite() {
                    return Err("the scheme has no demand".into());
                }
                measured(
                    days,
                    format!(
                        "{} m³ usable against {:.1} m³/day average supplied demand in {}",
                        crate::simulate::fmt_g(tank * s.tank.usable_fraction),
                        days.recip() * tank * s.tank.usable_fraction,
                        s.horizon_year()
                    ),
                )
            }
            Quantity::DeclaredShortfallDifference => {
                let d = s
                    .declared
                    .shortfall_hours_per_year
                    .ok_or("the scheme declares no shortfall hours")?;
                let r = self.report()?;
                let e = &r.first_year;
                Ok(Measured {
                    value_si: (d - e.judged_shortfall_hours).abs(),
                    reference_si: Some(e.judged_shortfall_hours),
                    note: Some(format!(
                        "declared {} h, recomputed {} h ({})",
                        crate::simulate::fmt_g(d),
                        crate::simulate::fmt_g(e.judged_shortfall_hours),
                        ensemble_note(e)
                    )),
                })
            }
            Quantity::DeclaredDemandMetDifference => {
                let d = s
                    .declared
                    .demand_met_fraction
                    .ok_or("the scheme declares no demand-met percentage")?;
                let r = self.report()?;
                let e = &r.first_year;
                Ok(Measured {
                    value_si: (d - e.judged_demand_met_fraction).abs(),
                    reference_si: Some(e.judged_demand_met_fraction),
                    note: Some(format!(
                        "declared {:.1} %, recomputed {:.1} % ({})",
                        d * 100.0,
                        e.judged_demand_met_fraction * 100.0,
                        ensemble_note(e)
                    )),
                })
            }
        }
    }

    /// Full-speed flow of the installed curve pumps on each borehole at the static water level
    /// over the tested yield; the worst borehole. Needs the design's unit counts only.
    ///
    /// The flow is the operating point of n identical units at rated speed against the
    /// borehole's system curve with no earlier drawdown (the start of pumping, when the flow is
    /// highest); pump types sharing a borehole are each solved alone and added (a slight
    /// overestimate). The engine caps pumping at the safe yield, so this is the flow the pumps
    /// would draw without that cap, i.e. without a flow limiter the plan does not show.
    fn pump_flow_over_tested_yield(&self) -> Result<Measured, String> {
        let s = self.scheme;
        let units = self
            .units
            .as_ref()
            .ok_or("the file does not give every pump type's `units`")?;
        let mut worst: Option<(f64, String)> = None;
        for (bi, b) in s.boreholes.iter().enumerate() {
            let mut total = 0.0;
            let mut any = false;
            let mut beyond = false;
            let a0 = match (b.transmissivity_m2_per_s, b.storativity) {
                (Some(t), Some(st)) => TheisKernel::new(t, st, b.diameter_m / 2.0).k[0],
                _ => 0.0,
            };
            let system = SystemCurve::new(s, b, a0);
            for (p, n) in s.pumps.iter().zip(units) {
                if p.source_index != bi || *n == 0 {
                    continue;
                }
                if let Some(Ok(t)) = p.kind.displacement_table() {
                    // a displacement pump at its rated power (a fixed-speed unit at its rows')
                    any = true;
                    let power = *n as f64 * t.rated_power_w();
                    if let Ok(op) =
                        crate::physics::displacement::operating_point(&t, *n, power, |q| {
                            system.head_m(q, 0.0)
                        })
                    {
                        total += op.flow_m3_per_s;
                        beyond |= op.outside_table;
                    }
                    continue;
                }
                let Some(Ok(curve)) = curve_of(&p.kind) else {
                    continue;
                };
                any = true;
                if let Ok(op) = pumps::operating_point(&curve, 1.0, *n, |q| system.head_m(q, 0.0)) {
                    total += op.flow_m3_per_s;
                    beyond |= op.beyond_table;
                }
            }
            if !any || b.tested_yield_m3_per_s <= 0.0 {
                continue;
            }
            let ratio = total / b.tested_yield_m3_per_s;
            let note = format!(
                "{}{:.1} m³/h at full speed from the static level against {} tested {:.1} m³/h (safe yield {:.1} m³/h)",
                if beyond { "at least " } else { "" },
                total * 3600.0,
                b.name,
                b.tested_yield_m3_per_s * 3600.0,
                b.safe_yield_m3_per_s() * 3600.0
            );
            if worst.as_ref().is_none_or(|(r, _)| ratio > *r) {
                worst = Some((ratio, note));
            }
        }
        let (ratio, note) = worst.ok_or("no motor pump on a borehole is installed")?;
        measured(ratio, note)
    }

    /// Highest input power of one positive-displacement unit in the base year over its rated
    /// power, from the hourly record (its speed column holds the drawn share of the rated
    /// power of the running units). Only when one motor pump type is installed.
    fn peak_power_over_rated(&self) -> Result<Measured, String> {
        let s = self.scheme;
        let units = self
            .units
            .as_ref()
            .ok_or("the file does not give every pump type's `units`")?;
        let motors: Vec<usize> = s
            .pumps
            .iter()
            .zip(units)
            .enumerate()
            .filter(|(_, (p, n))| {
                **n > 0
                    && matches!(
                        p.kind,
                        PumpKind::Curve { .. } | PumpKind::Displacement { .. }
                    )
            })
            .map(|(i, _)| i)
            .collect();
        let i = match motors.as_slice() {
            [] => return Err("no positive-displacement pump is installed in this design".into()),
            [i] => *i,
            _ => {
                return Err(
                    "several motor pump types are installed; the hourly record holds one drive share per hour"
                        .into(),
                );
            }
        };
        let PumpKind::Displacement { rated_power_w, .. } = s.pumps[i].kind else {
            return Err("no positive-displacement pump is installed in this design".into());
        };
        let r = self.report()?;
        let h = r
            .year
            .hourly
            .as_ref()
            .ok_or("the report holds no hourly series of the base year")?;
        let peak = h
            .pump_speed_ratio
            .iter()
            .zip(&h.pumped_m3)
            .filter(|(_, v)| **v > 0.0)
            .map(|(x, _)| *x)
            .fold(f64::NAN, f64::max);
        if peak.is_nan() {
            return Err("the pump never ran in the base year".into());
        }
        measured(
            peak,
            format!(
                "{}: highest {:.0} W per unit against {:.0} W rated ({})",
                s.pumps[i].name,
                peak * rated_power_w,
                rated_power_w,
                r.year.year
            ),
        )
    }

    /// Volume-weighted mean of the per-unit flow brought to reference speed, over the
    /// best-efficiency flow, from the base year's hourly head and speed.
    ///
    /// A unit at speed ratio n working against head H runs at q with H = n²·H₀(q/n) (affinity
    /// laws), so q/n = H₀⁻¹(H/n²) on the reference curve; the best-efficiency flow at speed n is
    /// n·Q_bep, so the ratio q/(n·Q_bep) = H₀⁻¹(H/n²)/Q_bep. Only when one motor pump type is
    /// installed (the hourly record holds one head and one speed per hour).
    fn flow_over_best_efficiency(&self) -> Result<Measured, String> {
        let s = self.scheme;
        let units = self
            .units
            .as_ref()
            .ok_or("the file does not give every pump type's `units`")?;
        let installed: Vec<usize> = s
            .pumps
            .iter()
            .zip(units)
            .enumerate()
            .filter(|(_, (p, n))| **n > 0 && matches!(p.kind, PumpKind::Curve { .. }))
            .map(|(i, _)| i)
            .collect();
        let i = match installed.as_slice() {
            [] => return Err(self.no_centrifugal()),
            [i] => *i,
            _ => {
                return Err(
                    "several motor pump types are installed; the hourly record holds one head per hour"
                        .into(),
                );
            }
        };
        let curve = match curve_of(&s.pumps[i].kind) {
            Some(Ok(c)) => c,
            _ => return Err("the pump's curve is not usable".into()),
        };
        let r = self.report()?;
        let h = r
            .year
            .hourly
            .as_ref()
            .ok_or("the report holds no hourly series of the base year")?;
        let bep = curve.best_efficiency_flow();
        if bep <= 0.0 {
            return Err("the curve's best-efficiency flow is at zero flow".into());
        }
        let inverse = HeadInverse::new(&curve);
        let (mut sum_w, mut sum_wq) = (0.0, 0.0);
        for k in 0..h.pump_head_m.len() {
            let (head, n, vol) = (h.pump_head_m[k], h.pump_speed_ratio[k], h.pumped_m3[k]);
            if head <= 0.0 || n <= 0.0 || vol <= 0.0 {
                continue;
            }
            let q0 = inverse.flow_for_head(head / (n * n));
            sum_w += vol;
            sum_wq += vol * q0;
        }
        if sum_w <= 0.0 {
            return Err("the motor pump never ran in the base year".into());
        }
        let q0 = sum_wq / sum_w;
        measured(
            q0 / bep,
            format!(
                "{}: {:.2} m³/h per unit at reference speed against best efficiency at {:.2} m³/h ({})",
                s.pumps[i].name,
                q0 * 3600.0,
                bep * 3600.0,
                r.year.year
            ),
        )
    }
}

fn ensemble_note(e: &crate::simulate::Ensemble) -> String {
    let how = match e.judged_on {
        crate::scheme::JudgedOn::Median => "median",
        crate::scheme::JudgedOn::P90 => "1 year in 10",
    };
    if e.years_run > 1 {
        format!("{}, {how} of {} weather years", e.year, e.years_run)
    } else {
        format!("{}, weather-independent", e.year)
    }
}

/// Mean flow through the rising main while pumping in one year, m³/s: motor-pumped volume over
/// motor run time, plus the rams' mean delivery over the whole year (rams run continuously and
/// lift through the same main). None when nothing is lifted through the main.
pub fn mean_pumping_flow_m3_per_s(y: &YearResult) -> Option<f64> {
    let a = &y.annual;
    let motor_m3 = (a.pumped_m3 - a.hand_pumped_m3 - a.ram_pumped_m3).max(0.0);
    let motor = if a.pump_run_hours > 0.0 && motor_m3 > 0.0 {
        motor_m3 / (a.pump_run_hours * 3600.0)
    } else {
        0.0
    };
    let ram = a.ram_pumped_m3.max(0.0) / (crate::weather::HOURS_IN_YEAR as f64 * 3600.0);
    let q = motor + ram;
    (q > 0.0).then_some(q)
}

/// The reference-speed curve tabulated for inverting head to flow: 257 points evenly spaced
/// in flow over the curve's table, (flow m³/s, head m), head non-increasing.
pub struct HeadInverse {
    points: Vec<(f64, f64)>,
}

impl HeadInverse {
    const SAMPLES: usize = 257;

    pub fn new(curve: &pumps::PumpCurve) -> HeadInverse {
        let (lo, hi) = (curve.flow_min_m3_per_s(), curve.flow_max_m3_per_s());
        let points = (0..Self::SAMPLES)
            .map(|k| {
                let q = lo + (hi - lo) * k as f64 / (Self::SAMPLES - 1) as f64;
                (q, curve.head_at_clamped(q).value)
            })
            .collect();
        HeadInverse { points }
    }

    /// The flow at which the curve gives head `h_m`, m³/s: linear interpolation between the
    /// tabulated points around it (the curve is monotone, so the interval is unique up to flat
    /// parts); clamped to the table's ends outside the curve's head range.
    pub fn flow_for_head(&self, h_m: f64) -> f64 {
        let p = &self.points;
        let (first, last) = (p[0], p[p.len() - 1]);
        if h_m >= first.1 {
            return first.0;
        }
        if h_m <= last.1 {
            return last.0;
        }
        // first index whose head is below h_m (heads fall with flow)
        let k = p.partition_point(|x| x.1 >= h_m).clamp(1, p.len() - 1);
        let (a, b) = (p[k - 1], p[k]);
        if (a.1 - b.1).abs() < 1e-12 {
            return a.0;
        }
        a.0 + (b.0 - a.0) * (a.1 - h_m) / (a.1 - b.1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn names_round_trip_and_are_unique() {
        let mut names: Vec<&str> = Quantity::ALL.iter().map(|q| q.name()).collect();
        for q in Quantity::ALL {
            assert_eq!(Quantity::from_name(q.name()), Some(*q));
        }
        names.sort();
        names.dedup();
        assert_eq!(names.len(), Quantity::ALL.len());
    }

    #[test]
    fn units_convert_to_engine_units() {
        // 20 L = 0.020 m³ (definition of the litre, 1 L = 1 dm³)
        assert_relative_eq!(Quantity::SupplyPerPerson.to_si(20.0), 0.020);
        assert_relative_eq!(Quantity::DemandMetFirstYear.to_si(97.0), 0.97);
        assert_eq!(Quantity::SupplyPerPerson.format(0.0213), "21.3");
        assert_eq!(Quantity::DemandMetHorizon.format(-0.0), "0.0");
    }

    #[test]
    fn head_inversion_on_a_linear_curve() {
        // A curve with H = 100 − 10·q[m³/h] (linear, so H₀⁻¹ is exact): H = 70 m at q = 3 m³/h.
        let pts: Vec<pumps::CurvePoint> = (0..5)
            .map(|i| pumps::CurvePoint {
                flow_m3_per_s: i as f64 / 3600.0,
                head_m: 100.0 - 10.0 * i as f64,
                power_w: 1000.0,
            })
            .collect();
        let c = pumps::PumpCurve::new(&pts).unwrap();
        let inv = HeadInverse::new(&c);
        assert_relative_eq!(inv.flow_for_head(70.0) * 3600.0, 3.0, epsilon = 1e-9);
        assert_relative_eq!(inv.flow_for_head(63.3) * 3600.0, 3.67, epsilon = 1e-9);
        // above shut-off head: clamped to the first point; below run-out: to the last
        assert_eq!(inv.flow_for_head(120.0), 0.0);
        assert_relative_eq!(inv.flow_for_head(10.0) * 3600.0, 4.0);
    }
}
