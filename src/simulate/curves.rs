//! Chart data of the pump–system match: the rated-speed curve of N units in parallel, the
//! system curve of the borehole and rising main with and without drawdown left by earlier
//! pumping, and their intersections. Pure reads of the model's prepared tables; the hourly
//! loop does not use this module.

use serde::Serialize;

use super::Model;
use crate::physics::pumps;

/// Pump curve, system curves and operating points of one curve-pump type, for a chart.
/// Flows are total flows of all running units, m³/s; heads in m.
#[derive(Debug, Clone, Serialize)]
pub struct PumpSystemCurves {
    pub pump: String,
    pub units: u32,
    /// (total flow, head) of `units` in parallel at the curve's speed, sampled on the curve's
    /// interpolation (Fritsch–Carlson) from its lowest to its highest tabulated flow.
    pub pump_curve: Vec<(f64, f64)>,
    /// The file's measured points, scaled to `units` in parallel (flow × units, same head).
    pub measured: Vec<(f64, f64)>,
    /// Static lift from the rest water level to the tank inlet, m.
    pub static_lift_m: f64,
    /// Aquifer drawdown left by earlier pumping used for the second system curve, m.
    pub past_drawdown_m: f64,
    /// System head with no drawdown left by earlier pumping.
    pub system_no_past: Vec<(f64, f64)>,
    /// System head with `past_drawdown_m` added.
    pub system_with_past: Vec<(f64, f64)>,
    /// Rated-speed operating points (flow, head) on the two system curves.
    pub operating_no_past: Option<(f64, f64)>,
    pub operating_with_past: Option<(f64, f64)>,
    /// Pumping water level (m below ground) at the two operating points:
    /// static + s_past + (a₀ + B)Q + CQ².
    pub pumping_level_no_past_m: Option<f64>,
    pub pumping_level_with_past_m: Option<f64>,
    /// Lowest level the water may fall to: intake depth − submergence margin, m below ground.
    pub lowest_allowed_level_m: f64,
}

impl Model {
    /// The pump–system chart data of pump type `i` with `units` running at the curve's speed.
    ///
    /// The system head is H(Q) = lift₀ + s_past + (a₀ + B)Q + CQ² + h_f(Q) + ΣK v²/2g (see
    /// `hydraulics`); the tank inlet is at the top of the tank, so the tank level does not
    /// enter it. `deepest_level_m` (depth below ground of the deepest pumping water level of a
    /// year) sets s_past for the second curve: the s_past at which the rated-speed operating
    /// point's level, static + s_past + (a₀ + B)Q + CQ², equals it (bisection; the level rises
    /// with s_past, the fall of the flow taking back only part of each step). None for pumps without a curve
    /// or with no units. `samples` (≥ 2) points per line.
    pub fn pump_system_curves(
        &self,
        i: usize,
        units: u32,
        deepest_level_m: Option<f64>,
        samples: usize,
    ) -> Option<PumpSystemCurves> {
        let t = self.tables.get(i)?.as_ref()?;
        let curve = t.curve()?;
        if units == 0 {
            return None;
        }
        let p = &self.scheme.pumps[i];
        let b = &self.scheme.boreholes[p.source_index];
        let n = units as f64;
        let samples = samples.max(2);
        let q_lo = curve.flow_min_m3_per_s() * n;
        let q_hi = curve.flow_max_m3_per_s() * n;
        let qs: Vec<f64> = (0..samples)
            .map(|k| q_lo + (q_hi - q_lo) * k as f64 / (samples - 1) as f64)
            .collect();
        let pump_curve = qs
            .iter()
            .filter_map(|q| curve.head_parallel(*q, units, 1.0).map(|h| (*q, h)))
            .collect();
        let measured = curve
            .points()
            .map(|c| (c.flow_m3_per_s * n, c.head_m))
            .collect();
        let op = |s_past: f64| -> Option<pumps::OperatingPoint> {
            pumps::operating_point(curve, 1.0, units, |q| t.system.head_m(q, s_past)).ok()
        };
        let level_at = |s_past: f64| -> Option<f64> {
            op(s_past)
                .map(|o| b.static_depth_m + s_past + t.system.well_drawdown_m(o.flow_m3_per_s))
        };
        let past = match deepest_level_m {
            Some(d) => {
                let (mut lo, mut hi) = (0.0_f64, t.max_offset_m.max(0.0));
                if level_at(lo).is_some_and(|l| l >= d) {
                    0.0
                } else {
                    for _ in 0..60 {
                        let mid = 0.5 * (lo + hi);
                        match level_at(mid) {
                            Some(l) if l < d => lo = mid,
                            _ => hi = mid,
                        }
                    }
                    lo
                }
            }
            None => 0.0,
        };
        let sys = |s_past: f64| -> Vec<(f64, f64)> {
            (0..samples)
                .map(|k| {
                    let q = q_hi * k as f64 / (samples - 1) as f64;
                    (q, t.system.head_m(q, s_past))
                })
                .collect()
        };
        let pt = |s_past: f64| op(s_past).map(|o| (o.flow_m3_per_s, o.head_m));
        Some(PumpSystemCurves {
            pump: p.name.clone(),
            units,
            pump_curve,
            measured,
            static_lift_m: t.system.lift0_m,
            past_drawdown_m: past,
            system_no_past: sys(0.0),
            system_with_past: sys(past),
            operating_no_past: pt(0.0),
            operating_with_past: pt(past),
            pumping_level_no_past_m: level_at(0.0),
            pumping_level_with_past_m: level_at(past),
            lowest_allowed_level_m: b.intake_depth_m - b.submergence_margin_m,
        })
    }
}

