//! Friction and minor losses in full pipes carrying water.
//!
//! This module owns mean velocity and Reynolds number, the Darcy–Weisbach friction factor
//! (laminar, Colebrook–White solved by Newton iteration, Swamee–Jain explicit), the rule that
//! joins them across the laminar–turbulent transition, Darcy–Weisbach and Hazen–Williams head
//! loss, minor (fitting) losses, and the table of pipe materials with their roughness and
//! Hazen–Williams C. All functions are pure and allocation-free: the simulation may call
//! [`pipe_friction_head_m`] about 10⁵ times per simulated year.

use std::f64::consts::{LN_10, PI};

use thiserror::Error;

use super::water::G_M_PER_S2;

/// Reynolds number below which flow is taken as laminar (convention, common practice).
pub const RE_LAMINAR_MAX: f64 = 2000.0;
/// Reynolds number above which flow is taken as fully turbulent (convention, common practice).
pub const RE_TURBULENT_MIN: f64 = 4000.0;

/// Relative change of 1/√f below which the Colebrook iteration counts as converged.
const COLEBROOK_TOLERANCE: f64 = 1.0e-12;
/// Iteration cap for the Colebrook solver; Newton from the Swamee–Jain start needs 2–4.
const COLEBROOK_MAX_ITERATIONS: u32 = 30;

/// Errors from the pipe friction models.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum PipeError {
    /// An input was negative, zero where it must be positive, or not a finite number.
    #[error("pipe input `{name}` = {value} is invalid: {expected}; correct it in the scheme file")]
    InvalidInput {
        /// Name of the offending argument.
        name: &'static str,
        /// The value that was passed.
        value: f64,
        /// What the value must be.
        expected: &'static str,
    },
    /// The Colebrook–White iteration did not settle.
    #[error(
        "Colebrook friction factor did not converge for Re = {re}, relative roughness = {rel_roughness} \
         after {iterations} iterations; check the pipe diameter, roughness and flow for typing errors"
    )]
    NotConverged {
        /// Reynolds number.
        re: f64,
        /// Relative roughness ε/D.
        rel_roughness: f64,
        /// Iterations done.
        iterations: u32,
    },
}

fn check_positive(name: &'static str, value: f64) -> Result<f64, PipeError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(PipeError::InvalidInput {
            name,
            value,
            expected: "a finite number greater than zero",
        })
    }
}

fn check_non_negative(name: &'static str, value: f64) -> Result<f64, PipeError> {
    if value.is_finite() && value >= 0.0 {
        Ok(value)
    } else {
        Err(PipeError::InvalidInput {
            name,
            value,
            expected: "a finite number, zero or greater",
        })
    }
}

/// Mean velocity of flow in a full circular pipe, m/s.
///
/// Formula: v = Q / (π d² / 4), Q in m³/s, d (internal diameter) in m.
/// Source: continuity (e.g. White, "Fluid Mechanics", eq. 3.7).
/// Validity: full pipe; d > 0 (d = 0 gives ±inf or NaN). The sign of v follows the sign of Q.
pub fn velocity_m_per_s(q_m3_per_s: f64, d_m: f64) -> f64 {
    q_m3_per_s / (0.25 * PI * d_m * d_m)
}

/// Reynolds number of pipe flow, dimensionless.
///
/// Formula: Re = v d / ν, v in m/s, d in m, ν in m²/s.
/// Source: White, "Fluid Mechanics", §6.1.
/// Validity: ν > 0. The sign of Re follows the sign of v; friction functions use |Re|.
pub fn reynolds(v_m_per_s: f64, d_m: f64, nu_m2_per_s: f64) -> f64 {
    v_m_per_s * d_m / nu_m2_per_s
}

/// Darcy friction factor for laminar flow, dimensionless.
///
/// Formula: f = 64 / Re (Hagen–Poiseuille).
/// Source: White, "Fluid Mechanics", eq. 6.49.
/// Validity: Re < 2000. For Re ≤ 0 (no flow) or NaN it returns 0, so that f·v² stays 0
/// rather than inf·0; head loss is zero without flow anyway.
pub fn friction_factor_laminar(re: f64) -> f64 {
    if re > 0.0 { 64.0 / re } else { 0.0 }
}

