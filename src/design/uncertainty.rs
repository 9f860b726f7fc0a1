//! Uncertainty: each input's stated uncertainty as a rectangular distribution of ± its
//! half-width (JCGM 100:2008, the GUM, §4.3.7: only bounds known), sampled by Latin
//! hypercube (McKay, Beckman & Conover 1979: each input's range cut into `samples` equal
//! strata, each stratum sampled once, strata paired at random) with a fixed seed, so a run
//! is reproducible; each sample a grid solve. Reported: P05/P50/P95 of duty and outlets
//! (empirical quantiles, Hyndman & Fan 1996 definition 7, numpy's default) beside the
//! nominal result and its grid-error estimate, and each input's share of the spread
//! (squared correlation of the sample with the result, normalised: with Latin-hypercube
//! inputs uncorrelated, this is the first-order share of a near-linear response).

use super::{evaluate, one_line, PointError, UncertaintySpec};
use crate::case::Case;
use crate::model::{Exchanger, Side};
use crate::results::KeyQuantities;
use crate::transfer::ScaledFilm;
use rayon::prelude::*;
use serde::Serialize;
use std::sync::Arc;

/// Default ± % on a fouling resistance: fouling allowances are design values, not
/// measurements (common practice).
pub const FOULING_PERCENT: f64 = 50.0;
/// Default ± % on a mass flow (common practice for a plant flow meter).
pub const FLOW_PERCENT: f64 = 2.0;
/// IEC 60751 class B tolerance of a platinum resistance thermometer: ±(0.30 + 0.005 |t|) K.
pub fn iec_60751_class_b_k(t_c: f64) -> f64 {
    0.30 + 0.005 * t_c.abs()
}

/// What an uncertain input changes.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Acts {
    /// Multiplies a stream's film coefficient.
    Film,
    /// Multiplies a stream's fouling resistance.
    Fouling,
    /// Multiplies a stream's mass flow.
    MassFlow,
    /// Shifts a stream's inlet temperature (K).
    InletTemperature,
}

/// One uncertain input.
#[derive(Debug, Clone, Serialize)]
pub struct Factor {
    /// The `[uncertainty]` key that sets it.
    pub key: &'static str,
    /// The stream.
    pub stream: Side,
    /// What it changes.
    pub acts: Acts,
    /// ± half-width: per cent, or kelvin for an inlet temperature.
    pub half_width: f64,
    /// "%" or "K".
    pub unit: &'static str,
    /// Where the value comes from.
    pub source: String,
}

/// The uncertain inputs of a case, with the defaults filled in.
pub fn factors(case: &Case, ex: &Exchanger, spec: &UncertaintySpec) -> Vec<Factor> {
    let mut out = Vec::new();
    for (i, side) in [Side::Hot, Side::Cold].into_iter().enumerate() {
        let s = ex.stream(side);
        let given = |v: Option<f64>, default: (f64, String)| match v {
            Some(v) => (v, "given in [uncertainty]".to_string()),
            None => default,
        };
        let film_default = match s.film.stated_accuracy() {
            Some(a) => (a.percent, a.source.to_string()),
            None => (0.0, "a fixed film coefficient has no stated accuracy: set it in [uncertainty]".to_string()),
        };
        let keys: [[&'static str; 4]; 2] = [
            ["hot_film_percent", "hot_fouling_percent", "hot_mass_flow_percent", "hot_inlet_temperature_K"],
            ["cold_film_percent", "cold_fouling_percent", "cold_mass_flow_percent", "cold_inlet_temperature_K"],
        ];
        let rows = [
            (Acts::Film, given(spec.film_percent[i], film_default), "%"),
            (Acts::Fouling, given(spec.fouling_percent[i], (FOULING_PERCENT, "common practice: fouling resistances are design allowances".into())), "%"),
            (Acts::MassFlow, given(spec.mass_flow_percent[i], (FLOW_PERCENT, "common practice: plant flow measurement".into())), "%"),
            (
                Acts::InletTemperature,
                given(spec.inlet_k[i], (iec_60751_class_b_k(case.stream(side).inlet_c), "IEC 60751 class B thermometer, ±(0.30 + 0.005 |t|) K".into())),
                "K",
            ),
        ];
        for (j, (acts, (half_width, source), unit)) in rows.into_iter().enumerate() {
            out.push(Factor { key: keys[i][j], stream: side, acts, half_width, unit, source });
        }
    }
    out
}

/// SplitMix64 (Steele, Lea & Flood 2014, the constants of Vigna's reference code): a
/// small, fast generator whose stream is fixed by the seed on every platform and version.
#[derive(Debug, Clone)]
pub struct SplitMix64(u64);

impl SplitMix64 {
    /// A generator from `seed`.
    pub fn new(seed: u64) -> Self {
        Self(seed)
    }
    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform in [0, 1) with 53 random bits.
    pub fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }
    /// Uniform whole number in 0..n (n > 0), by rejection (no modulo bias).
    pub fn below(&mut self, n: usize) -> usize {
        let n = n as u64;
        let zone = u64::MAX - (u64::MAX % n);
        loop {
            let x = self.next_u64();
            if x < zone {
                return (x % n) as usize;
            }
        }
    }
}