/// Chart data of a positive-displacement pump: its measured table as flow–power lines, one
/// per measured head, and the band of the year it worked in. Per unit; flows in m³/s.
#[derive(Debug, Clone, Serialize)]
pub struct DisplacementChart {
    pub pump: String,
    /// (head m, [(input power W, flow m³/s)]) per measured head by rising head, the start
    /// point (zero flow) first.
    pub rows: Vec<(f64, Vec<(f64, f64)>)>,
    pub rated_power_w: f64,
    pub stall_head_m: f64,
    pub measured_at_setting_depth_m: Option<f64>,
    pub fixed_speed: bool,
    /// Static lift from the rest water level to the tank inlet (with any vessel pressure), m.
    pub static_lift_m: f64,
    /// The year's operating band, when the pump ran.
    pub band: Option<OperatingBand>,
}

/// Where a displacement pump worked in a year: the range of head and of per-unit input power
/// over the hours it pumped, and the band's outline in (power W, flow m³/s) per unit: the
/// table's flow along the lowest head from the least to the most power, then back along the
/// highest head.
#[derive(Debug, Clone, Serialize)]
pub struct OperatingBand {
    pub head_range_m: (f64, f64),
    pub power_range_w: (f64, f64),
    pub outline: Vec<(f64, f64)>,
    pub hours: usize,
}

impl Model {
    /// The table chart of displacement pump type `i`, with the operating band read from an
    /// hourly record of a year in which it was the only motor pump type running (None for
    /// other kinds). The per-unit power of an hour is the drawn share of the rated power of
    /// the running units (the record's speed column) × the rated power.
    pub fn displacement_chart(
        &self,
        i: usize,
        hourly: Option<&super::Hourly>,
    ) -> Option<DisplacementChart> {
        use crate::physics::displacement::PumpModel;
        let t = self.tables.get(i)?.as_ref()?;
        let super::hydraulics::UnitModel::Displacement(table) = &t.unit else {
            return None;
        };
        let p = &self.scheme.pumps[i];
        let depth = match &p.kind {
            crate::scheme::PumpKind::Displacement {
                measured_at_setting_depth_m,
                ..
            } => *measured_at_setting_depth_m,
            _ => None,
        };
        let band = hourly.and_then(|h| {
            let (mut h_lo, mut h_hi) = (f64::INFINITY, f64::NEG_INFINITY);
            let (mut p_lo, mut p_hi) = (f64::INFINITY, f64::NEG_INFINITY);
            let mut hours = 0;
            for k in 0..h.pumped_m3.len() {
                if h.pumped_m3[k] <= 0.0 || h.pump_head_m[k] <= 0.0 {
                    continue;
                }
                let w = h.pump_speed_ratio[k] * table.rated_power_w();
                h_lo = h_lo.min(h.pump_head_m[k]);
                h_hi = h_hi.max(h.pump_head_m[k]);
                p_lo = p_lo.min(w);
                p_hi = p_hi.max(w);
                hours += 1;
            }
            if hours == 0 {
                return None;
            }
            const STEPS: usize = 24;
            let along = |head: f64, rev: bool| -> Vec<(f64, f64)> {
                (0..=STEPS)
                    .map(|j| {
                        let j = if rev { STEPS - j } else { j };
                        let w = p_lo + (p_hi - p_lo) * j as f64 / STEPS as f64;
                        (w, table.duty(head, w).flow_m3_per_s)
                    })
                    .collect()
            };
            let mut outline = along(h_lo, false);
            outline.extend(along(h_hi, true));
            outline.push(outline[0]);
            Some(OperatingBand {
                head_range_m: (h_lo, h_hi),
                power_range_w: (p_lo, p_hi),
                outline,
                hours,
            })
        });
        Some(DisplacementChart {
            pump: p.name.clone(),
            rows: table.rows().collect(),
            rated_power_w: table.rated_power_w(),
            stall_head_m: table.stall_head_m(),
            measured_at_setting_depth_m: depth,
            fixed_speed: table.fixed_speed(),
            static_lift_m: t.system.lift0_m,
            band,
        })
    }
}

