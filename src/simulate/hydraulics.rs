//! The borehole–pump–rising-main system of each pump type, solved ahead of the hourly loop.
//!
//! The system head at total flow Q is
//!   H(Q) = lift₀ + s_past + (a₀ + B)·Q + C·Q² + h_f(Q) + ΣK·v²/2g
//! with lift₀ the static lift from the static water level to the tank inlet, s_past the aquifer
//! drawdown left by earlier hours (Theis superposition, varies hour by hour), a₀·Q the
//! drawdown of the current hour's pumping (Theis, half an hour in), B·Q + C·Q² Jacob's well
//! loss and h_f the rising-main friction (Colebrook–White or Hazen–Williams).
//! Only s_past changes from hour to hour, so for each number of running units the operating
//! point is tabulated on a grid of s_past once per scheme; the hourly loop interpolates.
//!
//! Every pump model is tabulated into the same tables, so the hourly step makes one call
//! whatever the pump's kind ([`PumpTables::variable_at`], [`PumpTables::point`]): a
//! centrifugal curve through the affinity laws ([`pumps::PowerFlowTable::new`]), a
//! positive-displacement pump through its measured table
//! ([`crate::physics::displacement`]): at each total power sample, the total flow of n units
//! sharing that power equally where the table's flow meets the system curve (bisection), the
//! samples taken at every node power of the table (× n) and evenly between, flow linear
//! between samples ([`pumps::PowerFlowTable::from_samples`]).

use crate::physics::displacement::{self, DisplacementTable};
use crate::physics::{aquifer, pipes, pumps, water};
use crate::scheme::{Borehole, Friction, PumpKind, RisingMain, Scheme};

/// Points on the s_past grid. Between points the flow is interpolated linearly.
const OFFSET_POINTS: usize = 17;
/// Samples along each variable-speed power–flow table.
const POWER_SAMPLES: usize = 33;

/// The system curve of one borehole and the rising main, without s_past.
#[derive(Debug, Clone)]
pub struct SystemCurve {
    /// Static lift from the static water level to the tank inlet, m.
    pub lift0_m: f64,
    /// Linear coefficient a₀ + B, s/m².
    pub linear_s_per_m2: f64,
    /// Quadratic well-loss coefficient C, s²/m⁵.
    pub quad_s2_per_m5: f64,
    pub main: Option<RisingMain>,
    pub nu_m2_per_s: f64,
}

impl SystemCurve {
    pub fn new(s: &Scheme, b: &Borehole, a0_s_per_m2: f64) -> SystemCurve {
        let mut lift0_m = s.tank.inlet_elevation_m - b.ground_elevation_m + b.static_depth_m;
        if s.tank.delivery_pressure_pa > 0.0 {
            // delivery into a pressurised vessel: its gauge pressure as head, p/(ρg)
            lift0_m += water::head_m_from_pa(
                s.tank.delivery_pressure_pa,
                water::water_density_kg_per_m3(s.info.water_temperature_c),
            );
        }
        SystemCurve {
            lift0_m,
            linear_s_per_m2: a0_s_per_m2 + b.well_loss_b_s_per_m2,
            quad_s2_per_m5: b.well_loss_c_s2_per_m5,
            main: s.rising_main.clone(),
            nu_m2_per_s: water::water_kinematic_viscosity_m2_per_s(s.info.water_temperature_c),
        }
    }

    /// Rising-main friction and fittings loss at total flow q (m³/s), m.
    pub fn main_loss_m(&self, q: f64) -> f64 {
        let Some(m) = &self.main else {
            return 0.0;
        };
        if q <= 0.0 {
            return 0.0;
        }
        let method = match m.friction {
            Friction::ColebrookWhite { roughness_m } => {
                pipes::FrictionMethod::DarcyWeisbach { roughness_m }
            }
            Friction::HazenWilliams { c } => pipes::FrictionMethod::HazenWilliams { c },
        };
        let hf = pipes::pipe_friction_head_m(
            q,
            m.length_m,
            m.internal_diameter_m,
            method,
            self.nu_m2_per_s,
        )
        .unwrap_or(f64::INFINITY);
        let v = pipes::velocity_m_per_s(q, m.internal_diameter_m);
        hf + pipes::minor_loss_m(m.fittings_k_total, v)
    }

