//! Pump drives other than the solar array: diesel/petrol generator fuel use and run windows,
//! grid supply windows, the human-powered hand pump and the hydraulic ram.
//!
//! Everything here is a pure function in SI units (flows m³/s, heads m, powers W, density
//! kg/m³), except fuel, which is in litres and hours because fuel is bought and logged that way.
//! Time windows are clock hours, half-open `[start, end)`, and may wrap past midnight.

use thiserror::Error;

/// Standard gravity, m/s² (CGPM 1901 conventional value), shared with the water module.
pub use super::water::G_M_PER_S2;

/// Typical no-load fuel coefficient a of the linear generator fuel curve, L per kWh of rated
/// power per hour (common practice for small diesel sets, about 0.08).
pub const TYPICAL_FUEL_A_L_PER_KWH: f64 = 0.08;

/// Typical incremental fuel coefficient b of the linear generator fuel curve, L per kWh of
/// output (common practice for small diesel sets, about 0.25).
pub const TYPICAL_FUEL_B_L_PER_KWH: f64 = 0.25;

/// Errors from the drive models; each message says what to change in the scheme file.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum DriveError {
    /// A quantity that must be strictly positive was zero, negative or not a number.
    #[error(
        "{what} must be greater than zero (got {value}); give a positive value in the scheme file"
    )]
    NotPositive {
        /// Which input, with its unit.
        what: &'static str,
        /// The value received.
        value: f64,
    },
    /// A quantity that must be zero or positive was negative or not a number.
    #[error(
        "{what} must be zero or more (got {value}); give a non-negative value in the scheme file"
    )]
    Negative {
        /// Which input, with its unit.
        what: &'static str,
        /// The value received.
        value: f64,
    },
    /// An efficiency outside (0, 1].
    #[error(
        "{what} must be a fraction above 0 and at most 1 (got {value}); write e.g. 0.6 for 60 %"
    )]
    EfficiencyOutOfRange {
        /// Which efficiency.
        what: &'static str,
        /// The value received.
        value: f64,
    },
    /// A hydraulic ram asked to deliver to a height not above its supply fall.
    #[error(
        "a hydraulic ram cannot deliver to {delivery_lift_m} m above the ram when its supply fall \
         is {supply_fall_m} m: the delivery lift must exceed the fall; for a lower target use a \
         gravity main instead, or site the ram lower so the fall is smaller than the lift"
    )]
    RamLiftNotAboveFall {
        /// Delivery lift H above the ram, m.
        delivery_lift_m: f64,
        /// Supply fall h from source to ram, m.
        supply_fall_m: f64,
    },
}

fn require_positive(what: &'static str, value: f64) -> Result<f64, DriveError> {
    if value > 0.0 && value.is_finite() {
        Ok(value)
    } else {
        Err(DriveError::NotPositive { what, value })
    }
}

fn require_non_negative(what: &'static str, value: f64) -> Result<f64, DriveError> {
    if value >= 0.0 && value.is_finite() {
        Ok(value)
    } else {
        Err(DriveError::Negative { what, value })
    }
}

fn require_efficiency(what: &'static str, value: f64) -> Result<f64, DriveError> {
    if value > 0.0 && value <= 1.0 {
        Ok(value)
    } else {
        Err(DriveError::EfficiencyOutOfRange { what, value })
    }
}

/// Whether clock hour `hour` (taken modulo 24) falls inside any of the windows.
///
/// Rule: a window `(start, end)` covers hours `start <= h < end` when start < end; when
/// start > end it wraps past midnight (`h >= start || h < end`, e.g. (22, 6)); start == end is
/// an empty window. `end` may be 24 (e.g. (0, 24) is the whole day).
/// Source: definition (no physical model).
/// Validity: hours 0..=24 in the windows; an empty slice means "never".
pub fn hour_in_windows(hour: u8, windows: &[(u8, u8)]) -> bool {
    let h = hour % 24;
    windows.iter().any(|&(start, end)| {
        use std::cmp::Ordering;
        match start.cmp(&end) {
            Ordering::Less => h >= start && h < end,
            Ordering::Greater => h >= start || h < end,
            Ordering::Equal => false,
        }
    })
}