#[cfg(test)]
mod tests {
    use approx::assert_relative_eq;
    use std::path::Path;

    use super::*;

    fn kessa() -> Model {
        let l = crate::scheme::load_file(
            &Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/kessa-ridge-solar.yaml"),
        )
        .unwrap();
        Model::new(&l.scheme).unwrap()
    }

    #[test]
    fn curves_pass_through_the_file_and_meet_at_the_operating_point() {
        let m = kessa();
        let c = m.pump_system_curves(0, 2, None, 41).unwrap();
        // Static lift from the file: inlet 1528 − ground 1480 + rest level 38 m = 86 m
        // (arithmetic on the sample's inputs).
        assert_relative_eq!(c.static_lift_m, 86.0, epsilon = 1e-9);
        assert_relative_eq!(c.system_no_past[0].1, 86.0, epsilon = 1e-9);
        // The interpolated curve of 2 units passes through the measured points at 2× flow
        // (an interpolant reproduces its nodes; parallel units share the head).
        let first = c.pump_curve.first().unwrap();
        let last = c.pump_curve.last().unwrap();
        assert_relative_eq!(first.0, 0.0, epsilon = 1e-12);
        assert_relative_eq!(first.1, 150.0, epsilon = 1e-6);
        assert_relative_eq!(last.0, 2.0 * 14.0 / 3600.0, epsilon = 1e-12);
        assert_relative_eq!(last.1, 60.0, epsilon = 1e-6);
        // At the operating point pump head equals system head.
        let (q, h) = c.operating_no_past.unwrap();
        let c2 = m.pump_system_curves(0, 2, None, 2).unwrap();
        assert!(c2.pump_curve.len() == 2);
        let t = m.tables[0].as_ref().unwrap();
        assert_relative_eq!(h, t.system.head_m(q, 0.0), max_relative = 1e-3);
    }

    #[test]
    fn past_drawdown_reproduces_the_deepest_level() {
        let m = kessa();
        let t = m.tables[0].as_ref().unwrap();
        let base = m.pump_system_curves(0, 1, None, 5).unwrap();
        let (q0, _) = base.operating_no_past.unwrap();
        let level0 = 38.0 + t.system.well_drawdown_m(q0);
        let want = level0 + 5.0;
        let c = m.pump_system_curves(0, 1, Some(want), 5).unwrap();
        // The flow falls as the lift grows, taking back part of the current-hour drawdown,
        // so more than 5 m of past drawdown is needed to lower the level by 5 m.
        assert!(c.past_drawdown_m >= 5.0 - 1e-6, "{}", c.past_drawdown_m);
        assert!(c.past_drawdown_m < 10.0, "{}", c.past_drawdown_m);
        let (q, _) = c.operating_with_past.unwrap();
        assert!(q < q0, "more lift, less flow");
        assert_relative_eq!(
            38.0 + c.past_drawdown_m + t.system.well_drawdown_m(q),
            want,
            epsilon = 1e-6
        );
        // The two system curves differ by the past drawdown at every flow.
        for (a, b) in c.system_no_past.iter().zip(&c.system_with_past) {
            assert_relative_eq!(b.1 - a.1, c.past_drawdown_m, epsilon = 1e-9);
        }
        // Shallower than the no-past level: no past drawdown.
        let c = m.pump_system_curves(0, 1, Some(level0 - 1.0), 5).unwrap();
        assert_eq!(c.past_drawdown_m, 0.0);
        assert!(m.pump_system_curves(0, 0, None, 5).is_none());
    }
}
