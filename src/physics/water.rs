//! Properties of liquid water and unit conversions for pressure, head, length and flow.
//!
//! This module owns the density and viscosity of fresh water as functions of temperature, the
//! standard acceleration of gravity, and the conversions between pressure and head and between
//! the flow units used on site (L/min, L/h, m³/h, m³/day) and SI (m³/s). Everything is a pure
//! function of `f64` values; nothing allocates.

/// Standard acceleration of gravity, m/s².
///
/// Source: CGPM 1901 (3rd General Conference on Weights and Measures), the conventional value
/// g_n = 9.80665 m/s² (exact by definition).
pub const G_M_PER_S2: f64 = 9.80665;

/// Length of one inch in metres (exact by the 1959 international yard and pound agreement).
pub const M_PER_INCH: f64 = 0.0254;

/// Lowest temperature accepted by the water property correlations, °C.
pub const WATER_T_MIN_C: f64 = 0.0;
/// Highest temperature accepted by the density correlation, °C.
pub const WATER_DENSITY_T_MAX_C: f64 = 40.0;
/// Highest temperature accepted by the viscosity correlation, °C.
pub const WATER_VISCOSITY_T_MAX_C: f64 = 100.0;

/// Density of air-free fresh water at 101 325 Pa as a function of temperature, kg/m³.
///
/// Formula (Thiesen form): ρ = a5 · [1 − (t + a1)² (t + a2) / (a3 (t + a4))], t in °C, with
/// a1 = −3.983035 °C, a2 = 301.797 °C, a3 = 522 528.9 °C², a4 = 69.34881 °C,
/// a5 = 999.974950 kg/m³.
/// Source: Tanaka, Girard, Davis, Peuto & Bignell (2001), "Recommended table for the density of
/// water between 0 °C and 40 °C based on recent experimental reports", Metrologia 38, 301–309.
/// Validity: 0–40 °C (stated uncertainty about 1 ppm). Temperatures outside are clamped to
/// 0–40 °C (ρ(40 °C) is about 1 % above the true value at 60 °C); NaN gives NaN.
pub fn water_density_kg_per_m3(temp_c: f64) -> f64 {
    const A1: f64 = -3.983035;
    const A2: f64 = 301.797;
    const A3: f64 = 522_528.9;
    const A4: f64 = 69.34881;
    const A5: f64 = 999.974950;
    let t = temp_c.clamp(WATER_T_MIN_C, WATER_DENSITY_T_MAX_C);
    A5 * (1.0 - (t + A1) * (t + A1) * (t + A2) / (A3 * (t + A4)))
}

/// Dynamic viscosity of liquid water as a function of temperature, Pa·s.
///
/// Formula (Vogel type): μ = A · 10^(B / (T − C)), T in kelvin, A = 2.414 × 10⁻⁵ Pa·s,
/// B = 247.8 K, C = 140 K.
/// Source: the Vogel-type fit widely quoted for water (e.g. Al-Shemmeri, "Engineering Fluid
/// Mechanics", 2012; from memory), matching handbook tables to about 1 % at 0–100 °C.
/// Validity: 0–100 °C at atmospheric pressure. Temperatures outside are clamped to 0–100 °C;
/// NaN gives NaN.
pub fn water_dynamic_viscosity_pa_s(temp_c: f64) -> f64 {
    const A_PA_S: f64 = 2.414e-5;
    const B_K: f64 = 247.8;
    const C_K: f64 = 140.0;
    let t_k = temp_c.clamp(WATER_T_MIN_C, WATER_VISCOSITY_T_MAX_C) + 273.15;
    A_PA_S * 10f64.powf(B_K / (t_k - C_K))
}

/// Kinematic viscosity of liquid water as a function of temperature, m²/s.
///
/// Formula: ν = μ(t) / ρ(t), with μ from [`water_dynamic_viscosity_pa_s`] and ρ from
/// [`water_density_kg_per_m3`].
/// Source: definition of kinematic viscosity (e.g. White, "Fluid Mechanics", §1.7).
/// Validity: 0–40 °C (the density range); outside, both inputs are clamped as documented.
pub fn water_kinematic_viscosity_m2_per_s(temp_c: f64) -> f64 {
    water_dynamic_viscosity_pa_s(temp_c) / water_density_kg_per_m3(temp_c)
}

/// Head of a water column equivalent to a gauge pressure, m.
///
/// Formula: h = p / (ρ g), p in Pa, ρ in kg/m³, g = [`G_M_PER_S2`].
/// Source: hydrostatics (e.g. White, "Fluid Mechanics", eq. 2.14).
/// Validity: incompressible liquid; ρ must be positive (ρ ≤ 0 gives ±inf or NaN).
pub fn head_m_from_pa(p_pa: f64, rho_kg_per_m3: f64) -> f64 {
    p_pa / (rho_kg_per_m3 * G_M_PER_S2)
}