/// Fuel use of a generator running at a given electrical output, L/h.
///
/// Formula: F = a·P_rated + b·P_out, with P in kW and a, b in L/kWh (linear fuel curve,
/// Skarstein & Uhlen 1989).
/// Source: Skarstein, Ø. & Uhlen, K., "Design considerations with respect to long-term diesel
/// saving in wind/diesel plants", Wind Engineering 13(2), 1989 (from memory). Typical a ≈ 0.08,
/// b ≈ 0.25 L/kWh for small diesel sets is common practice ([`TYPICAL_FUEL_A_L_PER_KWH`],
/// [`TYPICAL_FUEL_B_L_PER_KWH`]).
/// Validity: the set is running; output is clamped to 0..rated; negative rated power or
/// coefficients are treated as 0. Poor at very light load for old sets (real curve bends up).
pub fn generator_fuel_l_per_h(
    rated_w: f64,
    output_w: f64,
    a_l_per_kwh_rated: f64,
    b_l_per_kwh_output: f64,
) -> f64 {
    let rated_kw = rated_w.max(0.0) / 1000.0;
    let out_kw = output_w.clamp(0.0, rated_w.max(0.0)) / 1000.0;
    a_l_per_kwh_rated.max(0.0) * rated_kw + b_l_per_kwh_output.max(0.0) * out_kw
}

/// Electrical power the generator can supply in clock hour `hour_of_day`, W.
///
/// Formula: P = P_rated if the hour is inside an allowed run window (see [`hour_in_windows`]),
/// else 0.
/// Source: definition (operating schedule), no physical model.
/// Validity: negative rated power is treated as 0.
pub fn generator_available_power_w(
    rated_w: f64,
    hour_of_day: u8,
    allowed_windows: &[(u8, u8)],
) -> f64 {
    if hour_in_windows(hour_of_day, allowed_windows) {
        rated_w.max(0.0)
    } else {
        0.0
    }
}

/// Whether grid power is available in clock hour `hour_of_day`.
///
/// Rule: true when the hour is inside a supply window (see [`hour_in_windows`]).
/// Source: definition (supply schedule), no physical model.
/// Validity: an empty slice means the grid never supplies.
pub fn grid_available(hour_of_day: u8, supply_windows: &[(u8, u8)]) -> bool {
    hour_in_windows(hour_of_day, supply_windows)
}

/// Flow a person can lift with a hand pump, limited by sustained human power, m³/s.
///
/// Formula: Q = P·η / (ρ g H).
/// Source: hydraulic power ρgQH (definition); sustained human power for pumping of about
/// 60–75 W for a healthy adult is given by Fraenkel, P., "Water lifting devices", FAO
/// Irrigation and Drainage Paper 43, 1986 (from memory).
/// Validity: P ≥ 0 W, η in (0, 1] (overall, handle to water), H > 0 m (static lift plus pipe
/// and valve losses), ρ > 0 kg/m³ (1000 for water). Does not cap by pump size: see
/// [`hand_pump_flow_capped`].
pub fn hand_pump_flow_m3_per_s(
    human_power_w: f64,
    mechanical_efficiency: f64,
    head_m: f64,
    rho_kg_per_m3: f64,
) -> Result<f64, DriveError> {
    let p = require_non_negative("hand pump human power (W)", human_power_w)?;
    let eta = require_efficiency("hand pump mechanical efficiency", mechanical_efficiency)?;
    let head = require_positive("hand pump head (m)", head_m)?;
    let rho = require_positive("water density (kg/m³)", rho_kg_per_m3)?;
    Ok(p * eta / (rho * G_M_PER_S2 * head))
}

