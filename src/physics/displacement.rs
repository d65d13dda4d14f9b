//! Positive-displacement pumps (helical-rotor, piston, diaphragm, surface-driven oscillating
//! flow) read from a measured performance table: a list of heads and, at each head, the flow at
//! several drive input powers (variable drive), or the flow and power at each head (a
//! fixed-speed unit on a generator or the mains). No affinity scaling: the table is the model.
//!
//! Interpolation (stated): linear along each axis.
//! * Along a row (one measured head), flow is linear in input power between measured points;
//!   the row's start power is a measured point of zero flow (below it the unit does not run at
//!   that head); at powers above the row's highest measured power the unit draws no more and
//!   delivers that point's flow (its controller's limit at that head), never an extrapolation.
//! * Between two measured heads, the two rows' values at the same input power are mixed
//!   linearly in head (flow, power drawn and start power alike).
//! * Below the lowest measured head the lowest row is used as it is, and the point is flagged
//!   outside the table. Between the highest measured head and the stall head the flow falls
//!   linearly to zero at the stall head (the power drawn stays the highest row's), flagged
//!   outside the table. At or beyond the stall head the unit delivers nothing.
//!
//! With these rules flow never rises with head and never falls with power when the table
//! itself does neither ([`DisplacementTable::new`] refuses a table that does), which makes the
//! operating point against a rising system curve a bracketed root ([`operating_point`]).
//!
//! Several units on one drive share its power equally (each unit gets P/n); the engine picks
//! the number of running units that delivers the most water, as for centrifugal pumps.

use thiserror::Error;

/// One measured point of a row: input power and flow of one unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TablePoint {
    /// Drive input power of one unit, W.
    pub power_w: f64,
    /// Flow of one unit, m³/s.
    pub flow_m3_per_s: f64,
}

/// One measured head of the table, as given (any order of rows and of points).
#[derive(Debug, Clone, PartialEq)]
pub struct TableRow {
    /// Total head, m.
    pub head_m: f64,
    /// Input power at which the unit starts to deliver at this head, W (variable drive only).
    pub start_power_w: f64,
    /// Measured (power, flow) points: several for a variable drive, exactly one for a
    /// fixed-speed unit.
    pub points: Vec<TablePoint>,
}

/// Why a measured table is not usable. Indices are those of the rows and points as given.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum TableError {
    #[error(
        "the table has {count} measured head(s); give at least 2 heads so the flow can be interpolated between them"
    )]
    TooFewHeads { count: usize },
    #[error(
        "row {row}: {count} measured point(s); a variable-drive row needs at least 2 (power, flow) points"
    )]
    TooFewPoints { row: usize, count: usize },
    #[error("row {row}: a fixed-speed row has exactly one flow and one power; got {count} points")]
    FixedRowPoints { row: usize, count: usize },
    #[error("row {row}: {field} is not a finite number")]
    NotFinite { row: usize, field: &'static str },
    #[error("row {row}: head {head_m} m is negative; heads are 0 m or more")]
    NegativeHead { row: usize, head_m: f64 },
    #[error(
        "row {row}: head {head_m} m is given twice (also row {other}); give each measured head once"
    )]
    DuplicateHead {
        row: usize,
        other: usize,
        head_m: f64,
    },
    #[error("row {row} point {point}: flow is negative")]
    NegativeFlow { row: usize, point: usize },
    #[error("row {row} point {point}: power {power_w} W must be greater than 0")]
    PowerNotPositive {
        row: usize,
        point: usize,
        power_w: f64,
    },
    #[error(
        "row {row} point {point}: power {power_w} W is given twice at this head; give each power once"
    )]
    DuplicatePower {
        row: usize,
        point: usize,
        power_w: f64,
    },
    #[error(
        "row {row} point {point}: flow falls from {previous_m3_per_s} to {flow_m3_per_s} m³/s as power rises to {power_w} W; at one head a displacement pump delivers more (or the same) with more power"
    )]
    FlowFallsWithPower {
        row: usize,
        point: usize,
        power_w: f64,
        flow_m3_per_s: f64,
        previous_m3_per_s: f64,
    },
    #[error(
        "row {row}: start power {start_power_w} W is not below the row's lowest measured power {lowest_w} W; the start power is where delivery begins"
    )]
    StartNotBelowPoints {
        row: usize,
        start_power_w: f64,
        lowest_w: f64,
    },
    #[error("row {row} point {point}: power {power_w} W is above the rated power {rated_w} W")]
    AboveRated {
        row: usize,
        point: usize,
        power_w: f64,
        rated_w: f64,
    },
    #[error(
        "row {row}: at {power_w} W the flow {flow_m3_per_s} m³/s at head {head_m} m is above the {lower_flow_m3_per_s} m³/s at the lower head {lower_head_m} m (row {lower_row}); a displacement pump delivers less (or the same) as head rises"
    )]
    FlowRisesWithHead {
        row: usize,
        lower_row: usize,
        power_w: f64,
        head_m: f64,
        lower_head_m: f64,
        flow_m3_per_s: f64,
        lower_flow_m3_per_s: f64,
    },
    #[error(
        "stall head {stall_head_m} m is below the highest measured head {highest_m} m; the stall head is where delivery ends"
    )]
    StallBelowTable { stall_head_m: f64, highest_m: f64 },
    #[error("rated power {rated_w} W must be a finite number greater than 0")]
    RatedNotPositive { rated_w: f64 },
}