    /// Drawdown in the pumped well from the current flow (aquifer a₀Q plus well loss), m.
    pub fn well_drawdown_m(&self, q: f64) -> f64 {
        self.linear_s_per_m2 * q + self.quad_s2_per_m5 * q * q
    }

    /// Total head against which the pumps work at total flow q with past drawdown s_past, m.
    pub fn head_m(&self, q: f64, s_past_m: f64) -> f64 {
        self.lift0_m + s_past_m + self.well_drawdown_m(q) + self.main_loss_m(q)
    }
}

/// Interpolated result of a table lookup.
#[derive(Debug, Clone, Copy, Default)]
pub struct Point {
    pub flow_m3_per_s: f64,
    pub power_w: f64,
    pub head_m: f64,
    pub speed_ratio: f64,
    pub beyond_table: bool,
}

/// Operating points of N units of one curve pump, on the grid of s_past.
#[derive(Debug, Clone)]
enum UnitsTable {
    /// Variable speed (solar): a power–flow table per grid point (None: no delivery there).
    Variable(Vec<Option<pumps::PowerFlowTable>>),
    /// Fixed speed (generator, grid): the operating point at rated speed per grid point.
    Fixed(Vec<Option<Point>>),
}

/// The measured performance a pump type's tables were built from.
#[derive(Debug, Clone)]
pub enum UnitModel {
    /// A centrifugal curve at rated speed (affinity laws for other speeds).
    Centrifugal(pumps::PumpCurve),
    /// A positive-displacement pump's measured table.
    Displacement(DisplacementTable),
}

/// The tabulated system of one motor pump type on its borehole.
#[derive(Debug, Clone)]
pub struct PumpTables {
    pub unit: UnitModel,
    pub system: SystemCurve,
    /// s_past grid step, m.
    step_m: f64,
    /// Largest s_past tabulated, m (beyond it the dry-run cut-out stops the pumps anyway).
    pub max_offset_m: f64,
    /// Index n−1 holds the table for n units running.
    by_units: Vec<UnitsTable>,
    pub start_power_w: f64,
}

impl PumpTables {
    /// Builds the tables for 1..=max_units units. `variable` is true for a variable-power drive.
    pub fn build(
        curve: pumps::PumpCurve,
        system: SystemCurve,
        max_offset_m: f64,
        max_units: u32,
        variable: bool,
        min_speed: f64,
        start_power_w: f64,
    ) -> PumpTables {
        let max_offset_m = max_offset_m.max(0.0);
        let step_m = max_offset_m / (OFFSET_POINTS - 1) as f64;
        let offsets: Vec<f64> = (0..OFFSET_POINTS).map(|k| k as f64 * step_m).collect();
        let mut by_units = Vec::new();
        for n in 1..=max_units.max(1) {
            let t = if variable {
                UnitsTable::Variable(
                    offsets
                        .iter()
                        .map(|s| {
                            pumps::PowerFlowTable::new(
                                &curve,
                                n,
                                |q| system.head_m(q, *s),
                                min_speed,
                                1.0,
                                POWER_SAMPLES,
                            )
                            .ok()
                        })
                        .collect(),
                )
            } else {
                UnitsTable::Fixed(
                    offsets
                        .iter()
                        .map(|s| {
                            pumps::operating_point(&curve, 1.0, n, |q| system.head_m(q, *s))
                                .ok()
                                .map(|op| Point {
                                    flow_m3_per_s: op.flow_m3_per_s,
                                    power_w: op.power_total_w,
                                    head_m: op.head_m,
                                    speed_ratio: 1.0,
                                    beyond_table: op.beyond_table,
                                })
                        })
                        .collect(),
                )
            };
            by_units.push(t);
        }
        PumpTables {
            unit: UnitModel::Centrifugal(curve),
            system,
            step_m,
            max_offset_m,
            by_units,
            start_power_w,
        }
    }

