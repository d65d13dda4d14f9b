//! Engineering economics for the least-cost search: discount factors, the present worth of
//! replacements and of salvage at the design horizon, and the levelised cost per m³. Money is
//! in one constant-price currency unit, rates are real discount rates as fractions per year
//! (0.08 = 8 %), times in years; cash flows are at year ends (end-of-period convention).

/// (1 + i)ⁿ − 1 without cancellation for small i.
#[inline]
fn growth_minus_one(i: f64, n: f64) -> f64 {
    (n * i.ln_1p()).exp_m1()
}

/// Capital recovery factor A/P = i (1+i)ⁿ / ((1+i)ⁿ − 1), the limit 1/n at i = 0.
///
/// Converts a present sum into n equal year-end payments. i as a fraction per year, n in years
/// (> 0). Source: standard compound-interest factor (Newnan, Eschenbach & Lavelle, Engineering
/// Economic Analysis, interest tables — from memory). Valid for i > −1, n > 0.
pub fn capital_recovery_factor(i: f64, n: f64) -> f64 {
    if i == 0.0 {
        return 1.0 / n;
    }
    let g = growth_minus_one(i, n);
    i * (1.0 + g) / g
}

/// Single-payment present worth factor P/F = (1 + i)⁻ⁿ.
///
/// Present worth of 1 paid n years from now. Source: standard compound-interest factor (Newnan,
/// Eschenbach & Lavelle, Engineering Economic Analysis — from memory). Valid for i > −1, any n.
pub fn present_worth_factor_single(i: f64, n: f64) -> f64 {
    (-n * i.ln_1p()).exp()
}

/// Uniform-series present worth factor P/A = ((1+i)ⁿ − 1) / (i (1+i)ⁿ), the limit n at i = 0.
///
/// Present worth of 1 paid at the end of each of n years; the reciprocal of
/// [`capital_recovery_factor`]. Source: standard compound-interest factor (Newnan, Eschenbach &
/// Lavelle, Engineering Economic Analysis — from memory). Valid for i > −1, n ≥ 0.
pub fn present_worth_factor_uniform(i: f64, n: f64) -> f64 {
    if i == 0.0 {
        return n;
    }
    let g = growth_minus_one(i, n);
    g / (i * (1.0 + g))
}

/// Number of replacements k·L strictly before the horizon T, i.e. the largest k with k L < T.
/// A tiny relative margin keeps an exact multiple (T = k L) from counting after rounding.
fn replacements_before(lifetime_years: f64, horizon_years: f64) -> u64 {
    if !(lifetime_years > 0.0 && lifetime_years.is_finite() && horizon_years > 0.0) {
        return 0;
    }
    let ratio = horizon_years / lifetime_years;
    let k = (ratio * (1.0 - 1e-12)).ceil() - 1.0;
    if k <= 0.0 { 0 } else { k as u64 }
}

/// Present worth of like-for-like replacements: PW = C Σₖ (1 + i)^(−k L) over k = 1, 2, … with
/// k L < T (a replacement due exactly at the horizon is not bought).
///
/// C is the replacement cost (currency, constant prices), L the lifetime and T the horizon in
/// years, i the real discount rate per year. Source: life-cycle costing with repeated
/// renewals (Newnan, Eschenbach & Lavelle, Engineering Economic Analysis — from memory).
/// Valid for L > 0, T ≥ 0, i > −1; returns NaN if L is not finite and > 0 or T is NaN.
pub fn present_worth_of_replacements(
    cost: f64,
    lifetime_years: f64,
    horizon_years: f64,
    i: f64,
) -> f64 {
    if !(lifetime_years > 0.0 && lifetime_years.is_finite()) || horizon_years.is_nan() {
        return f64::NAN;
    }
    let k_max = replacements_before(lifetime_years, horizon_years);
    let step = present_worth_factor_single(i, lifetime_years);
    let mut factor = 1.0;
    let mut sum = 0.0;
    for _ in 0..k_max {
        factor *= step;
        sum += factor;
    }
    cost * sum
}