/// A row after checking, in SI, points sorted by power, the start point prepended.
#[derive(Debug, Clone, PartialEq)]
struct Row {
    head_m: f64,
    start_w: f64,
    /// Node powers, strictly rising: the start power, then the measured powers (variable
    /// drive); the single measured power (fixed speed).
    power_w: Vec<f64>,
    /// Flow at each node, m³/s (0 at the start node).
    flow: Vec<f64>,
}

impl Row {
    fn top_w(&self) -> f64 {
        self.power_w[self.power_w.len() - 1]
    }

    /// Flow (m³/s) and power drawn (W) of one unit with `power_w` available, along the row:
    /// 0 below the start, linear between nodes, the last node above it.
    fn at(&self, power_w: f64) -> (f64, f64) {
        let p = &self.power_w;
        let last = p.len() - 1;
        if power_w < p[0] {
            return (0.0, 0.0);
        }
        if power_w >= p[last] {
            return (self.flow[last], p[last]);
        }
        let mut k = 0;
        while k + 1 < last && p[k + 1] <= power_w {
            k += 1;
        }
        let f = (power_w - p[k]) / (p[k + 1] - p[k]);
        (
            self.flow[k] + f * (self.flow[k + 1] - self.flow[k]),
            power_w,
        )
    }
}

/// What one unit does at a head with an available power: the one small interface the
/// tabulation of the engine calls for every pump model.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct UnitDuty {
    /// Flow of the unit, m³/s (0 when it does not run).
    pub flow_m3_per_s: f64,
    /// Input power it draws, W (0 when it does not run).
    pub power_w: f64,
    /// Whether it runs (enough power to start at this head, head below stall).
    pub runs: bool,
    /// Whether the head lies outside the measured heads (the point is not measured).
    pub outside_table: bool,
}

/// A family of pump models behind one call: flow, power drawn, whether it runs and whether
/// the point is outside its table, for one unit at a head with an available power.
pub trait PumpModel {
    /// One unit at total head `head_m` (m) with `power_w` (W) available to it.
    fn duty(&self, head_m: f64, power_w: f64) -> UnitDuty;
}

/// A checked measured table of a positive-displacement pump (see the module notes for the
/// interpolation). Rows are kept sorted by head, so the order they were given in does not
/// matter.
#[derive(Debug, Clone, PartialEq)]
pub struct DisplacementTable {
    rows: Vec<Row>,
    rated_power_w: f64,
    stall_head_m: f64,
    fixed_speed: bool,
}

