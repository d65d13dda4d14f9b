//! Synthetic daily clearness-index sequences with day-to-day persistence, and the "mean days"
//! mode. Owns the daily Kt generator only; splitting daily totals into hours is done elsewhere.
//!
//! Method (the autoregressive route of Graham, Hollands & Unny 1988, with the Bendt et al. 1981
//! daily distribution as the marginal):
//!
//! 1. A Gaussian AR(1) process runs through every day of every year without restarting at month
//!    or year ends: `y[t] = φ·y[t-1] + sqrt(1 − φ²)·ε[t]`, `ε ~ N(0, 1)`, `y[0] ~ N(0, 1)`, so
//!    `y` is stationary N(0, 1) with lag-1 autocorrelation φ (default 0.3).
//!    Source: C. J. Graham, K. G. T. Hollands & T. E. Unny, "A time series model for Kt with
//!    application to global synthetic weather generation", Solar Energy 40(2) (1988) 83–92:
//!    daily Kt is mapped to a Gaussian variable through its monthly distribution and that
//!    variable is modelled as AR(1); they report a lag-1 coefficient near 0.3 that varies little
//!    between sites (from memory). Measured lag-1 autocorrelations of deseasonalised daily Kt are
//!    commonly reported between about 0.1 and 0.5 depending on climate (from memory).
//! 2. Each day's `y` is mapped to Kt through the month's daily-Kt distribution:
//!    `Kt = F⁻¹(Φ(y))`, where `F` is the truncated-exponential distribution of P. Bendt,
//!    M. Collares-Pereira & A. Rabl, "The frequency distribution of daily insolation values",
//!    Solar Energy 27(1) (1981) 1–5:
//!    `F(Kt) = (e^{γ Kt} − e^{γ Kt,min}) / (e^{γ Kt,max} − e^{γ Kt,min})` on
//!    `[Kt,min, Kt,max]`, with `Kt,min = 0.05`, `Kt,max = 0.6313 + 0.267 K̄ − 11.9 (K̄ − 0.75)^8`
//!    (both from memory), and `γ` chosen so the distribution's mean equals the month's mean K̄.
//!    Below K̄ ≈ 0.2 that `Kt,max` polynomial falls off steeply (outside the data it was fitted
//!    to, and below K̄ ≈ 0.07 even under K̄), so for K̄ < 0.15 this module uses
//!    `Kt,max = max(polynomial, K̄ + 0.1)` and everywhere `Kt,min = min(0.05, (0.03 + K̄)/2)`
//!    — an extension of ours, so that every K̄ in (0.05, 0.8) has a proper distribution. For
//!    K̄ ≥ 0.1 both ends are Bendt's.
//! 3. Each generated month (each month of each year) is rescaled by one factor `s`, with values
//!    clamped to [`KT_LOWER_BOUND`, `KT_UPPER_BOUND`] = [0.03, 0.85], `s` found by bisection so
//!    the month's mean equals the requested mean within [`MONTH_MEAN_TOLERANCE`] (1e-6). Scaling
//!    keeps the order of days, so the persistence of step 1 survives; the factor is typically
//!    within a few per cent of 1.
//!
//! Deterministic: the only randomness is [`super::rng::NormalStream`] seeded by the caller.

use super::rng::NormalStream;
use super::{DAYS_IN_MONTH, DAYS_IN_YEAR, MONTH_NAMES, WeatherError};

/// Lowest daily clearness index the generator returns (dimensionless). A heavily overcast day
/// still passes a few per cent of extraterrestrial radiation (common practice).
pub const KT_LOWER_BOUND: f64 = 0.03;
/// Highest daily clearness index the generator returns (dimensionless); daily Kt above ~0.85 is
/// not observed at ground level (common practice; Hollands & Huget 1983 use 0.864, from memory).
pub const KT_UPPER_BOUND: f64 = 0.85;
/// Smallest accepted monthly mean clearness index (exclusive).
pub const MONTHLY_MEAN_KT_MIN: f64 = 0.05;
/// Largest accepted monthly mean clearness index (exclusive).
pub const MONTHLY_MEAN_KT_MAX: f64 = 0.8;
/// Each generated month's mean Kt equals the requested monthly mean within this absolute value.
pub const MONTH_MEAN_TOLERANCE: f64 = 1e-6;