/// Present worth of the salvage (residual) value at the horizon, straight-line convention:
/// S = C · (remaining life / L) · (1 + i)^(−T).
///
/// The item in service at T is the last one bought (at 0 or at the last replacement k L < T),
/// its age is a = T − k L ∈ (0, L], remaining life L − a; it is valued at the share of its
/// cost C equal to the share of life left, in constant prices, and discounted from year T.
/// An item bought at 0 with L ≥ T keeps (L − T)/L of its cost. Returned as a positive number
/// to subtract from the present cost. Source: straight-line residual value in life-cycle cost
/// (Newnan, Eschenbach & Lavelle, Engineering Economic Analysis — from memory). Valid for
/// L > 0, T ≥ 0, i > −1; NaN if L is not finite and > 0 or T is NaN.
pub fn salvage_value_linear(cost: f64, lifetime_years: f64, horizon_years: f64, i: f64) -> f64 {
    if !(lifetime_years > 0.0 && lifetime_years.is_finite()) || horizon_years.is_nan() {
        return f64::NAN;
    }
    let t = horizon_years.max(0.0);
    let k = replacements_before(lifetime_years, t) as f64;
    let age = t - k * lifetime_years;
    let remaining_fraction = ((lifetime_years - age) / lifetime_years).clamp(0.0, 1.0);
    cost * remaining_fraction * present_worth_factor_single(i, t)
}