impl DisplacementTable {
    /// Checks and builds a table. `fixed_speed`: every row is one (power, flow) point of a
    /// fixed-speed unit; else every row has ≥ 2 measured points and a start power.
    ///
    /// Refused (naming the row and point as given): fewer than 2 heads or points, a value not
    /// finite, a negative head or flow, power ≤ 0, a head or power given twice, flow falling as
    /// power rises at one head, a start power not below the row's points, a point above the
    /// rated power, flow rising with head at any tabulated power (checked at every node power
    /// of both neighbouring rows, where both piecewise-linear rows can only turn), a stall head
    /// below the highest measured head.
    pub fn new(
        rows: &[TableRow],
        rated_power_w: f64,
        stall_head_m: f64,
        fixed_speed: bool,
    ) -> Result<DisplacementTable, TableError> {
        if !(rated_power_w.is_finite() && rated_power_w > 0.0) {
            return Err(TableError::RatedNotPositive {
                rated_w: rated_power_w,
            });
        }
        if rows.len() < 2 {
            return Err(TableError::TooFewHeads { count: rows.len() });
        }
        let mut built: Vec<(usize, Row)> = Vec::with_capacity(rows.len());
        for (ri, r) in rows.iter().enumerate() {
            if !r.head_m.is_finite() {
                return Err(TableError::NotFinite {
                    row: ri,
                    field: "head",
                });
            }
            if r.head_m < 0.0 {
                return Err(TableError::NegativeHead {
                    row: ri,
                    head_m: r.head_m,
                });
            }
            if fixed_speed && r.points.len() != 1 {
                return Err(TableError::FixedRowPoints {
                    row: ri,
                    count: r.points.len(),
                });
            }
            if !fixed_speed && r.points.len() < 2 {
                return Err(TableError::TooFewPoints {
                    row: ri,
                    count: r.points.len(),
                });
            }
            let mut pts: Vec<(usize, TablePoint)> = r.points.iter().copied().enumerate().collect();
            for (pi, p) in &pts {
                if !p.power_w.is_finite() {
                    return Err(TableError::NotFinite {
                        row: ri,
                        field: "power",
                    });
                }
                if !p.flow_m3_per_s.is_finite() {
                    return Err(TableError::NotFinite {
                        row: ri,
                        field: "flow",
                    });
                }
                if p.flow_m3_per_s < 0.0 {
                    return Err(TableError::NegativeFlow {
                        row: ri,
                        point: *pi,
                    });
                }
                if p.power_w <= 0.0 {
                    return Err(TableError::PowerNotPositive {
                        row: ri,
                        point: *pi,
                        power_w: p.power_w,
                    });
                }
                if p.power_w > rated_power_w {
                    return Err(TableError::AboveRated {
                        row: ri,
                        point: *pi,
                        power_w: p.power_w,
                        rated_w: rated_power_w,
                    });
                }
            }
            pts.sort_by(|a, b| a.1.power_w.total_cmp(&b.1.power_w));
            for w in pts.windows(2) {
                let (a, b) = (w[0].1, w[1].1);
                if b.power_w == a.power_w {
                    return Err(TableError::DuplicatePower {
                        row: ri,
                        point: w[1].0,
                        power_w: b.power_w,
                    });
                }
                if b.flow_m3_per_s < a.flow_m3_per_s {
                    return Err(TableError::FlowFallsWithPower {
                        row: ri,
                        point: w[1].0,
                        power_w: b.power_w,
                        flow_m3_per_s: b.flow_m3_per_s,
                        previous_m3_per_s: a.flow_m3_per_s,
                    });
                }
            }
            let (mut power_w, mut flow) = (Vec::new(), Vec::new());
            let start_w = if fixed_speed {
                pts[0].1.power_w
            } else {
                if !r.start_power_w.is_finite() {
                    return Err(TableError::NotFinite {
                        row: ri,
                        field: "start power",
                    });
                }
                let lowest_w = pts[0].1.power_w;
                if !(r.start_power_w >= 0.0 && r.start_power_w < lowest_w) {
                    return Err(TableError::StartNotBelowPoints {
                        row: ri,
                        start_power_w: r.start_power_w,
                        lowest_w,
                    });
                }
                power_w.push(r.start_power_w);
                flow.push(0.0);
                r.start_power_w
            };
            for (_, p) in &pts {
                power_w.push(p.power_w);
                flow.push(p.flow_m3_per_s);
            }
            built.push((
                ri,
                Row {
                    head_m: r.head_m,
                    start_w,
                    power_w,
                    flow,
                },
            ));
        }
        built.sort_by(|a, b| a.1.head_m.total_cmp(&b.1.head_m));
        for w in built.windows(2) {
            let ((li, lo), (hi_i, hi)) = (&w[0], &w[1]);
            if hi.head_m == lo.head_m {
                return Err(TableError::DuplicateHead {
                    row: (*hi_i).max(*li),
                    other: (*hi_i).min(*li),
                    head_m: hi.head_m,
                });
            }
            let nodes = lo.power_w.iter().chain(hi.power_w.iter());
            for &p in nodes {
                let (q_lo, q_hi) = if fixed_speed {
                    (lo.flow[0], hi.flow[0])
                } else {
                    (lo.at(p).0, hi.at(p).0)
                };
                if q_hi > q_lo * (1.0 + 1e-9) + 1e-15 {
                    return Err(TableError::FlowRisesWithHead {
                        row: *hi_i,
                        lower_row: *li,
                        power_w: p,
                        head_m: hi.head_m,
                        lower_head_m: lo.head_m,
                        flow_m3_per_s: q_hi,
                        lower_flow_m3_per_s: q_lo,
                    });
                }
            }
        }
        let rows: Vec<Row> = built.into_iter().map(|(_, r)| r).collect();
        let highest_m = rows[rows.len() - 1].head_m;
        if !(stall_head_m.is_finite() && stall_head_m >= highest_m) {
            return Err(TableError::StallBelowTable {
                stall_head_m,
                highest_m,
            });
        }
        Ok(DisplacementTable {
            rows,
            rated_power_w,
            stall_head_m,
            fixed_speed,
        })
    }