/// Parameters of the daily clearness model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ClearnessModel {
    /// Lag-1 autocorrelation φ of the Gaussian-transformed daily Kt (dimensionless), allowed
    /// 0 ≤ φ ≤ 0.9. Default 0.3 after Graham, Hollands & Unny (1988) (from memory).
    pub lag1_gaussian: f64,
}

impl Default for ClearnessModel {
    fn default() -> Self {
        Self { lag1_gaussian: 0.3 }
    }
}

/// Synthetic daily clearness index Kt (daily global horizontal / daily extraterrestrial,
/// dimensionless) for `n_years` 365-day years, with the default [`ClearnessModel`].
///
/// Formula: Gaussian AR(1) (φ = 0.3) mapped through the Bendt et al. distribution of each month,
/// then each month rescaled to its requested mean (see the module doc).
/// Source: Graham, Hollands & Unny, Solar Energy 40(2) 83–92 (1988); Bendt, Collares-Pereira &
/// Rabl, Solar Energy 27(1) 1–5 (1981).
/// Validity: monthly means in (0.05, 0.8); output in [0.03, 0.85]; every generated month's mean
/// equals its input within 1e-6. Same seed → bit-identical years.
pub fn synthetic_daily_clearness(
    monthly_mean_kt: &[f64; 12],
    n_years: usize,
    seed: u64,
) -> Result<Vec<[f64; DAYS_IN_YEAR]>, WeatherError> {
    synthetic_daily_clearness_with(monthly_mean_kt, n_years, seed, &ClearnessModel::default())
}

/// As [`synthetic_daily_clearness`], with an explicit model (lag-1 coefficient φ of the Gaussian
/// process). Formula, source and validity as there; φ must lie in [0, 0.9].
pub fn synthetic_daily_clearness_with(
    monthly_mean_kt: &[f64; 12],
    n_years: usize,
    seed: u64,
    model: &ClearnessModel,
) -> Result<Vec<[f64; DAYS_IN_YEAR]>, WeatherError> {
    validate_monthly_means(monthly_mean_kt)?;
    let phi = model.lag1_gaussian;
    if !(0.0..=0.9).contains(&phi) {
        return Err(WeatherError::Lag1OutOfRange { value: phi });
    }
    if n_years == 0 {
        return Err(WeatherError::NoYears);
    }

    let dists: [BendtDistribution; 12] =
        std::array::from_fn(|m| BendtDistribution::for_monthly_mean(monthly_mean_kt[m]));
    let innovation_scale = (1.0 - phi * phi).sqrt();

    let mut normals = NormalStream::new(seed);
    let mut y = normals.next_normal();
    let mut years = vec![[0.0; DAYS_IN_YEAR]; n_years];
    for year in years.iter_mut() {
        let mut start = 0usize;
        for (m, &len) in DAYS_IN_MONTH.iter().enumerate() {
            let end = start + len as usize;
            for kt in &mut year[start..end] {
                *kt = dists[m].quantile(standard_normal_cdf(y));
                y = phi * y + innovation_scale * normals.next_normal();
            }
            rescale_to_mean(&mut year[start..end], monthly_mean_kt[m]);
            start = end;
        }
    }
    Ok(years)
}

/// "Mean days" mode: every day of the 365-day year gets its month's mean clearness index.
///
/// Formula: `Kt[d] = K̄[month_of_day(d)]`. Source: definition (no variability).
/// Validity: monthly means in (0.05, 0.8).
pub fn mean_days_clearness(
    monthly_mean_kt: &[f64; 12],
) -> Result<[f64; DAYS_IN_YEAR], WeatherError> {
    validate_monthly_means(monthly_mean_kt)?;
    Ok(std::array::from_fn(|d| {
        monthly_mean_kt[super::month_of_day(d)]
    }))
}

fn validate_monthly_means(monthly_mean_kt: &[f64; 12]) -> Result<(), WeatherError> {
    for (m, &kt) in monthly_mean_kt.iter().enumerate() {
        if !(kt > MONTHLY_MEAN_KT_MIN && kt < MONTHLY_MEAN_KT_MAX) {
            return Err(WeatherError::MonthlyMeanOutOfRange {
                month: MONTH_NAMES[m],
                value: kt,
            });
        }
    }
    Ok(())
}