    /// Builds the tables of a positive-displacement pump for 1..=max_units units: a
    /// power–flow table per s_past grid point for a variable drive, else the operating point
    /// at the rated power (a variable table) or at each head's one power (a fixed-speed unit).
    /// `start_power_w` is the least start power of any head (no unit starts below it).
    pub fn build_displacement(
        table: DisplacementTable,
        system: SystemCurve,
        max_offset_m: f64,
        max_units: u32,
        variable: bool,
    ) -> PumpTables {
        let max_offset_m = max_offset_m.max(0.0);
        let step_m = max_offset_m / (OFFSET_POINTS - 1) as f64;
        let offsets: Vec<f64> = (0..OFFSET_POINTS).map(|k| k as f64 * step_m).collect();
        let mut by_units = Vec::new();
        for n in 1..=max_units.max(1) {
            let t = if variable {
                UnitsTable::Variable(
                    offsets
                        .iter()
                        .map(|s| displacement_power_table(&table, n, |q| system.head_m(q, *s)))
                        .collect(),
                )
            } else {
                let nf = n as f64;
                UnitsTable::Fixed(
                    offsets
                        .iter()
                        .map(|s| {
                            displacement::operating_point(
                                &table,
                                n,
                                nf * table.rated_power_w(),
                                |q| system.head_m(q, *s),
                            )
                            .ok()
                            .filter(|op| op.flow_m3_per_s > 0.0)
                            .map(|op| Point {
                                flow_m3_per_s: op.flow_m3_per_s,
                                power_w: op.power_w,
                                head_m: op.head_m,
                                speed_ratio: op.power_w / (nf * table.rated_power_w()),
                                beyond_table: op.outside_table,
                            })
                        })
                        .collect(),
                )
            };
            by_units.push(t);
        }
        let start_power_w = if table.fixed_speed() {
            0.0
        } else {
            table.power_range_w().0
        };
        PumpTables {
            unit: UnitModel::Displacement(table),
            system,
            step_m,
            max_offset_m,
            by_units,
            start_power_w,
        }
    }

    /// The centrifugal curve these tables were built from (None for other kinds).
    pub fn curve(&self) -> Option<&pumps::PumpCurve> {
        match &self.unit {
            UnitModel::Centrifugal(c) => Some(c),
            UnitModel::Displacement(_) => None,
        }
    }

    /// Total input power (W) of `n` fixed-speed units held to total flow `q_m3_per_s` below
    /// their operating point `at` (the safe-yield cap): a centrifugal pump is throttled along
    /// its curve; a displacement pump cannot be throttled, so it runs that share of the hour
    /// and draws that share of its power.
    #[inline]
    pub fn fixed_power_for_flow(&self, n: u32, q_m3_per_s: f64, at: &Point) -> f64 {
        match &self.unit {
            UnitModel::Centrifugal(c) => c.power_at_clamped(q_m3_per_s / n as f64).value * n as f64,
            UnitModel::Displacement(_) => at.power_w * q_m3_per_s / at.flow_m3_per_s,
        }
    }

    /// Position of s_past (m) on the grid: the point below and the fraction to the next.
    pub fn grid(&self, s_past_m: f64) -> (usize, f64) {
        if self.step_m <= 0.0 {
            return (0, 0.0);
        }
        let x = (s_past_m.max(0.0) / self.step_m).min((OFFSET_POINTS - 1) as f64);
        // x ≥ 0, so truncation is the floor
        let k = (x as usize).min(OFFSET_POINTS - 2);
        (k, x - k as f64)
    }

    /// Both halves of the hourly solar solve from one search per table, at grid position `g`
    /// (from [`Self::grid`]): the total flow (to choose how many units run; interpolated
    /// between grid points, 0 where a table does not deliver), and the operating point
    /// [`Self::point`] gives, without head and speed (`None`: no
    /// delivery). Variable-speed tables only; otherwise `(0, None)`.
    #[inline]
    pub fn variable_at(&self, n: u32, power_w: f64, g: (usize, f64)) -> (f64, Option<Point>) {
        let Some(UnitsTable::Variable(v)) = self.by_units.get((n as usize).wrapping_sub(1)) else {
            return (0.0, None);
        };
        if power_w < self.start_power_w * n as f64 {
            return (0.0, None);
        }
        let (k, f) = g;
        let lite = |(q, p, beyond): (f64, f64, bool)| Point {
            flow_m3_per_s: q,
            power_w: p,
            head_m: 0.0,
            speed_ratio: 0.0,
            beyond_table: beyond,
        };
        let a = v[k]
            .as_ref()
            .and_then(|t| t.flow_and_power(power_w))
            .map(lite);
        let qa = a.map_or(0.0, |p| p.flow_m3_per_s);
        if f <= 0.0 || self.step_m <= 0.0 {
            return (qa, a);
        }
        let b = v[k + 1]
            .as_ref()
            .and_then(|t| t.flow_and_power(power_w))
            .map(lite);
        let qb = b.map_or(0.0, |p| p.flow_m3_per_s);
        let q = qa + f * (qb - qa);
        let pt = match (a, b) {
            (Some(a), Some(b)) => Some(Point {
                flow_m3_per_s: q,
                power_w: a.power_w + f * (b.power_w - a.power_w),
                beyond_table: a.beyond_table || b.beyond_table,
                ..a
            }),
            (Some(a), None) => Some(Point {
                flow_m3_per_s: a.flow_m3_per_s * (1.0 - f),
                power_w: a.power_w * (1.0 - f),
                ..a
            }),
            (None, _) => None,
        };
        (q, pt)
    }