/// Darcy friction factor from the explicit Swamee–Jain formula, dimensionless.
///
/// Formula: f = 0.25 / [log₁₀(ε/(3.7 D) + 5.74 / Re^0.9)]².
/// Source: Swamee & Jain (1976), "Explicit equations for pipe-flow problems",
/// J. Hydraulics Div. ASCE 102(HY5), 657–664.
/// Validity: 5000 ≤ Re ≤ 10⁸ and 10⁻⁶ ≤ ε/D ≤ 10⁻²; the authors state about 1 % from
/// Colebrook there. Re must be > 0 and ε/D ≥ 0 (otherwise the result is NaN or inf; the
/// checked entry points are [`friction_factor_colebrook`] and [`friction_factor`]).
pub fn friction_factor_swamee_jain(re: f64, rel_roughness: f64) -> f64 {
    let x = (rel_roughness / 3.7 + 5.74 / re.powf(0.9)).log10();
    0.25 / (x * x)
}

/// Darcy friction factor from the Colebrook–White equation, solved to convergence.
///
/// Formula: 1/√f = −2 log₁₀(ε/(3.7 D) + 2.51 / (Re √f)), solved for x = 1/√f by Newton's
/// method on g(x) = x + 2 log₁₀(a + b x), a = ε/(3.7 D), b = 2.51/Re, starting from the
/// Swamee–Jain value; stops when |Δx| < 10⁻¹² x (typically 2–4 iterations).
/// Source: Colebrook (1939), "Turbulent flow in pipes…", J. Inst. Civ. Eng. 11, 133–156.
/// Validity: turbulent flow, Re ≳ 4000, any ε/D ≥ 0 (0 = hydraulically smooth).
/// Errors: [`PipeError::InvalidInput`] for Re ≤ 0, ε/D < 0 or non-finite input;
/// [`PipeError::NotConverged`] if the iteration fails to settle within 30 steps.
pub fn friction_factor_colebrook(re: f64, rel_roughness: f64) -> Result<f64, PipeError> {
    colebrook_with_iterations(re, rel_roughness).map(|(f, _)| f)
}

/// Colebrook solver returning the friction factor and the Newton iterations used.
fn colebrook_with_iterations(re: f64, rel_roughness: f64) -> Result<(f64, u32), PipeError> {
    let re = check_positive("reynolds number", re)?;
    let rel_roughness = check_non_negative("relative roughness", rel_roughness)?;
    let a = rel_roughness / 3.7;
    let b = 2.51 / re;
    let mut x = 1.0 / friction_factor_swamee_jain(re, rel_roughness).sqrt();
    if !x.is_finite() || x <= 0.0 {
        // Outside the Swamee–Jain range the start may be poor; a smooth-pipe guess works.
        x = 8.0;
    }
    for iteration in 1..=COLEBROOK_MAX_ITERATIONS {
        let arg = a + b * x;
        let g = x + 2.0 * arg.log10();
        let dg = 1.0 + 2.0 * b / (arg * LN_10);
        let mut next = x - g / dg;
        if !next.is_finite() || next <= 0.0 {
            // Fall back to one fixed-point step, which is always positive for a + b x > 0.
            next = -2.0 * arg.log10();
        }
        let step = (next - x).abs();
        x = next;
        if step <= COLEBROOK_TOLERANCE * x && x.is_finite() && x > 0.0 {
            return Ok((1.0 / (x * x), iteration));
        }
        if iteration == COLEBROOK_MAX_ITERATIONS {
            break;
        }
    }
    Err(PipeError::NotConverged {
        re,
        rel_roughness,
        iterations: COLEBROOK_MAX_ITERATIONS,
    })
}

