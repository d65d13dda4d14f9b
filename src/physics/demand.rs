//! Water demand: population growth over the design horizon, the hour-of-day shape of use
//! (built-in profiles and user profiles, normalised to fractions of the daily volume), and the
//! water that must be supplied to cover consumption plus losses. Volumes in m³, rates as
//! fractions (0.03 = 3 %), time in years or hours as named.

use thiserror::Error;

/// Population after `years` of geometric (compound) growth: P = P₀ (1 + r)ⁿ.
///
/// P₀ in persons, r as a fraction per year (0.03 = 3 %/yr), n in years (fractional allowed).
/// Source: geometric-increase forecast (Twort et al., Water Supply, 6th ed., 2009, ch. 1 —
/// from memory). Valid for r > −1; a planning forecast over one to a few decades.
pub fn population_geometric(p0: f64, rate_fraction_per_year: f64, years: f64) -> f64 {
    p0 * (years * rate_fraction_per_year.ln_1p()).exp()
}

/// Population after `years` of arithmetic (linear) growth: P = P₀ (1 + r n).
///
/// P₀ in persons, r as a fraction of P₀ per year, n in years. Source: arithmetic-increase
/// forecast (Twort et al., Water Supply, 6th ed., 2009, ch. 1 — from memory). Valid while
/// 1 + r n > 0; suits slowly growing, settled communities.
pub fn population_arithmetic(p0: f64, rate_fraction_per_year: f64, years: f64) -> f64 {
    p0 * (1.0 + rate_fraction_per_year * years)
}

/// Volume to supply so that `consumed` reaches the users: V_in = V_consumed / (1 − L).
///
/// L is the losses as a fraction of system input volume (IWA water balance: system input =
/// authorised consumption + water losses; Alegre et al., Performance Indicators for Water
/// Supply Services, IWA, 2nd ed., 2006 — from memory). Any unit of volume or flow, output in
/// the same unit. Valid for 0 ≤ L < 1 (L = 0.2 means a fifth of what enters is lost).
pub fn supplied_from_consumed(consumed: f64, losses_fraction: f64) -> f64 {
    consumed / (1.0 - losses_fraction)
}

/// Why a 24-hour profile cannot be normalised.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum ProfileError {
    /// A value is NaN, infinite or negative.
    #[error(
        "demand profile hour {hour}: {value} is not a number of 0 or more; give a share of the day's use per hour"
    )]
    BadValue { hour: usize, value: f64 },
    /// All 24 values are zero.
    #[error("demand profile: all 24 hours are 0; give at least one hour with use")]
    AllZero,
}

/// Scales 24 hourly weights so they sum to 1: f_h = w_h / Σ w.
///
/// Hour h covers h:00 to h+1:00. Source: definition (fractions of daily volume). Valid for
/// finite weights ≥ 0 with a positive sum; otherwise a [`ProfileError`] naming the hour.
pub fn normalise_profile(weights: &[f64; 24]) -> Result<[f64; 24], ProfileError> {
    for (hour, &value) in weights.iter().enumerate() {
        if !(value.is_finite() && value >= 0.0) {
            return Err(ProfileError::BadValue { hour, value });
        }
    }
    let sum: f64 = weights.iter().sum();
    if sum <= 0.0 {
        return Err(ProfileError::AllZero);
    }
    Ok(weights.map(|w| w / sum))
}

/// Peak hour factor of a 24-hour profile: max hourly / mean hourly = 24 · max f_h / Σ f_h.
///
/// Dimensionless; scale-free, so raw weights work as well as fractions. Source: definition of
/// the peak hour factor (e.g. Twort et al., Water Supply, 6th ed., 2009 — from memory). NaN if
/// the profile's sum is not positive.
pub fn peak_factor(profile: &[f64; 24]) -> f64 {
    let sum: f64 = profile.iter().sum();
    if sum.is_nan() || sum <= 0.0 {
        return f64::NAN;
    }
    let max = profile.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    24.0 * max / sum
}

/// Built-in hour-of-day demand shapes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum BuiltinProfile {
    /// Shared public taps: collection in a morning and an evening peak, almost none at night.
    CommunalTaps,
    /// A tap in each yard: flatter, with mild morning and evening peaks and some night use.
    YardTaps,
    /// The same use every hour.
    Flat,
}