/// Hand-pump flow limited both by human power and by the pump's displacement, m³/s.
///
/// Formula: Q = min(P·η/(ρ g H), V_stroke · n_strokes), V in m³ delivered per stroke, n in
/// strokes per second.
/// Source: as [`hand_pump_flow_m3_per_s`]; displacement limit is the definition of a positive
/// displacement pump's delivery.
/// Validity: as [`hand_pump_flow_m3_per_s`]; stroke volume and rate ≥ 0 (use the delivered
/// volume per stroke, i.e. swept volume times volumetric efficiency).
pub fn hand_pump_flow_capped(
    human_power_w: f64,
    mechanical_efficiency: f64,
    head_m: f64,
    rho_kg_per_m3: f64,
    stroke_volume_m3: f64,
    strokes_per_s: f64,
) -> Result<f64, DriveError> {
    let energy_limited =
        hand_pump_flow_m3_per_s(human_power_w, mechanical_efficiency, head_m, rho_kg_per_m3)?;
    let v = require_non_negative("hand pump stroke volume (m³)", stroke_volume_m3)?;
    let n = require_non_negative("hand pump stroke rate (strokes/s)", strokes_per_s)?;
    Ok(energy_limited.min(v * n))
}

fn check_ram_heads(supply_fall_m: f64, delivery_lift_m: f64) -> Result<(f64, f64), DriveError> {
    let h = require_positive("ram supply fall (m)", supply_fall_m)?;
    let big_h = require_positive("ram delivery lift (m)", delivery_lift_m)?;
    if big_h <= h {
        return Err(DriveError::RamLiftNotAboveFall {
            delivery_lift_m: big_h,
            supply_fall_m: h,
        });
    }
    Ok((h, big_h))
}

/// Flow delivered by a hydraulic ram, m³/s.
///
/// Formula: q = η_D · Q · h / H, from the D'Aubuisson efficiency η_D = q H / (Q h), where Q is
/// the drive flow entering the drive pipe (delivered plus wasted), h the supply fall from
/// source to ram, H the delivery lift above the ram.
/// Source: D'Aubuisson efficiency as used by Fraenkel, "Water lifting devices", FAO Irrigation
/// and Drainage Paper 43, 1986, and Jeffery, Thomas, Smith, Glover & Fountain, "Hydraulic Ram
/// Pumps", ITDG Publishing, 1992 (from memory). η_D of 0.5–0.8 is common practice for a well
/// tuned ram (lower at high H/h).
/// Validity: Q ≥ 0, h > 0, H > h (otherwise [`DriveError::RamLiftNotAboveFall`]), η_D in (0, 1].
pub fn ram_delivery_flow_m3_per_s(
    drive_flow_m3_per_s: f64,
    supply_fall_m: f64,
    delivery_lift_m: f64,
    efficiency_daubuisson: f64,
) -> Result<f64, DriveError> {
    let q_drive = require_non_negative("ram drive flow (m³/s)", drive_flow_m3_per_s)?;
    let (h, big_h) = check_ram_heads(supply_fall_m, delivery_lift_m)?;
    let eta = require_efficiency("ram D'Aubuisson efficiency", efficiency_daubuisson)?;
    Ok(eta * q_drive * h / big_h)
}

/// Converts a ram's D'Aubuisson efficiency to its Rankine efficiency (dimensionless).
///
/// Formula: η_R = q(H − h)/((Q − q) h); with q/Q = η_D h/H this is
/// η_R = η_D (H − h)/(H − η_D h).
/// Source: definitions of the two efficiencies, e.g. Fraenkel 1986, FAO Irrigation and Drainage
/// Paper 43 (from memory); the closed form is algebra on those definitions.
/// Validity: h > 0, H > h, η_D in (0, 1]; both efficiencies equal 1 for a lossless ram.
pub fn rankine_from_daubuisson(
    efficiency_daubuisson: f64,
    supply_fall_m: f64,
    delivery_lift_m: f64,
) -> Result<f64, DriveError> {
    let (h, big_h) = check_ram_heads(supply_fall_m, delivery_lift_m)?;
    let eta_d = require_efficiency("ram D'Aubuisson efficiency", efficiency_daubuisson)?;
    Ok(eta_d * (big_h - h) / (big_h - eta_d * h))
}