    /// True for a fixed-speed unit (one power per head).
    pub fn fixed_speed(&self) -> bool {
        self.fixed_speed
    }

    /// Rated (maximum) input power of one unit, W.
    pub fn rated_power_w(&self) -> f64 {
        self.rated_power_w
    }

    /// Head at which delivery ends, m.
    pub fn stall_head_m(&self) -> f64 {
        self.stall_head_m
    }

    /// Lowest and highest measured heads, m.
    pub fn head_range_m(&self) -> (f64, f64) {
        (self.rows[0].head_m, self.rows[self.rows.len() - 1].head_m)
    }

    /// Every measured head with its nodes (power W, flow m³/s), start node first, rows by
    /// rising head.
    pub fn rows(&self) -> impl Iterator<Item = (f64, Vec<(f64, f64)>)> + '_ {
        self.rows.iter().map(|r| {
            (
                r.head_m,
                r.power_w
                    .iter()
                    .copied()
                    .zip(r.flow.iter().copied())
                    .collect(),
            )
        })
    }

    /// Every node power of every row, W (for sampling between kinks).
    pub fn node_powers_w(&self) -> impl Iterator<Item = f64> + '_ {
        self.rows.iter().flat_map(|r| r.power_w.iter().copied())
    }

    /// Least and greatest power any row draws, W.
    pub fn power_range_w(&self) -> (f64, f64) {
        let lo = self
            .rows
            .iter()
            .map(|r| r.start_w)
            .fold(f64::INFINITY, f64::min);
        let hi = self.rows.iter().map(Row::top_w).fold(0.0, f64::max);
        (lo, hi)
    }

    /// Greatest flow of one unit anywhere in the table, m³/s.
    pub fn max_flow_m3_per_s(&self) -> f64 {
        self.rows
            .iter()
            .flat_map(|r| r.flow.iter().copied())
            .fold(0.0, f64::max)
    }

    /// The rows bracketing `head_m` and the fraction between them, or the edge case.
    fn locate(&self, head_m: f64) -> Locate {
        let n = self.rows.len();
        let (lo, hi) = (self.rows[0].head_m, self.rows[n - 1].head_m);
        if head_m.is_nan() || head_m >= self.stall_head_m && self.stall_head_m > hi {
            return Locate::Stalled;
        }
        if head_m < lo {
            return Locate::Below;
        }
        if head_m > hi {
            if head_m >= self.stall_head_m {
                return Locate::Stalled;
            }
            return Locate::Above((self.stall_head_m - head_m) / (self.stall_head_m - hi));
        }
        let mut k = 0;
        while k + 2 < n && self.rows[k + 1].head_m <= head_m {
            k += 1;
        }
        let (a, b) = (&self.rows[k], &self.rows[k + 1]);
        Locate::Between(k, (head_m - a.head_m) / (b.head_m - a.head_m))
    }

    /// Start power of one unit at `head_m`, W (linear in head between rows; the nearest row
    /// outside them; infinite at or beyond the stall head).
    pub fn start_power_w(&self, head_m: f64) -> f64 {
        let last = self.rows.len() - 1;
        match self.locate(head_m) {
            Locate::Stalled => f64::INFINITY,
            Locate::Below => self.rows[0].start_w,
            Locate::Above(_) => self.rows[last].start_w,
            Locate::Between(k, t) => {
                let (a, b) = (&self.rows[k], &self.rows[k + 1]);
                a.start_w + t * (b.start_w - a.start_w)
            }
        }
    }
}