    /// Total input power (W) at which `n` variable-speed units deliver total flow q with past
    /// drawdown s_past (the inverse of `point`), or None where the tables do not reach q.
    pub fn power_for_flow(&self, n: u32, q: f64, s_past_m: f64) -> Option<f64> {
        let UnitsTable::Variable(v) = self.by_units.get(n as usize - 1)? else {
            return None;
        };
        let (k, f) = self.grid(s_past_m);
        let a = v[k].as_ref()?.power_for_flow(q)?;
        if f <= 0.0 {
            return Some(a);
        }
        match v[k + 1].as_ref().and_then(|t| t.power_for_flow(q)) {
            Some(b) => Some(a + f * (b - a)),
            None => Some(a),
        }
    }

    /// Operating point of `n` units sharing total power `power_w` (variable speed), or at
    /// rated speed (fixed; `power_w` ignored), with past drawdown `s_past_m`. None: no delivery.
    pub fn point(&self, n: u32, power_w: f64, s_past_m: f64) -> Option<Point> {
        if n == 0 || n as usize > self.by_units.len() {
            return None;
        }
        let (k, f) = self.grid(s_past_m);
        let pick = |i: usize| -> Option<Point> {
            match &self.by_units[n as usize - 1] {
                UnitsTable::Variable(v) => {
                    if power_w < self.start_power_w * n as f64 {
                        return None;
                    }
                    v[i].as_ref()?.lookup(power_w).map(|p| Point {
                        flow_m3_per_s: p.flow_m3_per_s,
                        power_w: p.power_used_w,
                        head_m: p.head_m,
                        speed_ratio: p.speed_ratio,
                        beyond_table: p.beyond_table,
                    })
                }
                UnitsTable::Fixed(v) => v[i],
            }
        };
        let a = pick(k);
        if f <= 0.0 || self.step_m <= 0.0 {
            return a;
        }
        let b = pick(k + 1);
        match (a, b) {
            (Some(a), Some(b)) => Some(Point {
                flow_m3_per_s: a.flow_m3_per_s + f * (b.flow_m3_per_s - a.flow_m3_per_s),
                power_w: a.power_w + f * (b.power_w - a.power_w),
                head_m: a.head_m + f * (b.head_m - a.head_m),
                speed_ratio: a.speed_ratio + f * (b.speed_ratio - a.speed_ratio),
                beyond_table: a.beyond_table || b.beyond_table,
            }),
            // at the edge of delivery: fade the flow out linearly
            (Some(a), None) => Some(Point {
                flow_m3_per_s: a.flow_m3_per_s * (1.0 - f),
                power_w: a.power_w * (1.0 - f),
                ..a
            }),
            (None, Some(_)) | (None, None) => None,
        }
    }
}

/// Theis superposition kernel for hourly pumping: coefficient (s/m²) of the flow j hours ago
/// in the drawdown at the pumped well's face, k_j = [W(u(j+½ h)) − W(u(j−½ h))]/(4πT), with
/// k_0 = W(u(½ h))/(4πT); plus the tail factor for pumping older than the window at its mean
/// rate from 30 days back, [W(u(30 d)) − W(u(window−½ h))]/(4πT).
/// Theis (1935) via Kruseman & de Ridder (1994) eq. 3.5, superposition in time (their §12).
#[derive(Debug, Clone)]
pub struct TheisKernel {
    pub k: Vec<f64>,
    /// k_j for j = KERNEL_HOURS−1 down to 1 (oldest hour first), for the hourly sum.
    pub k_rev: Vec<f64>,
    pub tail: f64,
}