/// Pressure of a water column of given height, Pa.
///
/// Formula: p = ρ g h, h in m, ρ in kg/m³, g = [`G_M_PER_S2`].
/// Source: hydrostatics (e.g. White, "Fluid Mechanics", eq. 2.14).
/// Validity: incompressible liquid, any sign of h.
pub fn pa_from_head_m(head_m: f64, rho_kg_per_m3: f64) -> f64 {
    rho_kg_per_m3 * G_M_PER_S2 * head_m
}

/// Pressure in Pa from bar.
///
/// Formula: p_Pa = 10⁵ · p_bar. Source: SI Brochure (BIPM, 9th ed., 2019), Table 8.
/// Validity: any value.
pub fn pa_from_bar(p_bar: f64) -> f64 {
    p_bar * 1.0e5
}

/// Pressure in Pa from kPa.
///
/// Formula: p_Pa = 10³ · p_kPa. Source: SI prefixes (BIPM SI Brochure, 9th ed.).
/// Validity: any value.
pub fn pa_from_kpa(p_kpa: f64) -> f64 {
    p_kpa * 1.0e3
}

/// Pressure in bar from Pa.
///
/// Formula: p_bar = p_Pa / 10⁵. Source: SI Brochure (BIPM, 9th ed., 2019), Table 8.
/// Validity: any value.
pub fn bar_from_pa(p_pa: f64) -> f64 {
    p_pa / 1.0e5
}

/// Length in m from inches.
///
/// Formula: x_m = 0.0254 · x_in. Source: international yard and pound agreement (1959).
/// Validity: any value.
pub fn m_from_inch(x_inch: f64) -> f64 {
    x_inch * M_PER_INCH
}

/// Length in m from mm.
///
/// Formula: x_m = x_mm / 1000. Source: SI prefixes. Validity: any value.
pub fn m_from_mm(x_mm: f64) -> f64 {
    x_mm / 1000.0
}

/// Flow in m³/s from L/s.
///
/// Formula: Q = q / 1000. Source: 1 L = 10⁻³ m³ (CGPM 1964). Validity: any value.
pub fn m3_per_s_from_l_per_s(q_l_per_s: f64) -> f64 {
    q_l_per_s / 1000.0
}

/// Flow in m³/s from L/min.
///
/// Formula: Q = q / (1000 · 60). Source: 1 L = 10⁻³ m³ (CGPM 1964). Validity: any value.
pub fn m3_per_s_from_l_per_min(q_l_per_min: f64) -> f64 {
    q_l_per_min / 60_000.0
}

/// Flow in m³/s from L/h.
///
/// Formula: Q = q / (1000 · 3600). Source: 1 L = 10⁻³ m³ (CGPM 1964). Validity: any value.
pub fn m3_per_s_from_l_per_h(q_l_per_h: f64) -> f64 {
    q_l_per_h / 3_600_000.0
}

/// Flow in m³/s from m³/h.
///
/// Formula: Q = q / 3600. Source: 1 h = 3600 s. Validity: any value.
pub fn m3_per_s_from_m3_per_h(q_m3_per_h: f64) -> f64 {
    q_m3_per_h / 3600.0
}

/// Flow in m³/s from m³/day.
///
/// Formula: Q = q / 86 400. Source: 1 day = 86 400 s. Validity: any value.
pub fn m3_per_s_from_m3_per_day(q_m3_per_day: f64) -> f64 {
    q_m3_per_day / 86_400.0
}

/// Flow in L/s from m³/s.
///
/// Formula: q = 1000 · Q. Source: 1 L = 10⁻³ m³. Validity: any value.
pub fn l_per_s_from_m3_per_s(q_m3_per_s: f64) -> f64 {
    q_m3_per_s * 1000.0
}

/// Flow in L/min from m³/s.
///
/// Formula: q = 60 000 · Q. Source: 1 L = 10⁻³ m³, 1 min = 60 s. Validity: any value.
pub fn l_per_min_from_m3_per_s(q_m3_per_s: f64) -> f64 {
    q_m3_per_s * 60_000.0
}

/// Flow in L/h from m³/s.
///
/// Formula: q = 3 600 000 · Q. Source: 1 L = 10⁻³ m³, 1 h = 3600 s. Validity: any value.
pub fn l_per_h_from_m3_per_s(q_m3_per_s: f64) -> f64 {
    q_m3_per_s * 3_600_000.0
}

/// Flow in m³/h from m³/s.
///
/// Formula: q = 3600 · Q. Source: 1 h = 3600 s. Validity: any value.
pub fn m3_per_h_from_m3_per_s(q_m3_per_s: f64) -> f64 {
    q_m3_per_s * 3600.0
}