/// Multiply `days` by one factor `s` (values clamped to the Kt bounds) so their mean is
/// `target`. The clamped mean is continuous and non-decreasing in `s`, running from the lower
/// bound (s → 0) to the upper bound (s → ∞), so a solution exists for any target inside the
/// bounds; found by bisection.
fn rescale_to_mean(days: &mut [f64], target: f64) {
    let n = days.len() as f64;
    let clamped_mean = |s: f64, days: &[f64]| {
        days.iter()
            .map(|&k| (s * k).clamp(KT_LOWER_BOUND, KT_UPPER_BOUND))
            .sum::<f64>()
            / n
    };
    let raw_mean = days.iter().sum::<f64>() / n;
    let s0 = target / raw_mean;
    let mut s = s0;
    let g0 = clamped_mean(s0, days);
    if (g0 - target).abs() > MONTH_MEAN_TOLERANCE * 0.01 {
        let (mut lo, mut hi) = if g0 < target {
            (s0, s0 * 2.0)
        } else {
            (s0 * 0.5, s0)
        };
        while clamped_mean(hi, days) < target {
            hi *= 2.0;
        }
        while clamped_mean(lo, days) > target {
            lo *= 0.5;
        }
        for _ in 0..100 {
            let mid = 0.5 * (lo + hi);
            if clamped_mean(mid, days) < target {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo < 1e-14 * hi {
                break;
            }
        }
        s = 0.5 * (lo + hi);
    }
    for k in days.iter_mut() {
        *k = (s * *k).clamp(KT_LOWER_BOUND, KT_UPPER_BOUND);
    }
}

/// Bendt et al. (1981) truncated-exponential distribution of daily Kt for one month.
#[derive(Debug, Clone, Copy)]
pub(crate) struct BendtDistribution {
    /// Lower end Kt,min (dimensionless).
    pub(crate) kt_min: f64,
    /// Upper end Kt,max (dimensionless).
    pub(crate) kt_max: f64,
    /// Dimensionless shape x = γ (Kt,max − Kt,min).
    pub(crate) shape: f64,
}

impl BendtDistribution {
    /// Distribution with mean `mean_kt`; ends as in the module doc (Bendt et al. 1981, with our
    /// extension below K̄ ≈ 0.2). Validity: 0.05 < `mean_kt` < 0.8.
    pub(crate) fn for_monthly_mean(mean_kt: f64) -> Self {
        let kt_min = MONTHLY_MEAN_KT_MIN.min(0.5 * (KT_LOWER_BOUND + mean_kt));
        let poly = bendt_kt_max(mean_kt);
        let kt_max = if mean_kt < 0.15 {
            poly.max(mean_kt + 0.1)
        } else {
            poly
        }
        .min(KT_UPPER_BOUND);
        let r = (mean_kt - kt_min) / (kt_max - kt_min);
        // unit_mean is increasing in x; bisection on a generous bracket.
        let (mut lo, mut hi) = (-500.0_f64, 500.0_f64);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if unit_mean(mid) < r {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        Self {
            kt_min,
            kt_max,
            shape: 0.5 * (lo + hi),
        }
    }

    /// Quantile `Kt = Kt,min + (Kt,max − Kt,min) · ln(1 + u (e^x − 1)) / x` for probability `u`.
    pub(crate) fn quantile(&self, u: f64) -> f64 {
        let u = u.clamp(0.0, 1.0);
        let x = self.shape;
        let frac = if x.abs() < 1e-9 {
            u
        } else {
            (u * x.exp_m1()).ln_1p() / x
        };
        self.kt_min + (self.kt_max - self.kt_min) * frac
    }

    /// Cumulative probability `F(Kt)` (formula in the module doc).
    #[cfg(test)]
    pub(crate) fn cdf(&self, kt: f64) -> f64 {
        let z = ((kt - self.kt_min) / (self.kt_max - self.kt_min)).clamp(0.0, 1.0);
        let x = self.shape;
        if x.abs() < 1e-9 {
            z
        } else {
            (x * z).exp_m1() / x.exp_m1()
        }
    }
}

/// Bendt et al. (1981) upper limit of daily Kt for monthly mean K̄:
/// `Kt,max = 0.6313 + 0.267 K̄ − 11.9 (K̄ − 0.75)^8` (from memory).
pub(crate) fn bendt_kt_max(mean_kt: f64) -> f64 {
    0.6313 + 0.267 * mean_kt - 11.9 * (mean_kt - 0.75).powi(8)
}

/// Mean of the density ∝ e^{x z} on 0 ≤ z ≤ 1: `1/(1 − e^{−x}) − 1/x` (x > 0), `1 − m(−x)`
/// (x < 0), 1/2 + x/12 near 0.
fn unit_mean(x: f64) -> f64 {
    if x.abs() < 1e-6 {
        0.5 + x / 12.0
    } else if x > 0.0 {
        -1.0 / (-x).exp_m1() - 1.0 / x
    } else {
        1.0 - unit_mean(-x)
    }
}

/// Standard normal CDF `Φ(y) = (1 + erf(y/√2))/2`.
fn standard_normal_cdf(y: f64) -> f64 {
    0.5 * (1.0 + erf(y * std::f64::consts::FRAC_1_SQRT_2))
}

/// Error function, rational approximation `erf(x) = 1 − (a1 t + … + a5 t^5) e^{−x²}`,
/// `t = 1/(1 + p x)`, odd extension for x < 0; |error| ≤ 1.5e-7.
/// Source: Abramowitz & Stegun, Handbook of Mathematical Functions (1964), eq. 7.1.26.
fn erf(x: f64) -> f64 {
    const P: f64 = 0.327_591_1;
    const A: [f64; 5] = [
        0.254_829_592,
        -0.284_496_736,
        1.421_413_741,
        -1.453_152_027,
        1.061_405_429,
    ];
    let ax = x.abs();
    let t = 1.0 / (1.0 + P * ax);
    let poly = t * (A[0] + t * (A[1] + t * (A[2] + t * (A[3] + t * A[4]))));
    let y = 1.0 - poly * (-ax * ax).exp();
    if x < 0.0 { -y } else { y }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::weather::month_of_day;
    use approx::assert_abs_diff_eq;

    /// An invented tropical-highland climate: cloudy wet season mid-year.
    const MEANS: [f64; 12] = [
        0.62, 0.60, 0.55, 0.48, 0.42, 0.38, 0.35, 0.37, 0.45, 0.52, 0.58, 0.63,
    ];

    #[test]
    fn erf_matches_abramowitz_stegun_table() {
        // Abramowitz & Stegun (1964) Table 7.1: erf(0.5) = 0.5204998778, erf(1) = 0.8427007929,
        // erf(2) = 0.9953222650; approximation 7.1.26 is good to 1.5e-7.
        assert_abs_diff_eq!(erf(0.5), 0.520_499_877_8, epsilon = 2e-7);
        assert_abs_diff_eq!(erf(1.0), 0.842_700_792_9, epsilon = 2e-7);
        assert_abs_diff_eq!(erf(2.0), 0.995_322_265_0, epsilon = 2e-7);
        assert_abs_diff_eq!(erf(-1.0), -0.842_700_792_9, epsilon = 2e-7);
        // Standard normal table: Φ(1.96) = 0.9750 (common practice, two-sided 95 %).
        assert_abs_diff_eq!(standard_normal_cdf(1.96), 0.9750, epsilon = 1e-4);
    }

    #[test]
    fn bendt_kt_max_by_hand() {
        // Bendt et al. (1981) Kt,max polynomial evaluated by hand: at K̄ = 0.75 the eighth-power
        // term vanishes, 0.6313 + 0.267·0.75 = 0.83155; at K̄ = 0.5, 0.6313 + 0.1335 −
        // 11.9·0.25^8 (= 0.000182) = 0.764618.
        assert_abs_diff_eq!(bendt_kt_max(0.75), 0.83155, epsilon = 1e-9);
        assert_abs_diff_eq!(bendt_kt_max(0.5), 0.764_618, epsilon = 1e-6);
    }

    #[test]
    fn bendt_distribution_mean_equals_monthly_mean_by_quadrature() {
        // Independent check of γ: integrate Kt dF numerically (midpoint rule on the quantile,
        // E[Kt] = ∫0^1 F⁻¹(u) du) and compare with the requested mean.
        for &mean in &[0.06, 0.15, 0.3, 0.45, 0.6, 0.75, 0.79] {
            let d = BendtDistribution::for_monthly_mean(mean);
            let n = 200_000;
            let e: f64 = (0..n)
                .map(|i| d.quantile((i as f64 + 0.5) / n as f64))
                .sum::<f64>()
                / n as f64;
            assert_abs_diff_eq!(e, mean, epsilon = 1e-6);
            assert!(d.kt_min >= KT_LOWER_BOUND && d.kt_max <= KT_UPPER_BOUND);
            if mean >= 0.15 {
                // Bendt's own ends apply here (Kt,min = 0.05, Kt,max from the polynomial).
                assert_abs_diff_eq!(d.kt_min, 0.05);
                assert_abs_diff_eq!(d.kt_max, bendt_kt_max(mean));
            }
            // quantile and cdf are inverses
            assert_abs_diff_eq!(d.cdf(d.quantile(0.3)), 0.3, epsilon = 1e-12);
        }
    }

    #[test]
    fn monthly_means_preserved_over_30_years() {
        let years = synthetic_daily_clearness(&MEANS, 30, 2024).unwrap();
        assert_eq!(years.len(), 30);
        let mut long_sum = [0.0; 12];
        let mut long_n = [0usize; 12];
        for year in &years {
            let mut sum = [0.0; 12];
            for (d, &kt) in year.iter().enumerate() {
                sum[month_of_day(d)] += kt;
                long_sum[month_of_day(d)] += kt;
                long_n[month_of_day(d)] += 1;
            }
            for m in 0..12 {
                let mean = sum[m] / f64::from(DAYS_IN_MONTH[m]);
                assert_abs_diff_eq!(mean, MEANS[m], epsilon = MONTH_MEAN_TOLERANCE);
            }
        }
        for m in 0..12 {
            assert_abs_diff_eq!(
                long_sum[m] / long_n[m] as f64,
                MEANS[m],
                epsilon = MONTH_MEAN_TOLERANCE
            );
        }
    }

    #[test]
    fn days_vary_within_a_month() {
        // The sequence is not the mean-days mode: daily Kt spread within a month is substantial
        // (Bendt et al. 1981 distributions have a standard deviation of roughly 0.1–0.2).
        let years = synthetic_daily_clearness(&MEANS, 5, 1).unwrap();
        let jan = &years[0][0..31];
        let mean = jan.iter().sum::<f64>() / 31.0;
        let sd = (jan.iter().map(|k| (k - mean).powi(2)).sum::<f64>() / 30.0).sqrt();
        assert!(sd > 0.05 && sd < 0.3, "sd = {sd}");
    }

    #[test]
    fn lag1_autocorrelation_in_published_range() {
        // Graham, Hollands & Unny (1988): lag-1 autocorrelation of daily Kt ≈ 0.3; published
        // site values roughly 0.1–0.5 (from memory). Deseasonalised by subtracting the monthly
        // mean; computed over 30 years (10 950 days) as one series.
        let years = synthetic_daily_clearness(&MEANS, 30, 99).unwrap();
        let d: Vec<f64> = years
            .iter()
            .flat_map(|y| {
                y.iter()
                    .enumerate()
                    .map(|(i, k)| k - MEANS[month_of_day(i)])
            })
            .collect();
        let var: f64 = d.iter().map(|x| x * x).sum();
        let cov: f64 = d.windows(2).map(|w| w[0] * w[1]).sum();
        let r1 = cov / var;
        assert!((0.1..=0.5).contains(&r1), "lag-1 autocorrelation {r1}");
    }

    #[test]
    fn zero_persistence_gives_near_zero_autocorrelation() {
        // With φ = 0 days are independent: lag-1 autocorrelation ≈ 0 within ~3/sqrt(n) (analytic).
        let model = ClearnessModel { lag1_gaussian: 0.0 };
        let years = synthetic_daily_clearness_with(&MEANS, 30, 5, &model).unwrap();
        let d: Vec<f64> = years
            .iter()
            .flat_map(|y| {
                y.iter()
                    .enumerate()
                    .map(|(i, k)| k - MEANS[month_of_day(i)])
            })
            .collect();
        let var: f64 = d.iter().map(|x| x * x).sum();
        let cov: f64 = d.windows(2).map(|w| w[0] * w[1]).sum();
        assert!((cov / var).abs() < 0.04, "r1 = {}", cov / var);
    }

    #[test]
    fn same_seed_same_years_different_seed_differs() {
        let a = synthetic_daily_clearness(&MEANS, 3, 17).unwrap();
        let b = synthetic_daily_clearness(&MEANS, 3, 17).unwrap();
        let c = synthetic_daily_clearness(&MEANS, 3, 18).unwrap();
        let bits = |v: &Vec<[f64; 365]>| -> Vec<u64> {
            v.iter()
                .flat_map(|y| y.iter().map(|k| k.to_bits()))
                .collect()
        };
        assert_eq!(bits(&a), bits(&b));
        assert_ne!(bits(&a), bits(&c));
        // Consecutive years are not copies of each other.
        assert_ne!(a[0].map(f64::to_bits), a[1].map(f64::to_bits));
    }

    #[test]
    fn bounds_respected_even_for_extreme_means() {
        let dull = [0.051; 12];
        let bright = [0.799; 12];
        for means in [&dull, &bright, &MEANS] {
            let years = synthetic_daily_clearness(means, 10, 3).unwrap();
            for y in &years {
                for &k in y {
                    assert!((KT_LOWER_BOUND..=KT_UPPER_BOUND).contains(&k), "Kt {k}");
                }
                for m in 0..12 {
                    let start: usize = DAYS_IN_MONTH[..m].iter().map(|&d| d as usize).sum();
                    let len = DAYS_IN_MONTH[m] as usize;
                    let mean = y[start..start + len].iter().sum::<f64>() / len as f64;
                    assert_abs_diff_eq!(mean, means[m], epsilon = MONTH_MEAN_TOLERANCE);
                }
            }
        }
    }

    #[test]
    fn invalid_means_name_the_month() {
        let mut bad = MEANS;
        bad[2] = 0.9;
        let err = synthetic_daily_clearness(&bad, 1, 0).unwrap_err();
        assert!(matches!(
            err,
            WeatherError::MonthlyMeanOutOfRange { month: "March", .. }
        ));
        let msg = err.to_string();
        assert!(msg.contains("March") && msg.contains("0.9"), "{msg}");
        bad[2] = f64::NAN;
        assert!(synthetic_daily_clearness(&bad, 1, 0).is_err());
        let mut low = MEANS;
        low[11] = 0.05;
        assert!(matches!(
            mean_days_clearness(&low).unwrap_err(),
            WeatherError::MonthlyMeanOutOfRange {
                month: "December",
                ..
            }
        ));
        assert!(matches!(
            synthetic_daily_clearness(&MEANS, 0, 0).unwrap_err(),
            WeatherError::NoYears
        ));
        let model = ClearnessModel { lag1_gaussian: 1.0 };
        assert!(matches!(
            synthetic_daily_clearness_with(&MEANS, 1, 0, &model).unwrap_err(),
            WeatherError::Lag1OutOfRange { .. }
        ));
    }

    #[test]
    fn mean_days_mode_repeats_monthly_means() {
        let days = mean_days_clearness(&MEANS).unwrap();
        assert_eq!(days[0], MEANS[0]);
        assert_eq!(days[30], MEANS[0]); // 31 January
        assert_eq!(days[31], MEANS[1]); // 1 February
        assert_eq!(days[58], MEANS[1]); // 28 February
        assert_eq!(days[59], MEANS[2]); // 1 March
        assert_eq!(days[364], MEANS[11]); // 31 December
    }

    #[test]
    fn thirty_years_generate_fast() {
        // Budget: 30 years in well under 5 ms (optimised build; debug builds are not timed).
        if cfg!(debug_assertions) {
            return;
        }
        let t = std::time::Instant::now();
        let years = synthetic_daily_clearness(&MEANS, 30, 11).unwrap();
        let elapsed = t.elapsed();
        assert_eq!(years.len(), 30);
        assert!(elapsed.as_secs_f64() < 0.005, "took {elapsed:?}");
    }
}