/// Hours of pumping history superposed hour by hour.
pub const KERNEL_HOURS: usize = 24;
/// Days over which older pumping is averaged for the tail.
pub const TAIL_DAYS: usize = 30;

impl TheisKernel {
    pub fn new(t_m2_per_s: f64, storativity: f64, r_m: f64) -> TheisKernel {
        let w = |hours: f64| {
            aquifer::well_function(aquifer::theis_u(
                t_m2_per_s,
                storativity,
                r_m,
                hours * 3600.0,
            ))
        };
        let c = 1.0 / (4.0 * std::f64::consts::PI * t_m2_per_s);
        let mut k = Vec::with_capacity(KERNEL_HOURS);
        for j in 0..KERNEL_HOURS {
            let jf = j as f64;
            let v = if j == 0 {
                w(0.5)
            } else {
                w(jf + 0.5) - w(jf - 0.5)
            };
            k.push(v * c);
        }
        let tail = (w(TAIL_DAYS as f64 * 24.0) - w(KERNEL_HOURS as f64 - 0.5)) * c;
        let k_rev = k[1..].iter().rev().copied().collect();
        TheisKernel { k, k_rev, tail }
    }
}

/// The power–flow table of `n` displacement units sharing their drive's power equally
/// against one system curve (see the module notes), or None where they never deliver (the
/// head at zero flow is at or beyond the stall head).
fn displacement_power_table(
    t: &DisplacementTable,
    n: u32,
    system: impl Fn(f64) -> f64,
) -> Option<pumps::PowerFlowTable> {
    let nf = n as f64;
    let h0 = system(0.0);
    let start = nf * t.start_power_w(h0);
    let top = nf * t.power_range_w().1;
    if !(start.is_finite() && start < top) {
        return None;
    }
    // full drive: every unit offered its highest tabulated power
    let sat = displacement::operating_point(t, n, top, &system).ok()?;
    let end = sat.power_w.max(start * (1.0 + 1e-9) + 1e-9);
    let mut powers: Vec<f64> = t
        .node_powers_w()
        .map(|p| nf * p)
        .filter(|p| *p > start && *p < end)
        .collect();
    powers.extend(
        (0..=POWER_SAMPLES).map(|j| start + (end - start) * j as f64 / POWER_SAMPLES as f64),
    );
    powers.sort_by(f64::total_cmp);
    let mut kept: Vec<f64> = Vec::with_capacity(powers.len());
    for p in powers {
        if kept.last().is_none_or(|l| p > l + 1e-9 * end) && p < end {
            kept.push(p);
        }
    }
    kept.push(end);
    let (lowest_head, _) = t.head_range_m();
    let rated = nf * t.rated_power_w();
    let (mut flow, mut head, mut speed) = (Vec::new(), Vec::new(), Vec::new());
    let mut beyond = kept.len();
    for (j, &p) in kept.iter().enumerate() {
        let op = if j + 1 == kept.len() {
            Some(sat)
        } else {
            displacement::operating_point(t, n, p, &system).ok()
        };
        let (q, h, out) = op.map_or((0.0, h0, false), |o| {
            (o.flow_m3_per_s, o.head_m, o.outside_table)
        });
        // flow never falls with power (guards the bisection's last bits)
        let q = flow.last().map_or(q, |l: &f64| q.max(*l));
        if out && beyond == kept.len() {
            beyond = j;
        }
        if out && h < lowest_head {
            beyond = 0;
        }
        flow.push(q);
        head.push(h);
        speed.push(p / rated);
    }
    pumps::PowerFlowTable::from_samples(kept, flow, head, speed, beyond).ok()
}

/// Curve points of a pump as the physics type.
pub fn curve_of(kind: &PumpKind) -> Option<Result<pumps::PumpCurve, pumps::CurveError>> {
    match kind {
        PumpKind::Curve { points, .. } => {
            let pts: Vec<pumps::CurvePoint> = points
                .iter()
                .map(|p| pumps::CurvePoint {
                    flow_m3_per_s: p.flow_m3_per_s,
                    head_m: p.head_m,
                    power_w: p.power_w,
                })
                .collect();
            Some(pumps::PumpCurve::new(&pts))
        }
        _ => None,
    }
}