/// Where a head falls in the table.
enum Locate {
    /// At or beyond the stall head.
    Stalled,
    /// Below the lowest measured head.
    Below,
    /// Between the highest measured head and the stall head; the factor (1 at the highest
    /// measured head, 0 at stall) scales the flow.
    Above(f64),
    /// Between rows k and k+1, at fraction t.
    Between(usize, f64),
}

impl PumpModel for DisplacementTable {
    /// One unit at head `head_m` with `power_w` available (ignored for a fixed-speed unit,
    /// which draws its row's power). Interpolation as in the module notes.
    fn duty(&self, head_m: f64, power_w: f64) -> UnitDuty {
        let last = self.rows.len() - 1;
        let p = if self.fixed_speed {
            f64::INFINITY
        } else {
            power_w
        };
        let none = UnitDuty::default();
        if !self.fixed_speed && (p.is_nan() || p < self.start_power_w(head_m)) {
            return none;
        }
        let (q, drawn, outside) = match self.locate(head_m) {
            Locate::Stalled => return none,
            Locate::Below => {
                let (q, d) = self.rows[0].at(p);
                (q, d, true)
            }
            Locate::Above(f) => {
                let (q, d) = self.rows[last].at(p);
                (q * f, d, true)
            }
            Locate::Between(k, t) => {
                let (qa, da) = self.rows[k].at(p);
                let (qb, db) = self.rows[k + 1].at(p);
                (qa + t * (qb - qa), da + t * (db - da), false)
            }
        };
        if q <= 0.0 {
            return UnitDuty {
                outside_table: outside,
                ..none
            };
        }
        UnitDuty {
            flow_m3_per_s: q,
            power_w: drawn,
            runs: true,
            outside_table: outside,
        }
    }
}

/// Operating point of `n` equal units sharing `power_w` (W, split equally) against a system
/// curve H(Q) (m, total flow Q in m³/s).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DisplacementPoint {
    /// Total flow of the n units, m³/s.
    pub flow_m3_per_s: f64,
    /// System head at that flow, m.
    pub head_m: f64,
    /// Total input power drawn, W.
    pub power_w: f64,
    /// The head lies outside the measured heads.
    pub outside_table: bool,
}