/// A Latin hypercube of `n` points in `d` dimensions on (0, 1): `out[i][j]`, each column
/// holding exactly one point in each stratum [k/n, (k+1)/n).
pub fn latin_hypercube(n: usize, d: usize, seed: u64) -> Vec<Vec<f64>> {
    let mut rng = SplitMix64::new(seed);
    let mut out = vec![vec![0.0; d]; n];
    for j in 0..d {
        let mut strata: Vec<usize> = (0..n).collect();
        // Fisher–Yates.
        for i in (1..n).rev() {
            strata.swap(i, rng.below(i + 1));
        }
        for (i, row) in out.iter_mut().enumerate() {
            row[j] = (strata[i] as f64 + rng.unit()) / n as f64;
        }
    }
    out
}

/// The empirical p-quantile of sorted data (Hyndman & Fan 1996, definition 7).
pub fn quantile(sorted: &[f64], p: f64) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    let h = (sorted.len() - 1) as f64 * p.clamp(0.0, 1.0);
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(sorted.len() - 1);
    sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
}

/// Pearson's correlation of two equally long series (0 where either is constant).
pub fn correlation(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len().min(y.len()) as f64;
    if n < 2.0 {
        return 0.0;
    }
    let (mx, my) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    for (a, b) in x.iter().zip(y) {
        sxy += (a - mx) * (b - my);
        sxx += (a - mx) * (a - mx);
        syy += (b - my) * (b - my);
    }
    if sxx <= 0.0 || syy <= 1e-300 * n {
        0.0
    } else {
        sxy / (sxx * syy).sqrt()
    }
}

/// `ex` with each factor at its sample value `u` (0–1 across its ± range).
pub fn perturbed(ex: &Exchanger, factors: &[Factor], u: &[f64]) -> Exchanger {
    let mut ex = ex.clone();
    for (f, &u) in factors.iter().zip(u) {
        let delta = f.half_width * (2.0 * u - 1.0);
        let s = match f.stream {
            Side::Hot => &mut ex.hot,
            Side::Cold => &mut ex.cold,
        };
        match f.acts {
            Acts::Film => s.film = Arc::new(ScaledFilm { inner: s.film.clone(), factor: 1.0 + delta / 100.0 }),
            Acts::Fouling => s.fouling_m2k_w *= 1.0 + delta / 100.0,
            Acts::MassFlow => s.mass_flow_kg_s *= 1.0 + delta / 100.0,
            Acts::InletTemperature => s.inlet_c += delta,
        }
    }
    ex
}

/// One sample: the factors' values (0–1) and the result.
#[derive(Debug, Clone)]
pub struct Sample {
    /// Position of each factor in its range, 0–1.
    pub u: Vec<f64>,
    /// Duty and outlets, or why not.
    pub outcome: Result<KeyQuantities, PointError>,
}

/// Evaluate every sample (in parallel, results in order); `tick` once per sample.
pub fn run(ex: &Exchanger, settings: &crate::solve::SteadySettings, factors: &[Factor], spec: &UncertaintySpec, tick: &(dyn Fn() + Sync)) -> Vec<Sample> {
    let points = latin_hypercube(spec.samples, factors.len(), spec.seed);
    points
        .into_par_iter()
        .map(|u| {
            let outcome = evaluate(&perturbed(ex, factors, &u), settings, None).map(|e| e.q).map_err(|e| PointError::Solve(one_line(&e)));
            tick();
            Sample { u, outcome }
        })
        .collect()
}