/// Converts a ram's Rankine efficiency to its D'Aubuisson efficiency (dimensionless).
///
/// Formula: η_D = η_R H / (H − h + η_R h) (inverse of [`rankine_from_daubuisson`]).
/// Source: definitions of the two efficiencies, e.g. Fraenkel 1986, FAO Irrigation and Drainage
/// Paper 43 (from memory); the closed form is algebra on those definitions.
/// Validity: h > 0, H > h, η_R in (0, 1].
pub fn daubuisson_from_rankine(
    efficiency_rankine: f64,
    supply_fall_m: f64,
    delivery_lift_m: f64,
) -> Result<f64, DriveError> {
    let (h, big_h) = check_ram_heads(supply_fall_m, delivery_lift_m)?;
    let eta_r = require_efficiency("ram Rankine efficiency", efficiency_rankine)?;
    Ok(eta_r * big_h / (big_h - h + eta_r * h))
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn generator_fuel_worked_number() {
        // Hand value from the linear curve (Skarstein & Uhlen 1989 form) with the common-practice
        // coefficients: 5 kW set at 3 kW: 0.08·5 + 0.25·3 = 0.4 + 0.75 = 1.15 L/h.
        assert_relative_eq!(
            generator_fuel_l_per_h(
                5000.0,
                3000.0,
                TYPICAL_FUEL_A_L_PER_KWH,
                TYPICAL_FUEL_B_L_PER_KWH
            ),
            1.15,
            epsilon = 1e-12
        );
        // Idle: only the no-load term, 0.08·5 = 0.4 L/h. Output above rating is clamped:
        // 0.4 + 0.25·5 = 1.65 L/h.
        assert_relative_eq!(
            generator_fuel_l_per_h(5000.0, 0.0, 0.08, 0.25),
            0.4,
            epsilon = 1e-12
        );
        assert_relative_eq!(
            generator_fuel_l_per_h(5000.0, 9000.0, 0.08, 0.25),
            1.65,
            epsilon = 1e-12
        );
    }

    #[test]
    fn windows_plain_wrapping_and_empty() {
        // Definition checks.
        let day = [(6, 18)];
        assert!(hour_in_windows(6, &day));
        assert!(hour_in_windows(17, &day));
        assert!(!hour_in_windows(18, &day));
        assert!(!hour_in_windows(5, &day));
        let night = [(22, 6)];
        assert!(hour_in_windows(23, &night));
        assert!(hour_in_windows(0, &night));
        assert!(hour_in_windows(5, &night));
        assert!(!hour_in_windows(6, &night));
        assert!(!hour_in_windows(21, &night));
        assert!((0..24).all(|h| hour_in_windows(h, &[(0, 24)])));
        assert!((0..24).all(|h| !hour_in_windows(h, &[(7, 7)])));
        assert!(!hour_in_windows(3, &[]));
        // Hour 25 is 01:00.
        assert!(hour_in_windows(25, &night));
    }

    #[test]
    fn generator_and_grid_availability() {
        let w = [(7, 9), (17, 20)];
        assert_eq!(generator_available_power_w(5000.0, 8, &w), 5000.0);
        assert_eq!(generator_available_power_w(5000.0, 12, &w), 0.0);
        assert!(grid_available(19, &w));
        assert!(!grid_available(20, &w));
    }

    #[test]
    fn hand_pump_sixty_watts_twenty_metres() {
        // Analytic from ρgQH = ηP: 60 W · 0.5 / (1000 · 9.80665 · 20) = 1.5296e-4 m³/s
        // = 0.153 L/s.
        let q = hand_pump_flow_m3_per_s(60.0, 0.5, 20.0, 1000.0).unwrap();
        assert_relative_eq!(q * 1000.0, 0.153, epsilon = 5e-4);
        assert_relative_eq!(q, 30.0 / 196_133.0, max_relative = 1e-12);
    }

    #[test]
    fn hand_pump_capped_by_displacement() {
        // Shallow lift: energy limit 60·0.5/(1000·9.80665·2) = 1.53 L/s, but a 0.5 L stroke at
        // 0.8 strokes/s displaces only 0.4 L/s (definition of displacement).
        let q = hand_pump_flow_capped(60.0, 0.5, 2.0, 1000.0, 0.5e-3, 0.8).unwrap();
        assert_relative_eq!(q, 0.4e-3, epsilon = 1e-12);
        // Deep lift: the energy limit governs.
        let q_deep = hand_pump_flow_capped(60.0, 0.5, 20.0, 1000.0, 0.5e-3, 0.8).unwrap();
        assert_relative_eq!(q_deep, 30.0 / 196_133.0, max_relative = 1e-12);
    }

    #[test]
    fn hand_pump_bad_inputs_are_errors() {
        assert!(matches!(
            hand_pump_flow_m3_per_s(60.0, 0.5, 0.0, 1000.0),
            Err(DriveError::NotPositive { .. })
        ));
        assert!(matches!(
            hand_pump_flow_m3_per_s(60.0, 1.5, 10.0, 1000.0),
            Err(DriveError::EfficiencyOutOfRange { .. })
        ));
        assert!(matches!(
            hand_pump_flow_m3_per_s(-1.0, 0.5, 10.0, 1000.0),
            Err(DriveError::Negative { .. })
        ));
        assert!(hand_pump_flow_m3_per_s(f64::NAN, 0.5, 10.0, 1000.0).is_err());
    }

    #[test]
    fn ram_lossless_conserves_power() {
        // Analytic: at η = 1, q·H = Q·h (conservation of hydraulic power).
        let (q_drive, h, big_h) = (1.0e-3, 3.0, 27.0);
        let q = ram_delivery_flow_m3_per_s(q_drive, h, big_h, 1.0).unwrap();
        assert_relative_eq!(q * big_h, q_drive * h, max_relative = 1e-12);
    }

    #[test]
    fn ram_worked_example() {
        // Hand-computed illustration (invented site; the form q = η Q h / H is the one given by
        // Fraenkel 1986, FAO I&D Paper 43, from memory): 60 L/min drive flow, 2 m fall, 20 m lift,
        // η_D = 0.6: q = 0.6 · 60 · 2 / 20 = 3.6 L/min.
        let q = ram_delivery_flow_m3_per_s(60.0e-3 / 60.0, 2.0, 20.0, 0.6).unwrap();
        assert_relative_eq!(q * 60.0e3, 3.6, epsilon = 1e-9);
    }

    #[test]
    fn ram_refuses_lift_not_above_fall() {
        assert!(matches!(
            ram_delivery_flow_m3_per_s(1e-3, 5.0, 5.0, 0.6),
            Err(DriveError::RamLiftNotAboveFall { .. })
        ));
        assert!(matches!(
            rankine_from_daubuisson(0.6, 5.0, 3.0),
            Err(DriveError::RamLiftNotAboveFall { .. })
        ));
        assert!(ram_delivery_flow_m3_per_s(1e-3, 0.0, 5.0, 0.6).is_err());
    }

    #[test]
    fn rankine_daubuisson_conversion() {
        // Hand value: H = 20 m, h = 2 m, η_D = 0.6: η_R = 0.6·18/(20 − 1.2) = 10.8/18.8
        // = 0.574468.
        let eta_r = rankine_from_daubuisson(0.6, 2.0, 20.0).unwrap();
        assert_relative_eq!(eta_r, 10.8 / 18.8, epsilon = 1e-12);
        assert_relative_eq!(eta_r, 0.574_468, epsilon = 1e-6);
        // Cross-check against the Rankine definition with the delivered flow:
        // q/Q = 0.6·2/20 = 0.06, η_R = 0.06·18/(0.94·2) = 0.574468.
        assert_relative_eq!(0.06 * 18.0 / (0.94 * 2.0), eta_r, epsilon = 1e-12);
        // Round trip.
        let back = daubuisson_from_rankine(eta_r, 2.0, 20.0).unwrap();
        assert_relative_eq!(back, 0.6, epsilon = 1e-12);
        // Both definitions give 1 for a lossless ram.
        assert_relative_eq!(rankine_from_daubuisson(1.0, 2.0, 20.0).unwrap(), 1.0);
        assert_relative_eq!(daubuisson_from_rankine(1.0, 2.0, 20.0).unwrap(), 1.0);
    }
}