/// Darcy friction factor for any Reynolds number, dimensionless.
///
/// Rule (a convention, common practice; the transition band itself is physically
/// indeterminate):
/// * |Re| = 0 (no flow): returns 0. Callers get zero head loss; see
///   [`pipe_friction_head_m`], which short-cuts Q = 0 before computing Re.
/// * |Re| < 2000: laminar, f = 64/Re.
/// * |Re| > 4000: Colebrook–White ([`friction_factor_colebrook`]).
/// * 2000 ≤ |Re| ≤ 4000: linear interpolation in Re between 64/2000 = 0.032 at Re = 2000 and
///   the Colebrook value at Re = 4000.
///
/// The sign of Re is ignored (reverse flow has the same friction).
/// Source: laminar White eq. 6.49; turbulent Colebrook (1939); transition rule: convention.
/// Errors: [`PipeError::InvalidInput`] for non-finite Re or negative/non-finite ε/D;
/// [`PipeError::NotConverged`] from the Colebrook solver.
pub fn friction_factor(re: f64, rel_roughness: f64) -> Result<f64, PipeError> {
    if !re.is_finite() {
        return Err(PipeError::InvalidInput {
            name: "reynolds number",
            value: re,
            expected: "a finite number",
        });
    }
    let rel_roughness = check_non_negative("relative roughness", rel_roughness)?;
    let re = re.abs();
    if re == 0.0 {
        Ok(0.0)
    } else if re < RE_LAMINAR_MAX {
        Ok(friction_factor_laminar(re))
    } else if re > RE_TURBULENT_MIN {
        friction_factor_colebrook(re, rel_roughness)
    } else {
        let f_lam = friction_factor_laminar(RE_LAMINAR_MAX);
        let f_turb = friction_factor_colebrook(RE_TURBULENT_MIN, rel_roughness)?;
        let w = (re - RE_LAMINAR_MAX) / (RE_TURBULENT_MIN - RE_LAMINAR_MAX);
        Ok(f_lam + w * (f_turb - f_lam))
    }
}

/// Darcy–Weisbach friction head loss, m.
///
/// Formula: h_f = f (L / d) v² / (2 g), f dimensionless, L and d in m, v in m/s,
/// g = [`G_M_PER_S2`].
/// Source: White, "Fluid Mechanics", eq. 6.10.
/// Validity: full pipe, d > 0. Returns a magnitude (v enters squared).
pub fn darcy_head_loss_m(f: f64, length_m: f64, d_m: f64, v_m_per_s: f64) -> f64 {
    f * (length_m / d_m) * v_m_per_s * v_m_per_s / (2.0 * G_M_PER_S2)
}

/// Hazen–Williams friction head loss (SI form), m.
///
/// Formula: h_f = 10.67 L |Q|^1.852 / (C^1.852 d^4.87), L and d in m, Q in m³/s, C
/// dimensionless.
/// Source: Hazen & Williams (1905/1920) "Hydraulic Tables"; SI constant as in Shammas & Wang,
/// "Water Engineering: Hydraulics, Distribution and Treatment" (2016), Eq. 5.37.
/// Validity: water at ordinary temperatures (about 5–25 °C), turbulent flow, d ≳ 50 mm,
/// v ≲ 3 m/s. Returns a magnitude.
pub fn hazen_williams_head_loss_m(q_m3_per_s: f64, length_m: f64, d_m: f64, c: f64) -> f64 {
    10.67 * length_m * q_m3_per_s.abs().powf(1.852) / (c.powf(1.852) * d_m.powf(4.87))
}

/// Minor (fitting) head loss, m.
///
/// Formula: h_m = ΣK · v² / (2 g), ΣK dimensionless, v in m/s, g = [`G_M_PER_S2`].
/// Source: White, "Fluid Mechanics", eq. 6.78.
/// Validity: turbulent flow through fittings; ΣK ≥ 0. Returns a magnitude.
pub fn minor_loss_m(k_sum: f64, v_m_per_s: f64) -> f64 {
    k_sum * v_m_per_s * v_m_per_s / (2.0 * G_M_PER_S2)
}

/// Pipe materials with tabulated roughness and Hazen–Williams C (new pipe).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Material {
    /// Unplasticised PVC.
    Pvc,
    /// High-density polyethylene.
    Hdpe,
    /// Galvanised steel.
    GalvanisedSteel,
    /// Ductile iron, taken as new unlined cast iron (cement-mortar lining is smoother).
    DuctileIron,
}

/// Scheme-file names of the materials, in the order of [`Material::ALL`].
pub const MATERIAL_NAMES: &[&str] = &["pvc", "hdpe", "galvanised_steel", "ductile_iron"];