/// Flow in m³/day from m³/s.
///
/// Formula: q = 86 400 · Q. Source: 1 day = 86 400 s. Validity: any value.
pub fn m3_per_day_from_m3_per_s(q_m3_per_s: f64) -> f64 {
    q_m3_per_s * 86_400.0
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::{assert_abs_diff_eq, assert_relative_eq};

    #[test]
    fn density_at_maximum_density_temperature() {
        // Published values at 4 °C: 999.975 kg/m³ (Tanaka et al. 2001, Metrologia 38, Table 1,
        // air-free SMOW; the maximum lies at 3.98 °C) and 999.972 kg/m³ (CRC Handbook, older
        // scale); both from memory. The brief's check value is 999.97; we accept either.
        assert_abs_diff_eq!(water_density_kg_per_m3(4.0), 999.9735, epsilon = 0.0025);
    }

    #[test]
    fn density_against_published_table() {
        // Tanaka et al. (2001) Table 1 values as reproduced in the preMetabolizer R package
        // documentation (calc_water_density): 0 °C 999.8428, 10 °C 999.7027, 20 °C 998.2067,
        // 30 °C 995.6488 kg/m³. CRC Handbook gives 998.21 at 20 °C (from memory).
        assert_abs_diff_eq!(water_density_kg_per_m3(0.0), 999.8428, epsilon = 0.001);
        assert_abs_diff_eq!(water_density_kg_per_m3(10.0), 999.7027, epsilon = 0.001);
        assert_abs_diff_eq!(water_density_kg_per_m3(20.0), 998.2067, epsilon = 0.001);
        assert_abs_diff_eq!(water_density_kg_per_m3(30.0), 995.6488, epsilon = 0.001);
    }

    #[test]
    fn density_clamps_outside_range_without_nan() {
        // Documented behaviour: clamped to 0–40 °C.
        assert_eq!(water_density_kg_per_m3(-5.0), water_density_kg_per_m3(0.0));
        assert_eq!(water_density_kg_per_m3(90.0), water_density_kg_per_m3(40.0));
    }

    #[test]
    fn dynamic_viscosity_against_handbook_table() {
        // CRC Handbook of Chemistry and Physics, "Viscosity of water" table (from memory):
        // 10 °C 1.306, 20 °C 1.002, 40 °C 0.653 mPa·s. Popiel & Wojtkowiak (1998) also give
        // 1002.0 µPa·s at 20 °C. The correlation claims about 1 %.
        assert_relative_eq!(
            water_dynamic_viscosity_pa_s(20.0),
            1.002e-3,
            max_relative = 0.005
        );
        assert_relative_eq!(
            water_dynamic_viscosity_pa_s(10.0),
            1.306e-3,
            max_relative = 0.01
        );
        assert_relative_eq!(
            water_dynamic_viscosity_pa_s(40.0),
            0.653e-3,
            max_relative = 0.01
        );
    }

    #[test]
    fn kinematic_viscosity_at_20c() {
        // White, "Fluid Mechanics", Table A.1 (from memory): ν = 1.005e-6 m²/s at 20 °C.
        assert_relative_eq!(
            water_kinematic_viscosity_m2_per_s(20.0),
            1.005e-6,
            max_relative = 0.005
        );
    }

    #[test]
    fn flow_conversions_analytic() {
        // 4.5 L/min × 60 min/h = 270 L/h (analytic).
        let q = m3_per_s_from_l_per_min(4.5);
        assert_relative_eq!(l_per_h_from_m3_per_s(q), 270.0, max_relative = 1e-12);
        assert_relative_eq!(m3_per_s_from_l_per_h(270.0), q, max_relative = 1e-12);
        // 1 m³/h = 24 m³/day = 1000/3600 L/s (analytic).
        let q = m3_per_s_from_m3_per_h(1.0);
        assert_relative_eq!(m3_per_day_from_m3_per_s(q), 24.0, max_relative = 1e-12);
        assert_relative_eq!(
            l_per_s_from_m3_per_s(q),
            1000.0 / 3600.0,
            max_relative = 1e-12
        );
        assert_relative_eq!(m3_per_h_from_m3_per_s(q), 1.0, max_relative = 1e-12);
        assert_relative_eq!(
            m3_per_s_from_m3_per_day(86_400.0),
            1.0,
            max_relative = 1e-12
        );
        assert_relative_eq!(l_per_min_from_m3_per_s(1.0), 60_000.0, max_relative = 1e-12);
        assert_relative_eq!(m3_per_s_from_l_per_s(1000.0), 1.0, max_relative = 1e-12);
    }

    #[test]
    fn bar_to_head() {
        // Common practice: 1 bar ≈ 10.2 m of water, so 1.8 bar ≈ 18.4 m.
        let h = head_m_from_pa(pa_from_bar(1.8), water_density_kg_per_m3(20.0));
        assert_abs_diff_eq!(h, 18.4, epsilon = 0.05);
        // Round trip (analytic).
        let rho = 1000.0;
        assert_relative_eq!(head_m_from_pa(pa_from_head_m(37.5, rho), rho), 37.5);
        assert_relative_eq!(pa_from_kpa(250.0), 2.5e5);
        assert_relative_eq!(bar_from_pa(2.5e5), 2.5);
    }

    #[test]
    fn inch_to_metre() {
        // 6 in × 25.4 mm/in = 152.4 mm (analytic, 1 in = 25.4 mm exactly).
        assert_relative_eq!(m_from_inch(6.0), 0.1524, max_relative = 1e-12);
        assert_relative_eq!(m_from_mm(152.4), 0.1524, max_relative = 1e-12);
    }
}