/// Levelised cost per m³ = NPV of cost / Σₜ V_t (1 + i)^(−t), t = 1 … n.
///
/// `annual_volumes_m3[0]` is the volume delivered in year 1, discounted from the end of year 1
/// (the same end-of-year convention as the costs), so that a constant price equal to the
/// result, charged on every m³, has a present worth equal to `npv_cost`. Source: levelised unit
/// cost (discounted cost / discounted output; e.g. Twort et al., Water Supply, 6th ed., 2009 —
/// from memory). `None` when the discounted volume is not positive or not finite.
pub fn levelised_cost_per_m3(npv_cost: f64, annual_volumes_m3: &[f64], i: f64) -> Option<f64> {
    let step = present_worth_factor_single(i, 1.0);
    let mut factor = 1.0;
    let mut discounted = 0.0;
    for &v in annual_volumes_m3 {
        factor *= step;
        discounted += v * factor;
    }
    (discounted.is_finite() && discounted > 0.0).then(|| npv_cost / discounted)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    // Check values: standard discrete compound-interest tables, four or five significant
    // figures, as printed in the appendix tables of Newnan, Eschenbach & Lavelle, Engineering
    // Economic Analysis, and of Sullivan, Wicks & Koelling, Engineering Economy (from memory).
    // Tolerances are half a unit in the last printed digit.

    #[test]
    fn capital_recovery_table_values() {
        // A/P, 10 %, 10 years = 0.16275.
        assert!((capital_recovery_factor(0.10, 10.0) - 0.16275).abs() < 0.5e-5);
        // A/P, 5 %, 20 years = 0.08024.
        assert!((capital_recovery_factor(0.05, 20.0) - 0.08024).abs() < 0.5e-5);
        // A/P, 8 %, 5 years = 0.25046.
        assert!((capital_recovery_factor(0.08, 5.0) - 0.25046).abs() < 0.5e-5);
    }

    #[test]
    fn present_worth_table_values() {
        // P/A, 10 %, 10 years = 6.1446.
        assert!((present_worth_factor_uniform(0.10, 10.0) - 6.1446).abs() < 0.5e-4);
        // P/A, 5 %, 20 years = 12.4622.
        assert!((present_worth_factor_uniform(0.05, 20.0) - 12.4622).abs() < 0.5e-4);
        // P/F, 8 %, 5 years = 0.6806.
        assert!((present_worth_factor_single(0.08, 5.0) - 0.6806).abs() < 0.5e-4);
        // P/F, 10 %, 10 years = 0.3855; 10 %, 20 years = 0.1486.
        assert!((present_worth_factor_single(0.10, 10.0) - 0.3855).abs() < 0.5e-4);
        assert!((present_worth_factor_single(0.10, 20.0) - 0.1486).abs() < 0.5e-4);
    }

    /// Analytic limits at i = 0: A/P = 1/n, P/A = n, P/F = 1; and A/P · P/A = 1 (definition).
    #[test]
    fn zero_rate_limits_and_reciprocity() {
        assert_relative_eq!(
            capital_recovery_factor(0.0, 20.0),
            0.05,
            max_relative = 1e-15
        );
        assert_relative_eq!(
            present_worth_factor_uniform(0.0, 20.0),
            20.0,
            max_relative = 1e-15
        );
        assert_relative_eq!(
            present_worth_factor_single(0.0, 20.0),
            1.0,
            max_relative = 1e-15
        );
        // Continuity near 0: A/P → 1/n + i (n + 1)/(2n) to first order (series of the factor).
        let i = 1e-9;
        assert_relative_eq!(
            capital_recovery_factor(i, 20.0),
            0.05 + i * 21.0 / 40.0,
            max_relative = 1e-12
        );
        for (i, n) in [(0.03, 7.0), (0.12, 30.0), (1e-7, 15.0)] {
            assert_relative_eq!(
                capital_recovery_factor(i, n) * present_worth_factor_uniform(i, n),
                1.0,
                max_relative = 1e-12
            );
        }
    }

    /// Replacements at 10 and 20 years within a 25-year horizon at 10 %:
    /// C (P/F 10 %,10 + P/F 10 %,20) = 100 (0.3855 + 0.1486) = 53.41 (table values above).
    #[test]
    fn replacements_before_horizon() {
        assert!((present_worth_of_replacements(100.0, 10.0, 25.0, 0.10) - 53.41).abs() < 0.01);
        // Exactly at the horizon: the year-20 replacement of a 20-year horizon is not bought.
        assert!((present_worth_of_replacements(100.0, 10.0, 20.0, 0.10) - 38.55).abs() < 0.01);
        // Lifetime longer than horizon: none.
        assert_eq!(present_worth_of_replacements(100.0, 30.0, 25.0, 0.10), 0.0);
        // i = 0: just count them: 4-year life in 20 years → replacements at 4, 8, 12, 16.
        assert_relative_eq!(present_worth_of_replacements(50.0, 4.0, 20.0, 0.0), 200.0);
        assert!(present_worth_of_replacements(50.0, 0.0, 20.0, 0.0).is_nan());
    }

    /// Straight-line salvage: 10-year item, 25-year horizon → last bought at 20, half its life
    /// left: 0.5 · 100 · P/F(10 %, 25) = 50 · 0.0923 = 4.615 (table value, from memory).
    #[test]
    fn salvage_linear_convention() {
        assert!((salvage_value_linear(100.0, 10.0, 25.0, 0.10) - 4.615).abs() < 0.005);
        // Exact multiple: the item bought at 10 is worn out at 20 → nothing left.
        assert!(salvage_value_linear(100.0, 10.0, 20.0, 0.10).abs() < 1e-9);
        // 30-year item, 20-year horizon, i = 0: one third of its cost remains.
        assert_relative_eq!(
            salvage_value_linear(90.0, 30.0, 20.0, 0.0),
            30.0,
            max_relative = 1e-12
        );
        assert!(salvage_value_linear(90.0, -1.0, 20.0, 0.0).is_nan());
    }

    /// Analytic: constant volume V for n years → levelised = NPV · (A/P) / V. With NPV 10 000,
    /// V = 1 000 m³/yr, 10 %, 10 years: 10 · 0.16275 = 1.6275 per m³ (table A/P).
    #[test]
    fn levelised_cost_constant_volume() {
        let v = [1000.0; 10];
        let lc = levelised_cost_per_m3(10_000.0, &v, 0.10).unwrap();
        assert!((lc - 1.6275).abs() < 0.5e-4);
        // i = 0: cost / total volume.
        assert_relative_eq!(
            levelised_cost_per_m3(500.0, &[100.0, 300.0], 0.0).unwrap(),
            1.25
        );
        assert_eq!(levelised_cost_per_m3(500.0, &[], 0.05), None);
        assert_eq!(levelised_cost_per_m3(500.0, &[0.0, 0.0], 0.05), None);
    }
}