/// Why there is no operating point.
#[derive(Debug, Clone, Copy, PartialEq, Error)]
pub enum NoDelivery {
    #[error(
        "the system head at zero flow, {head_m} m, is at or beyond the stall head or needs more than the available power to start"
    )]
    DoesNotStart { head_m: f64 },
    #[error("the number of units is 0")]
    NoUnits,
}

/// The total flow Q at which `n` units, each given `power_w / n` (W), deliver against the
/// system: Q = n·F(H(Q), P/n), with F the table's flow ([`PumpModel::duty`]).
///
/// Method: F never rises with head and H never falls with flow, so g(Q) = n·F(H(Q)) − Q falls
/// from g(0) = n·F(H(0)) ≥ 0; the root is bracketed in [0, n·F_max] (g(n·F_max) ≤ 0 since no
/// point of the table exceeds F_max) and found by bisection to 1e-12 relative, which always
/// converges (any continuous g with a sign change; Burden & Faires, *Numerical Analysis*, §2.1,
/// from memory). Reports why not when the unit does not start at H(0).
pub fn operating_point(
    table: &DisplacementTable,
    n: u32,
    power_w: f64,
    system: impl Fn(f64) -> f64,
) -> Result<DisplacementPoint, NoDelivery> {
    if n == 0 {
        return Err(NoDelivery::NoUnits);
    }
    let nf = n as f64;
    let per_unit = power_w / nf;
    let h0 = system(0.0);
    let d0 = table.duty(h0, per_unit);
    if !d0.runs {
        return Err(NoDelivery::DoesNotStart { head_m: h0 });
    }
    let g = |q: f64| nf * table.duty(system(q), per_unit).flow_m3_per_s - q;
    let (mut lo, mut hi) = (0.0, nf * table.max_flow_m3_per_s());
    if g(hi) > 0.0 {
        hi = nf * d0.flow_m3_per_s;
    }
    for _ in 0..200 {
        if hi - lo <= 1e-12 * hi.max(1e-12) {
            break;
        }
        let mid = 0.5 * (lo + hi);
        if g(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let q = 0.5 * (lo + hi);
    let h = system(q);
    let d = table.duty(h, per_unit);
    Ok(DisplacementPoint {
        flow_m3_per_s: q,
        head_m: h,
        power_w: nf * d.power_w,
        outside_table: d.outside_table,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::water;
    use approx::assert_relative_eq;

    fn lpm(q: f64) -> f64 {
        water::m3_per_s_from_l_per_min(q)
    }

    /// Invented table: flow proportional to power at each head (30 W start), less at more head.
    fn table() -> Vec<TableRow> {
        vec![
            TableRow {
                head_m: 10.0,
                start_power_w: 20.0,
                points: vec![
                    TablePoint {
                        power_w: 50.0,
                        flow_m3_per_s: lpm(6.0),
                    },
                    TablePoint {
                        power_w: 100.0,
                        flow_m3_per_s: lpm(12.0),
                    },
                    TablePoint {
                        power_w: 200.0,
                        flow_m3_per_s: lpm(20.0),
                    },
                ],
            },
            TableRow {
                head_m: 30.0,
                start_power_w: 40.0,
                points: vec![
                    TablePoint {
                        power_w: 60.0,
                        flow_m3_per_s: lpm(2.0),
                    },
                    TablePoint {
                        power_w: 120.0,
                        flow_m3_per_s: lpm(6.0),
                    },
                    TablePoint {
                        power_w: 200.0,
                        flow_m3_per_s: lpm(10.0),
                    },
                ],
            },
        ]
    }

    #[test]
    fn trade_units_four_and_a_half_litres_a_minute() {
        // 4.5 L/min × 60 min/h = 270 L/h = 0.27 m³/h (analytic).
        let q = water::m3_per_s_from_l_per_min(4.5);
        assert_relative_eq!(water::l_per_h_from_m3_per_s(q), 270.0, max_relative = 1e-12);
        assert_relative_eq!(water::m3_per_h_from_m3_per_s(q), 0.27, max_relative = 1e-12);
    }

    #[test]
    fn one_point_eight_bar_is_about_eighteen_metres() {
        // 1.8 bar of vessel pressure adds about 18.4 m of head (common practice; 10.2 m per bar
        // of fresh water).
        let rho = water::water_density_kg_per_m3(20.0);
        let h = water::head_m_from_pa(water::pa_from_bar(1.8), rho);
        assert!((h - 18.4).abs() < 0.05, "{h}");
    }

    #[test]
    fn measured_nodes_are_reproduced_and_row_order_does_not_matter() {
        let t = DisplacementTable::new(&table(), 200.0, 45.0, false).unwrap();
        let mut rev = table();
        rev.reverse();
        for r in &mut rev {
            r.points.reverse();
        }
        let u = DisplacementTable::new(&rev, 200.0, 45.0, false).unwrap();
        assert_eq!(t, u);
        // an interpolant reproduces its nodes (analytic)
        let d = t.duty(30.0, 120.0);
        assert_relative_eq!(d.flow_m3_per_s, lpm(6.0), max_relative = 1e-12);
        assert_relative_eq!(d.power_w, 120.0);
        assert!(d.runs && !d.outside_table);
        // halfway in head and at a shared node power: the mean of the rows (analytic, linear)
        let d = t.duty(20.0, 200.0);
        assert_relative_eq!(d.flow_m3_per_s, lpm(15.0), max_relative = 1e-12);
        // below the start power at this head (30 W interpolated): does not run
        assert!(!t.duty(20.0, 29.0).runs);
        // above stall: nothing; between the top row and stall: linear fade, outside the table
        assert!(!t.duty(45.0, 200.0).runs);
        let d = t.duty(37.5, 200.0);
        assert_relative_eq!(d.flow_m3_per_s, lpm(5.0), max_relative = 1e-12);
        assert!(d.outside_table);
        // below the lowest head: the lowest row, flagged
        let d = t.duty(5.0, 100.0);
        assert_relative_eq!(d.flow_m3_per_s, lpm(12.0), max_relative = 1e-12);
        assert!(d.outside_table);
        // above the highest measured power: no more than the last point
        let d = t.duty(10.0, 500.0);
        assert_relative_eq!(d.power_w, 200.0);
        assert_relative_eq!(d.flow_m3_per_s, lpm(20.0), max_relative = 1e-12);
    }

    #[test]
    fn flow_proportional_to_power_where_the_table_says_so() {
        // At 10 m the measured points 50 W → 6 L/min and 100 W → 12 L/min lie on q = 0.12 P
        // (L/min per W); between them the flow must stay on that line (analytic).
        let t = DisplacementTable::new(&table(), 200.0, 45.0, false).unwrap();
        for p in [55.0, 62.5, 77.0, 99.0] {
            assert_relative_eq!(
                t.duty(10.0, p).flow_m3_per_s,
                lpm(0.12 * p),
                max_relative = 1e-12
            );
        }
    }

    #[test]
    fn bad_tables_are_refused_with_the_row() {
        let mut t = table();
        t[1].points[2].flow_m3_per_s = lpm(1.0);
        assert!(matches!(
            DisplacementTable::new(&t, 200.0, 45.0, false),
            Err(TableError::FlowFallsWithPower {
                row: 1,
                point: 2,
                ..
            })
        ));
        let mut t = table();
        t[1].points[2].flow_m3_per_s = lpm(25.0);
        assert!(matches!(
            DisplacementTable::new(&t, 200.0, 45.0, false),
            Err(TableError::FlowRisesWithHead {
                row: 1,
                lower_row: 0,
                ..
            })
        ));
        let mut t = table();
        t.pop();
        assert!(matches!(
            DisplacementTable::new(&t, 200.0, 45.0, false),
            Err(TableError::TooFewHeads { count: 1 })
        ));
        assert!(matches!(
            DisplacementTable::new(&table(), 200.0, 25.0, false),
            Err(TableError::StallBelowTable { .. })
        ));
        assert!(matches!(
            DisplacementTable::new(&table(), 150.0, 45.0, false),
            Err(TableError::AboveRated { .. })
        ));
        let mut t = table();
        t[0].start_power_w = 60.0;
        assert!(matches!(
            DisplacementTable::new(&t, 200.0, 45.0, false),
            Err(TableError::StartNotBelowPoints { row: 0, .. })
        ));
        let mut t = table();
        t[1].head_m = 10.0;
        assert!(matches!(
            DisplacementTable::new(&t, 200.0, 45.0, false),
            Err(TableError::DuplicateHead { .. })
        ));
    }

    #[test]
    fn ideal_displacement_pump_meets_a_rising_system_curve() {
        // Ideal pump: flow = displacement × stroke rate, independent of head up to stall
        // (analytic). 0.5 L per stroke at 0.2 strokes/s = 0.1 L/s at any head below 60 m.
        let q = 0.5e-3 * 0.2;
        let rows: Vec<TableRow> = [5.0, 30.0, 55.0]
            .iter()
            .map(|h| TableRow {
                head_m: *h,
                start_power_w: 10.0,
                points: vec![
                    TablePoint {
                        power_w: 50.0,
                        flow_m3_per_s: q,
                    },
                    TablePoint {
                        power_w: 100.0,
                        flow_m3_per_s: q,
                    },
                ],
            })
            .collect();
        let t = DisplacementTable::new(&rows, 100.0, 60.0, false).unwrap();
        // system: 20 m + 1e6 s²/m⁵ Q² (invented); two units share 160 W → 80 W each.
        let op = operating_point(&t, 2, 160.0, |q| 20.0 + 1e6 * q * q).unwrap();
        assert_relative_eq!(op.flow_m3_per_s, 2.0 * q, max_relative = 1e-9);
        assert_relative_eq!(op.head_m, 20.0 + 1e6 * 4.0 * q * q, max_relative = 1e-9);
        assert_relative_eq!(op.power_w, 160.0, max_relative = 1e-12);
        // a lift beyond the stall head: no delivery, and the reason
        assert!(matches!(
            operating_point(&t, 1, 100.0, |_| 61.0),
            Err(NoDelivery::DoesNotStart { .. })
        ));
    }

    #[test]
    fn operating_point_on_a_sloped_table_balances_both_sides() {
        // At the root the pump's flow at the system head equals the flow (definition).
        let t = DisplacementTable::new(&table(), 200.0, 45.0, false).unwrap();
        let sys = |q: f64| 12.0 + 2.0e7 * q * q;
        let op = operating_point(&t, 1, 150.0, sys).unwrap();
        let d = t.duty(sys(op.flow_m3_per_s), 150.0);
        assert_relative_eq!(d.flow_m3_per_s, op.flow_m3_per_s, max_relative = 1e-9);
        assert!(op.flow_m3_per_s > 0.0 && op.flow_m3_per_s < lpm(20.0));
    }

    #[test]
    fn fixed_speed_rows() {
        let rows = vec![
            TableRow {
                head_m: 20.0,
                start_power_w: 0.0,
                points: vec![TablePoint {
                    power_w: 400.0,
                    flow_m3_per_s: 2e-4,
                }],
            },
            TableRow {
                head_m: 60.0,
                start_power_w: 0.0,
                points: vec![TablePoint {
                    power_w: 600.0,
                    flow_m3_per_s: 1.8e-4,
                }],
            },
        ];
        let t = DisplacementTable::new(&rows, 650.0, 80.0, true).unwrap();
        let d = t.duty(40.0, 0.0);
        assert_relative_eq!(d.flow_m3_per_s, 1.9e-4, max_relative = 1e-12);
        assert_relative_eq!(d.power_w, 500.0, max_relative = 1e-12);
    }
}