/// The spread of one result.
#[derive(Debug, Clone, Serialize)]
pub struct Spread {
    /// "duty_W", "hot_outlet_C" or "cold_outlet_C".
    pub quantity: &'static str,
    /// The nominal grid result.
    pub nominal: f64,
    /// Its estimated grid error (None for a single cell).
    pub grid_error: Option<f64>,
    /// 5th percentile of the samples.
    pub p05: f64,
    /// Median.
    pub p50: f64,
    /// 95th percentile.
    pub p95: f64,
    /// Sample mean.
    pub mean: f64,
    /// Sample standard deviation.
    pub standard_deviation: f64,
}

/// One input's part in the spread.
#[derive(Debug, Clone, Serialize)]
pub struct Contribution {
    /// The `[uncertainty]` key.
    pub key: &'static str,
    /// ± half-width and unit.
    pub half_width: f64,
    /// "%" or "K".
    pub unit: &'static str,
    /// Share of the duty's spread, %.
    pub duty_share_percent: f64,
    /// Correlation of the input with the duty (sign: direction of the effect).
    pub duty_correlation: f64,
    /// Share of the hot outlet's spread, %.
    pub hot_outlet_share_percent: f64,
    /// Share of the cold outlet's spread, %.
    pub cold_outlet_share_percent: f64,
}

/// A result's name and how to read it from the key quantities.
type Pick = (&'static str, fn(&KeyQuantities) -> f64);

/// Percentiles and contributions from the samples; contributions sorted by the duty share.
pub fn summarise(nominal: KeyQuantities, grid_error: Option<KeyQuantities>, factors: &[Factor], samples: &[Sample]) -> (Vec<Spread>, Vec<Contribution>) {
    let ok: Vec<(&[f64], KeyQuantities)> = samples.iter().filter_map(|s| s.outcome.as_ref().ok().map(|q| (s.u.as_slice(), *q))).collect();
    let pick: [Pick; 3] = [("duty_W", |q| q.duty_w), ("hot_outlet_C", |q| q.hot_outlet_c), ("cold_outlet_C", |q| q.cold_outlet_c)];
    let series: Vec<Vec<f64>> = pick.iter().map(|(_, f)| ok.iter().map(|(_, q)| f(q)).collect()).collect();
    let spreads = pick
        .iter()
        .zip(&series)
        .map(|((name, f), y)| {
            let mut sorted = y.clone();
            sorted.sort_by(f64::total_cmp);
            let n = y.len() as f64;
            let mean = y.iter().sum::<f64>() / n.max(1.0);
            let var = y.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0).max(1.0);
            Spread {
                quantity: name,
                nominal: f(&nominal),
                grid_error: grid_error.as_ref().map(f),
                p05: quantile(&sorted, 0.05),
                p50: quantile(&sorted, 0.50),
                p95: quantile(&sorted, 0.95),
                mean,
                standard_deviation: var.sqrt(),
            }
        })
        .collect();
    // Squared correlations, normalised per result.
    let r: Vec<[f64; 3]> = (0..factors.len())
        .map(|j| {
            let x: Vec<f64> = ok.iter().map(|(u, _)| u[j]).collect();
            [0, 1, 2].map(|k| if factors[j].half_width == 0.0 { 0.0 } else { correlation(&x, &series[k]) })
        })
        .collect();
    let totals = [0, 1, 2].map(|k| r.iter().map(|c| c[k] * c[k]).sum::<f64>());
    let share = |c: f64, k: usize| if totals[k] > 0.0 { 100.0 * c * c / totals[k] } else { 0.0 };
    let mut contributions: Vec<Contribution> = factors
        .iter()
        .zip(&r)
        .map(|(f, c)| Contribution {
            key: f.key,
            half_width: f.half_width,
            unit: f.unit,
            duty_share_percent: share(c[0], 0),
            duty_correlation: c[0],
            hot_outlet_share_percent: share(c[1], 1),
            cold_outlet_share_percent: share(c[2], 2),
        })
        .collect();
    contributions.sort_by(|a, b| b.duty_share_percent.total_cmp(&a.duty_share_percent));
    (spreads, contributions)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splitmix_matches_the_reference_stream() {
        // Vigna's splitmix64.c from seed 1234567: first outputs 6457827717110365317,
        // 3203168211198807973 [M, checked against the reference C code's published output].
        let mut g = SplitMix64::new(1_234_567);
        assert_eq!(g.next_u64(), 6_457_827_717_110_365_317);
        assert_eq!(g.next_u64(), 3_203_168_211_198_807_973);
    }

    #[test]
    fn every_stratum_once_per_column() {
        let n = 97;
        let h = latin_hypercube(n, 5, 3);
        for j in 0..5 {
            let mut seen = vec![false; n];
            for row in &h {
                let k = (row[j] * n as f64).floor() as usize;
                assert!(!seen[k], "stratum {k} twice in column {j}");
                seen[k] = true;
            }
        }
        assert_eq!(latin_hypercube(10, 3, 9), latin_hypercube(10, 3, 9));
        assert_ne!(latin_hypercube(10, 3, 9), latin_hypercube(10, 3, 10));
    }

    #[test]
    fn quantiles_follow_definition_7() {
        // numpy.percentile([1, 2, 3, 4, 10], [5, 50, 95]) = [1.2, 3.0, 8.8] (linear method) [C].
        let x = [1.0, 2.0, 3.0, 4.0, 10.0];
        assert!((quantile(&x, 0.05) - 1.2).abs() < 1e-12);
        assert!((quantile(&x, 0.50) - 3.0).abs() < 1e-12);
        assert!((quantile(&x, 0.95) - 8.8).abs() < 1e-12);
    }
}