/// Communal taps, percent of the day's volume per hour 0..23 (sums to 100).
const COMMUNAL_TAPS_PERCENT: [f64; 24] = [
    0.0, 0.0, 0.0, 0.0, 0.5, 3.0, 9.0, 11.0, 9.0, 6.0, 5.0, 4.0, //
    4.0, 4.0, 4.0, 5.0, 8.0, 10.0, 9.0, 5.0, 2.0, 1.0, 0.5, 0.0,
];

/// Yard taps, percent of the day's volume per hour 0..23 (sums to 100).
const YARD_TAPS_PERCENT: [f64; 24] = [
    1.5, 1.5, 1.5, 1.5, 2.0, 4.0, 6.0, 7.0, 6.5, 5.5, 5.0, 5.0, //
    5.0, 4.5, 4.5, 5.0, 6.0, 7.0, 6.5, 5.0, 3.5, 2.5, 2.0, 1.5,
];

impl BuiltinProfile {
    /// Every built-in profile, in a fixed order.
    pub const ALL: [BuiltinProfile; 3] = [
        BuiltinProfile::CommunalTaps,
        BuiltinProfile::YardTaps,
        BuiltinProfile::Flat,
    ];

    /// Fraction of the day's volume drawn in each hour h (covering h:00 to h+1:00); sums to 1.
    ///
    /// Peak factors (max hourly / mean hourly): communal taps 2.64 (11 % in 07:00–08:00),
    /// yard taps 1.68 (7 % in 07:00–08:00 and 17:00–18:00), flat 1.00. Basis: see
    /// [`BuiltinProfile::basis`].
    pub fn factors(self) -> [f64; 24] {
        match self {
            BuiltinProfile::CommunalTaps => COMMUNAL_TAPS_PERCENT.map(|p| p / 100.0),
            BuiltinProfile::YardTaps => YARD_TAPS_PERCENT.map(|p| p / 100.0),
            BuiltinProfile::Flat => [1.0 / 24.0; 24],
        }
    }