impl Material {
    /// All materials, in the order of [`MATERIAL_NAMES`].
    pub const ALL: [Material; 4] = [
        Material::Pvc,
        Material::Hdpe,
        Material::GalvanisedSteel,
        Material::DuctileIron,
    ];

    /// Parses a scheme-file name (one of [`MATERIAL_NAMES`], ASCII case-insensitive, surrounding
    /// spaces ignored). Returns `None` for anything else.
    pub fn from_name(name: &str) -> Option<Material> {
        let name = name.trim();
        MATERIAL_NAMES
            .iter()
            .position(|n| n.eq_ignore_ascii_case(name))
            .map(|i| Material::ALL[i])
    }

    /// The scheme-file name of this material.
    pub fn name(self) -> &'static str {
        MATERIAL_NAMES[self as usize]
    }

    /// Equivalent sand roughness ε of new pipe, m.
    ///
    /// Values: PVC 0.0015 mm, HDPE 0.007 mm, galvanised steel 0.15 mm, ductile iron 0.26 mm;
    /// see [`Material::source`] for each. Validity: clean new pipe; aged pipe is rougher.
    pub fn roughness_m(self) -> f64 {
        match self {
            Material::Pvc => 0.0015e-3,
            Material::Hdpe => 0.007e-3,
            Material::GalvanisedSteel => 0.15e-3,
            Material::DuctileIron => 0.26e-3,
        }
    }

    /// Hazen–Williams C of new pipe, dimensionless.
    ///
    /// Values: PVC 150, HDPE 150, galvanised steel 120, ductile iron 130; see
    /// [`Material::source`]. Validity: clean new pipe; C falls with age.
    pub fn hazen_williams_c(self) -> f64 {
        match self {
            Material::Pvc => 150.0,
            Material::Hdpe => 150.0,
            Material::GalvanisedSteel => 120.0,
            Material::DuctileIron => 130.0,
        }
    }

    /// Where the roughness and C values come from.
    pub fn source(self) -> &'static str {
        match self {
            Material::Pvc => {
                "roughness 0.0015 mm: White, Fluid Mechanics, Table 6.1, 'drawn tubing' \
                 (smooth plastic), from memory; C = 150: usual handbook value for PVC, \
                 common practice, from memory"
            }
            Material::Hdpe => {
                "roughness 0.007 mm: polyethylene pipe manufacturers' literature, \
                 common practice, from memory; C = 150: usual handbook value for PE, \
                 common practice, from memory"
            }
            Material::GalvanisedSteel => {
                "roughness 0.15 mm: White, Fluid Mechanics, Table 6.1, 'galvanized iron' \
                 (after Moody 1944), from memory; C = 120: usual handbook value for \
                 galvanised iron, common practice, from memory"
            }
            Material::DuctileIron => {
                "roughness 0.26 mm: White, Fluid Mechanics, Table 6.1, 'cast iron' \
                 (after Moody 1944), new unlined, from memory; C = 130: usual handbook \
                 value for new cast iron, common practice, from memory"
            }
        }
    }
}

/// How friction loss in a pipe is computed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FrictionMethod {
    /// Darcy–Weisbach with the friction factor from [`friction_factor`].
    DarcyWeisbach {
        /// Equivalent sand roughness ε, m.
        roughness_m: f64,
    },
    /// Hazen–Williams with the given C.
    HazenWilliams {
        /// Hazen–Williams coefficient C, dimensionless.
        c: f64,
    },
}