/// Everything an uncertainty run reports (uncertainty.json).
#[derive(Debug, Clone, Serialize)]
pub struct UncertaintyReport {
    /// Case name.
    pub case: String,
    /// SHA-256 of the case file.
    pub input_sha256: String,
    /// hxgrid version.
    pub hxgrid_version: &'static str,
    /// Samples asked for.
    pub samples: usize,
    /// Seed.
    pub seed: u64,
    /// Samples that failed (not in the percentiles).
    pub samples_failed: usize,
    /// Cells of each sample's grid.
    pub cells: usize,
    /// How inputs are sampled.
    pub method: &'static str,
    /// The uncertain inputs.
    pub inputs: Vec<Factor>,
    /// Duty and outlets: nominal, grid error, percentiles.
    pub results: Vec<Spread>,
    /// Inputs ranked by their share of the duty's spread.
    pub contributors: Vec<Contribution>,
    /// Where the model's own spread is not in the samples.
    pub notes: Vec<String>,
    /// The standing caution.
    pub caution: &'static str,
    /// Each sample (written to samples.csv, not the JSON).
    #[serde(skip)]
    pub sample_rows: Vec<Sample>,
}

/// The method, in words.
pub const METHOD: &str = "Latin-hypercube Monte Carlo (McKay, Beckman & Conover 1979); each input rectangular over ± its half-width (JCGM 100:2008 §4.3.7); percentiles by Hyndman & Fan definition 7; shares are normalised squared correlations";

/// Run the study on the case's nominal exchanger; `nominal` is its full rating.
pub fn study(case: &Case, nominal: &crate::results::SteadyReport, spec: &UncertaintySpec, tick: &(dyn Fn() + Sync)) -> UncertaintyReport {
    let ex = case.build();
    let factors = factors(case, &ex, spec);
    let samples = run(&ex, &case.solver, &factors, spec, tick);
    let (results, contributors) = summarise(nominal.key_quantities(), nominal.grid_error_estimate.as_ref().map(|g| g.estimated_error), &factors, &samples);
    let mut notes = vec![
        "The spread covers the listed inputs only: not geometry tolerances, property data or the cell model; the grid error is listed beside each result".to_string(),
        "A film factor multiplies the whole film coefficient (laminar, transition and turbulent alike); for finned surfaces the fin efficiency stays at its nominal value".to_string(),
    ];
    for f in factors.iter().filter(|f| f.half_width == 0.0) {
        notes.push(format!("{} is 0: {}", f.key, f.source));
    }
    UncertaintyReport {
        case: case.name.clone(),
        input_sha256: case.source.sha256(),
        hxgrid_version: env!("CARGO_PKG_VERSION"),
        samples: spec.samples,
        seed: spec.seed,
        samples_failed: samples.iter().filter(|s| s.outcome.is_err()).count(),
        cells: case.solver.cells,
        method: METHOD,
        inputs: factors,
        results,
        contributors,
        notes,
        caution: crate::results::CAUTION,
        sample_rows: samples,
    }
}