    /// The name used in scheme files.
    pub fn name(self) -> &'static str {
        match self {
            BuiltinProfile::CommunalTaps => "communal_taps",
            BuiltinProfile::YardTaps => "yard_taps",
            BuiltinProfile::Flat => "flat",
        }
    }

    /// The profile with this scheme-file name (ASCII case ignored; `-` accepted for `_`).
    pub fn from_name(name: &str) -> Option<BuiltinProfile> {
        let wanted = name.trim().to_ascii_lowercase().replace('-', "_");
        Self::ALL.into_iter().find(|p| p.name() == wanted)
    }

    /// What the shape rests on, for the plan's assumptions page.
    pub fn basis(self) -> &'static str {
        match self {
            BuiltinProfile::CommunalTaps => {
                "Common-practice shape for shared public taps, not fitted to a measured data set: \
                 water is collected in a morning peak (06:00-09:00, highest 11 % of the day in \
                 07:00-08:00) and an evening peak (16:00-19:00), with little or no use between \
                 22:00 and 04:00, as field guidance on standpipe supplies commonly describes. \
                 Peak hour factor 2.64. Replace it with a measured profile where one exists."
            }
            BuiltinProfile::YardTaps => {
                "Common-practice shape for a tap in each yard, not fitted to a measured data set: \
                 use is spread through the day with mild morning and evening peaks (7 % of the \
                 day in 07:00-08:00 and in 17:00-18:00) and some night use (1.5 % per hour). \
                 Peak hour factor 1.68. Replace it with a measured profile where one exists."
            }
            BuiltinProfile::Flat => {
                "Uniform use, 1/24 of the day in every hour (peak hour factor 1.00): a bound for \
                 comparison, or for supplies feeding continuous uses."
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// Analytic: 1000 · 1.03¹⁰ = 1343.916 (compound-growth arithmetic; 1.03¹⁰ = 1.343916 is
    /// also the F/P factor at 3 %, 10 years in standard compound-interest tables — from memory).
    #[test]
    fn geometric_growth() {
        assert_relative_eq!(
            population_geometric(1000.0, 0.03, 10.0),
            1343.916,
            max_relative = 1e-6
        );
        assert_eq!(population_geometric(1000.0, 0.03, 0.0), 1000.0);
        assert_relative_eq!(population_geometric(1000.0, 0.0, 25.0), 1000.0);
        // Negative growth: 1000 · 0.98⁵ = 903.921 (hand calculation).
        assert_relative_eq!(
            population_geometric(1000.0, -0.02, 5.0),
            903.920_8,
            max_relative = 1e-6
        );
    }

    /// Analytic: 1000 (1 + 0.03 · 10) = 1300.
    #[test]
    fn arithmetic_growth() {
        assert_relative_eq!(
            population_arithmetic(1000.0, 0.03, 10.0),
            1300.0,
            max_relative = 1e-12
        );
        assert_eq!(population_arithmetic(500.0, 0.05, 0.0), 500.0);
    }

    /// Analytic (IWA balance, losses a share of input): 20 % losses → input = consumed / 0.8.
    #[test]
    fn losses_share_of_input() {
        assert_relative_eq!(
            supplied_from_consumed(80.0, 0.2),
            100.0,
            max_relative = 1e-12
        );
        assert_relative_eq!(supplied_from_consumed(40.0, 0.0), 40.0);
        // The lost share of the input is the given fraction.
        let input = supplied_from_consumed(65.0, 0.35);
        assert_relative_eq!((input - 65.0) / input, 0.35, max_relative = 1e-12);
    }

    /// Analytic: each built-in profile is a set of fractions of the day summing to 1.
    #[test]
    fn profiles_sum_to_one_and_are_non_negative() {
        for p in BuiltinProfile::ALL {
            let f = p.factors();
            assert_relative_eq!(f.iter().sum::<f64>(), 1.0, max_relative = 1e-12);
            assert!(f.iter().all(|&x| x >= 0.0), "{}", p.name());
        }
    }

    /// Definitional: the peak factors stated in the doc text match the chosen numbers.
    #[test]
    fn profile_peak_factors_as_documented() {
        assert_relative_eq!(
            peak_factor(&BuiltinProfile::CommunalTaps.factors()),
            2.64,
            max_relative = 1e-12
        );
        assert_relative_eq!(
            peak_factor(&BuiltinProfile::YardTaps.factors()),
            1.68,
            max_relative = 1e-12
        );
        assert_relative_eq!(
            peak_factor(&BuiltinProfile::Flat.factors()),
            1.0,
            max_relative = 1e-12
        );
        // Communal taps: the two collection peaks are at 07:00 and 17:00 and nights are empty.
        let f = BuiltinProfile::CommunalTaps.factors();
        assert!(f[7] > f[12] && f[17] > f[12] && f[2] == 0.0);
    }

    #[test]
    fn names_round_trip() {
        for p in BuiltinProfile::ALL {
            assert_eq!(BuiltinProfile::from_name(p.name()), Some(p));
            assert!(!p.basis().is_empty());
        }
        assert_eq!(
            BuiltinProfile::from_name("Yard-Taps"),
            Some(BuiltinProfile::YardTaps)
        );
        assert_eq!(BuiltinProfile::from_name("standpipe"), None);
    }

    /// Analytic: weights 1 for 12 hours and 3 for 12 hours → fractions 1/48 and 3/48; peak
    /// factor 24 · 3/48 = 1.5.
    #[test]
    fn normalise_and_peak_factor() {
        let mut w = [1.0; 24];
        for x in w.iter_mut().skip(12) {
            *x = 3.0;
        }
        let f = normalise_profile(&w).unwrap();
        assert_relative_eq!(f[0], 1.0 / 48.0, max_relative = 1e-12);
        assert_relative_eq!(f[23], 3.0 / 48.0, max_relative = 1e-12);
        assert_relative_eq!(peak_factor(&f), 1.5, max_relative = 1e-12);
        assert_relative_eq!(peak_factor(&w), 1.5, max_relative = 1e-12);
        assert_eq!(normalise_profile(&[0.0; 24]), Err(ProfileError::AllZero));
        w[5] = -1.0;
        assert_eq!(
            normalise_profile(&w),
            Err(ProfileError::BadValue {
                hour: 5,
                value: -1.0
            })
        );
        w[5] = f64::NAN;
        assert!(matches!(
            normalise_profile(&w),
            Err(ProfileError::BadValue { hour: 5, .. })
        ));
        assert!(peak_factor(&[0.0; 24]).is_nan());
    }
}