/// Friction head loss along a full pipe, m (a magnitude).
///
/// Formula: Darcy–Weisbach h_f = f (L/d) v²/(2g) with v = |Q|/(π d²/4), Re = v d/ν and f from
/// [`friction_factor`]; or Hazen–Williams h_f = 10.67 L |Q|^1.852 / (C^1.852 d^4.87).
/// Q in m³/s, L and d in m, ν in m²/s (used by Darcy–Weisbach only).
/// Source: see [`darcy_head_loss_m`] and [`hazen_williams_head_loss_m`].
/// Validity: full pipe of water. Q = 0 returns 0 without further work; negative Q is treated
/// as |Q| (the loss opposes the flow; callers apply the sign).
/// Errors: [`PipeError::InvalidInput`] for non-finite Q, L < 0, d ≤ 0, ν ≤ 0 (Darcy), ε < 0,
/// C ≤ 0; [`PipeError::NotConverged`] from the Colebrook solver.
pub fn pipe_friction_head_m(
    q_m3_per_s: f64,
    length_m: f64,
    d_m: f64,
    method: FrictionMethod,
    nu_m2_per_s: f64,
) -> Result<f64, PipeError> {
    if !q_m3_per_s.is_finite() {
        return Err(PipeError::InvalidInput {
            name: "flow",
            value: q_m3_per_s,
            expected: "a finite number",
        });
    }
    let length_m = check_non_negative("pipe length", length_m)?;
    let d_m = check_positive("pipe internal diameter", d_m)?;
    let q = q_m3_per_s.abs();
    match method {
        FrictionMethod::DarcyWeisbach { roughness_m } => {
            let roughness_m = check_non_negative("pipe roughness", roughness_m)?;
            let nu = check_positive("kinematic viscosity", nu_m2_per_s)?;
            if q == 0.0 {
                return Ok(0.0);
            }
            let v = velocity_m_per_s(q, d_m);
            let f = friction_factor(reynolds(v, d_m, nu), roughness_m / d_m)?;
            Ok(darcy_head_loss_m(f, length_m, d_m, v))
        }
        FrictionMethod::HazenWilliams { c } => {
            let c = check_positive("Hazen-Williams C", c)?;
            if q == 0.0 {
                return Ok(0.0);
            }
            Ok(hazen_williams_head_loss_m(q, length_m, d_m, c))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::water::water_kinematic_viscosity_m2_per_s;
    use approx::{assert_abs_diff_eq, assert_relative_eq};

    /// Residual of the Colebrook equation, 1/√f + 2 log₁₀(ε/3.7D + 2.51/(Re √f)).
    fn colebrook_residual(f: f64, re: f64, rr: f64) -> f64 {
        1.0 / f.sqrt() + 2.0 * (rr / 3.7 + 2.51 / (re * f.sqrt())).log10()
    }

    #[test]
    fn laminar_is_64_over_re() {
        // Hagen–Poiseuille, White eq. 6.49 (analytic).
        assert_relative_eq!(friction_factor_laminar(1000.0), 0.064);
        assert_relative_eq!(friction_factor(1500.0, 1e-3).unwrap(), 64.0 / 1500.0);
        assert_eq!(friction_factor_laminar(0.0), 0.0);
    }

    #[test]
    fn colebrook_moody_value() {
        // Moody (1944) chart / White, Fluid Mechanics Fig. 6.13 (read from chart, from memory):
        // Re = 1e5, ε/D = 1e-4 gives f ≈ 0.0185.
        let f = friction_factor_colebrook(1e5, 1e-4).unwrap();
        assert_abs_diff_eq!(f, 0.0185, epsilon = 0.0002);
    }

    #[test]
    fn colebrook_converges_in_a_handful_of_iterations() {
        // Performance requirement of the brief: Newton from the Swamee–Jain start.
        for &re in &[4e3, 1e4, 1e5, 1e6, 1e7, 1e8] {
            for &rr in &[0.0, 1e-6, 1e-4, 1e-3, 1e-2, 5e-2] {
                let (_, n) = colebrook_with_iterations(re, rr).unwrap();
                assert!(n <= 5, "Re={re} rr={rr}: {n} iterations");
            }
        }
    }

    #[test]
    fn colebrook_satisfies_its_equation() {
        // Analytic check: substituting f back into the implicit equation leaves no residual.
        for &re in &[4e3, 1e4, 1e5, 1e6, 1e7, 1e8] {
            for &rr in &[0.0, 1e-6, 1e-4, 1e-3, 1e-2, 5e-2] {
                let f = friction_factor_colebrook(re, rr).unwrap();
                assert!(
                    colebrook_residual(f, re, rr).abs() < 1e-9,
                    "Re={re} rr={rr}"
                );
            }
        }
    }

    #[test]
    fn swamee_jain_close_to_colebrook_in_published_range() {
        // Swamee & Jain (1976) claim about 1 % from Colebrook over 5e3 ≤ Re ≤ 1e8,
        // 1e-6 ≤ ε/D ≤ 1e-2. On a log grid of that range we find the difference stays under
        // 2 % for Re ≥ 1e4, but reaches 2.8 % in the corner Re = 5e3, ε/D = 1e-2; so the test
        // asks for 2 % above Re = 1e4 and 3 % over the whole published range.
        let mut worst_all: f64 = 0.0;
        let mut worst_above_1e4: f64 = 0.0;
        for i in 0..=20 {
            let re = 5e3 * (1e8f64 / 5e3).powf(i as f64 / 20.0);
            for j in 0..=16 {
                let rr = 1e-6 * (1e4f64).powf(j as f64 / 16.0);
                let fc = friction_factor_colebrook(re, rr).unwrap();
                let fs = friction_factor_swamee_jain(re, rr);
                let rel = ((fs - fc) / fc).abs();
                worst_all = worst_all.max(rel);
                if re >= 1e4 {
                    worst_above_1e4 = worst_above_1e4.max(rel);
                }
            }
        }
        assert!(worst_above_1e4 < 0.02, "Re >= 1e4: worst {worst_above_1e4}");
        assert!(worst_all < 0.03, "whole range: worst {worst_all}");
    }

    #[test]
    fn transition_is_linear_and_continuous() {
        // Convention stated in friction_factor: linear between 64/2000 and Colebrook(4000).
        let rr = 1e-4;
        let f_lo = friction_factor(2000.0, rr).unwrap();
        let f_hi = friction_factor(4000.0, rr).unwrap();
        assert_relative_eq!(f_lo, 0.032, max_relative = 1e-12);
        assert_relative_eq!(f_hi, friction_factor_colebrook(4000.0, rr).unwrap());
        let f_mid = friction_factor(3000.0, rr).unwrap();
        assert_relative_eq!(f_mid, 0.5 * (f_lo + f_hi), max_relative = 1e-12);
        // Just above 4000 continues smoothly.
        let f_above = friction_factor(4000.001, rr).unwrap();
        assert_relative_eq!(f_above, f_hi, max_relative = 1e-6);
    }

    #[test]
    fn no_flow_and_bad_input() {
        assert_eq!(friction_factor(0.0, 1e-4).unwrap(), 0.0);
        assert!(friction_factor(-5e4, 1e-4).unwrap() > 0.0);
        assert!(friction_factor(f64::NAN, 1e-4).is_err());
        assert!(friction_factor(1e5, -1e-4).is_err());
        assert!(friction_factor_colebrook(0.0, 1e-4).is_err());
        assert!(friction_factor_colebrook(-1.0, 1e-4).is_err());
        let pvc = FrictionMethod::DarcyWeisbach {
            roughness_m: Material::Pvc.roughness_m(),
        };
        assert_eq!(
            pipe_friction_head_m(0.0, 100.0, 0.05, pvc, 1e-6).unwrap(),
            0.0
        );
        assert!(pipe_friction_head_m(1e-3, 100.0, 0.0, pvc, 1e-6).is_err());
        assert!(pipe_friction_head_m(1e-3, 100.0, 0.05, pvc, 0.0).is_err());
        let hw = FrictionMethod::HazenWilliams { c: 0.0 };
        assert!(pipe_friction_head_m(1e-3, 100.0, 0.05, hw, 1e-6).is_err());
    }

    #[test]
    fn negative_flow_same_loss() {
        let m = FrictionMethod::DarcyWeisbach {
            roughness_m: 0.15e-3,
        };
        let a = pipe_friction_head_m(2e-3, 250.0, 0.05, m, 1e-6).unwrap();
        let b = pipe_friction_head_m(-2e-3, 250.0, 0.05, m, 1e-6).unwrap();
        assert_eq!(a, b);
        assert!(a > 0.0);
    }

    #[test]
    fn darcy_weisbach_handbook_example() {
        // "Surge Analysis and the Wave Plan Method", supplementary example problem 0.2
        // (kypipe.com/supplementary-material-0-2): ductile iron, L = 6 m, D = 0.3 m,
        // V = 2 m/s, ε = 0.12 mm, ν = 1e-6 m²/s → Re ≈ 6.0e5, f = 0.0169 (Swamee–Jain),
        // ΔH = 0.0689 m (their g = 9.81 m/s²).
        let re = reynolds(2.0, 0.3, 1e-6);
        let f = friction_factor_swamee_jain(re, 0.12e-3 / 0.3);
        assert_abs_diff_eq!(f, 0.0169, epsilon = 0.00015);
        let h = darcy_head_loss_m(f, 6.0, 0.3, 2.0);
        assert_relative_eq!(h, 0.0689, max_relative = 0.01);
        // Colebrook gives the same to Swamee–Jain's stated accuracy.
        let fc = friction_factor_colebrook(re, 0.12e-3 / 0.3).unwrap();
        assert_relative_eq!(fc, 0.0169, max_relative = 0.015);
    }

    #[test]
    fn hazen_williams_handbook_example() {
        // Shammas & Wang, "Water Engineering: Hydraulics, Distribution and Treatment" (2016),
        // Example 5.36: D = 0.3048 m (12 in), Q = 0.0438 m³/s (1 MGD), C = 100 → head loss
        // 2.07 m per 1000 m from the pipe-flow chart and tables (their Methods 1–3).
        let h = hazen_williams_head_loss_m(0.0438, 1000.0, 0.3048, 100.0);
        assert_relative_eq!(h, 2.07, max_relative = 0.03);
        let h2 = pipe_friction_head_m(
            -0.0438,
            1000.0,
            0.3048,
            FrictionMethod::HazenWilliams { c: 100.0 },
            1e-6,
        )
        .unwrap();
        assert_relative_eq!(h, h2);
    }

    #[test]
    fn hazen_williams_agrees_with_darcy_for_smooth_pipe() {
        // Common practice: for new smooth plastic pipe (C = 150) carrying water at ordinary
        // temperature and ~1 m/s, Hazen–Williams and Darcy–Weisbach agree within about 15 %.
        let nu = water_kinematic_viscosity_m2_per_s(15.0);
        let d = 0.1;
        let q = velocity_to_q(1.0, d);
        let dw = pipe_friction_head_m(
            q,
            1000.0,
            d,
            FrictionMethod::DarcyWeisbach {
                roughness_m: Material::Pvc.roughness_m(),
            },
            nu,
        )
        .unwrap();
        let hw = pipe_friction_head_m(
            q,
            1000.0,
            d,
            FrictionMethod::HazenWilliams {
                c: Material::Pvc.hazen_williams_c(),
            },
            nu,
        )
        .unwrap();
        assert_relative_eq!(hw, dw, max_relative = 0.15);
    }

    fn velocity_to_q(v: f64, d: f64) -> f64 {
        v * 0.25 * PI * d * d
    }

    #[test]
    fn minor_loss_identity() {
        // Analytic: K = 1 at v = √(2g) gives exactly 1 m of head; loss scales with K and v².
        let v = (2.0 * G_M_PER_S2).sqrt();
        assert_relative_eq!(minor_loss_m(1.0, v), 1.0, max_relative = 1e-12);
        assert_relative_eq!(minor_loss_m(2.5, 2.0 * v), 10.0, max_relative = 1e-12);
    }

    #[test]
    fn velocity_and_reynolds_analytic() {
        // Q = π/4 m³/s through d = 1 m gives v = 1 m/s (analytic).
        assert_relative_eq!(velocity_m_per_s(0.25 * PI, 1.0), 1.0, max_relative = 1e-12);
        assert_relative_eq!(reynolds(1.0, 0.1, 1e-6), 1e5, max_relative = 1e-12);
    }

    #[test]
    fn materials_round_trip() {
        for (i, name) in MATERIAL_NAMES.iter().enumerate() {
            let m = Material::from_name(name).unwrap();
            assert_eq!(m, Material::ALL[i]);
            assert_eq!(m.name(), *name);
            assert!(m.roughness_m() > 0.0 && m.roughness_m() < 1e-3);
            assert!(m.hazen_williams_c() >= 100.0 && m.hazen_williams_c() <= 150.0);
            assert!(!m.source().is_empty());
        }
        assert_eq!(Material::from_name(" PVC "), Some(Material::Pvc));
        assert_eq!(Material::from_name("copper"), None);
    }
}
