//! Adiabatic (accelerating-rate) calorimetry: the phi factor of the cell, the self-heat rate,
//! the exotherm, and its figures corrected to phi = 1 (Townsend and Tou; Fisher and Goetz).
//!
//! Pure functions on slices of SI values (s, K, K/s); reading files is elsewhere.

pub mod input;

use crate::model::network::GAS_CONSTANT;

/// Detection threshold of the self-heat rate, K/s: 0.02 K/min, common practice for ARC
/// (ASTM E1981 calls about 0.02 K/min typical; value from memory).
pub const DEFAULT_THRESHOLD: f64 = 0.02 / 60.0;
/// Points on each side of the local least-squares slope (a 5-point window).
pub const DEFAULT_HALF_WINDOW: usize = 2;
/// Highest conversion (T - T_onset)/dT_ad,meas of the points of the Arrhenius fit.
pub const DEFAULT_FIT_CONVERSION: f64 = 0.5;
/// Fewest points the Arrhenius fit accepts.
const MIN_FIT_POINTS: usize = 3;
/// Most points of the TMRad curve reported.
const MAX_CURVE_POINTS: usize = 25;

/// phi = 1 + m_cell cp_cell / (m_sample cp_sample): the thermal inertia of sample and cell
/// over that of the sample alone (Townsend and Tou, Thermochim. Acta 37 (1980) 1).
pub fn phi_factor(sample_mass: f64, sample_cp: f64, cell_mass: f64, cell_cp: f64) -> f64 {
    1.0 + cell_mass * cell_cp / (sample_mass * sample_cp)
}

/// How the exotherm is found and fitted.
#[derive(Debug, Clone, Copy)]
pub struct ArcSettings {
    pub phi: f64,
    /// Self-heat rate (K/s) from which the exotherm counts as detected.
    pub threshold: f64,
    pub half_window: usize,
    /// Apparent order n of the rate in (1 - X): k = m / ((1 - X)^n dT_ad,meas).
    pub order: f64,
    pub fit_conversion: f64,
}

impl ArcSettings {
    pub fn with_phi(phi: f64) -> ArcSettings {
        ArcSettings {
            phi,
            threshold: DEFAULT_THRESHOLD,
            half_window: DEFAULT_HALF_WINDOW,
            order: 1.0,
            fit_conversion: DEFAULT_FIT_CONVERSION,
        }
    }
}

/// Why a series gives no figures; `index` is the 0-based data point.
#[derive(Debug, Clone, PartialEq)]
pub enum ArcProblem {
    TooFewPoints { found: usize, needed: usize },
    TimeNotIncreasing { index: usize },
    NoExotherm { max_rate: f64 },
    TooFewFitPoints { found: usize },
    NoActivationEnergy { slope: f64 },
}

impl std::fmt::Display for ArcProblem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ArcProblem::TooFewPoints { found, needed } => {
                write!(f, "{found} data points; at least {needed} are needed")
            }
            ArcProblem::TimeNotIncreasing { index } => write!(
                f,
                "time does not increase at data point {} (accepted: strictly increasing time)",
                index + 1
            ),
            ArcProblem::NoExotherm { max_rate } => write!(
                f,
                "no exotherm: the highest self-heat rate, {:.4} K/min, stays below the detection threshold",
                max_rate * 60.0
            ),
            ArcProblem::TooFewFitPoints { found } => write!(
                f,
                "only {found} points in the early exotherm for the Arrhenius fit (at least {MIN_FIT_POINTS} needed)"
            ),
            ArcProblem::NoActivationEnergy { slope } => write!(
                f,
                "the Arrhenius fit of the self-heat rate gives no positive activation energy (slope {slope:.3e} K)"
            ),
        }
    }
}

/// One point of the TMRad curve at phi = 1.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TmrPoint {
    /// K, the measured temperature (the correction is taken at the same temperature).
    pub temperature: f64,
    /// K/s at phi = 1: phi times the measured rate.
    pub self_heat_rate: f64,
    /// s at phi = 1: the measured time to maximum rate over phi.
    pub tmr_ad: f64,
}

/// The figures of one adiabatic run, measured and corrected to phi = 1 (kelvin, seconds).
#[derive(Debug, Clone)]
pub struct ArcFigures {
    pub phi: f64,
    pub onset_measured: f64,
    pub onset_corrected: f64,
    pub max_temperature_measured: f64,
    /// T0 + phi (T_max - T0), with T0 the measured onset.
    pub max_temperature_corrected: f64,
    pub rise_measured: f64,
    pub rise_corrected: f64,
    pub max_rate_measured: f64,
    pub max_rate_corrected: f64,
    pub time_to_max_rate_measured: f64,
    pub activation_energy: f64,
    /// ln of the apparent rate constant (1/s) at `fit_reference_temperature`.
    pub ln_rate_constant: f64,
    pub fit_reference_temperature: f64,
    pub fit_points: usize,
    pub order: f64,
    pub tmr_curve: Vec<TmrPoint>,
}

/// Self-heat rate dT/dt (K/s) at every point: the slope of a straight line fitted by least
/// squares to the 2w+1 points around it (fewer at the ends). Differences of neighbours would
/// amplify the thermometer's resolution steps, which at the low rates near the onset are as
/// large as the rise between two readings; the local least-squares slope is the first-
/// derivative Savitzky–Golay filter (Savitzky and Golay, Anal. Chem. 36 (1964) 1627), written
/// for uneven time steps. It follows a line exactly and a parabola at the centre exactly.
pub fn self_heat_rate(time: &[f64], temperature: &[f64], half_window: usize) -> Vec<f64> {
    let n = time.len().min(temperature.len());
    let w = half_window.max(1);
    (0..n)
        .map(|i| {
            let lo = i.saturating_sub(w);
            let hi = (i + w + 1).min(n);
            least_squares_line(&time[lo..hi], &temperature[lo..hi]).map_or(0.0, |l| l.slope)
        })
        .collect()
}

/// y = intercept + slope (x - x_mean).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Line {
    pub slope: f64,
    pub intercept: f64,
    pub x_mean: f64,
}

impl Line {
    pub fn at(&self, x: f64) -> f64 {
        self.intercept + self.slope * (x - self.x_mean)
    }
}

/// Ordinary least-squares straight line; None with fewer than two distinct x.
pub fn least_squares_line(x: &[f64], y: &[f64]) -> Option<Line> {
    let n = x.len().min(y.len());
    if n < 2 {
        return None;
    }
    let x_mean = x[..n].iter().sum::<f64>() / n as f64;
    let y_mean = y[..n].iter().sum::<f64>() / n as f64;
    let (mut sxy, mut sxx) = (0.0, 0.0);
    for (xi, yi) in x[..n].iter().zip(&y[..n]) {
        sxy += (xi - x_mean) * (yi - y_mean);
        sxx += (xi - x_mean) * (xi - x_mean);
    }
    (sxx > 0.0).then(|| Line {
        slope: sxy / sxx,
        intercept: y_mean,
        x_mean,
    })
}

/// Fisher and Goetz (J. Loss Prev. Process Ind. 4 (1991) 305): the onset a cell of phi = 1
/// would show, 1/T_onset,phi=1 = 1/T_onset,meas + (R/E) ln phi.
pub fn corrected_onset(onset_measured: f64, activation_energy: f64, phi: f64) -> f64 {
    1.0 / (1.0 / onset_measured + GAS_CONSTANT / activation_energy * phi.ln())
}

/// T_corr = T0 + phi (T - T0): a temperature of the measured curve on the phi = 1 scale.
pub fn corrected_temperature(t0: f64, temperature: f64, phi: f64) -> f64 {
    t0 + phi * (temperature - t0)
}

/// Every figure of one run.
pub fn analyse(
    time: &[f64],
    temperature: &[f64],
    s: &ArcSettings,
) -> Result<ArcFigures, ArcProblem> {
    check_series(time, temperature, s.half_window)?;
    let rate = self_heat_rate(time, temperature, s.half_window);
    let (onset, peak) = exotherm(&rate, s.threshold)?;
    let t0 = temperature[onset];
    let max_temperature = temperature[onset..]
        .iter()
        .fold(f64::NEG_INFINITY, |a, &b| a.max(b));
    let rise = max_temperature - t0;
    let fit = arrhenius_fit(&temperature[onset..=peak], &rate[onset..=peak], t0, rise, s)?;
    let activation_energy = -fit.slope * GAS_CONSTANT;
    if activation_energy.is_nan() || activation_energy <= 0.0 {
        return Err(ArcProblem::NoActivationEnergy { slope: fit.slope });
    }
    Ok(ArcFigures {
        phi: s.phi,
        onset_measured: t0,
        onset_corrected: corrected_onset(t0, activation_energy, s.phi),
        max_temperature_measured: max_temperature,
        max_temperature_corrected: corrected_temperature(t0, max_temperature, s.phi),
        rise_measured: rise,
        rise_corrected: s.phi * rise,
        max_rate_measured: rate[peak],
        max_rate_corrected: s.phi * rate[peak],
        time_to_max_rate_measured: time[peak] - time[onset],
        activation_energy,
        ln_rate_constant: fit.line.at(1.0 / t0),
        fit_reference_temperature: t0,
        fit_points: fit.points,
        order: s.order,
        tmr_curve: tmr_curve(time, temperature, &rate, onset, peak, s.phi),
    })
}

fn check_series(time: &[f64], temperature: &[f64], half_window: usize) -> Result<(), ArcProblem> {
    let needed = (2 * half_window + 1).max(MIN_FIT_POINTS + 2);
    let n = time.len().min(temperature.len());
    if n < needed {
        return Err(ArcProblem::TooFewPoints { found: n, needed });
    }
    match time.windows(2).position(|w| w[1].is_nan() || w[1] <= w[0]) {
        Some(i) => Err(ArcProblem::TimeNotIncreasing { index: i + 1 }),
        None => Ok(()),
    }
}

/// (onset, peak) indices: the peak is the highest self-heat rate; the onset the first point
/// from which the rate stays at or above the threshold up to the peak (so that heater steps
/// and noise before the exotherm do not count).
pub fn exotherm(rate: &[f64], threshold: f64) -> Result<(usize, usize), ArcProblem> {
    let peak = (0..rate.len())
        .max_by(|&a, &b| rate[a].total_cmp(&rate[b]))
        .ok_or(ArcProblem::TooFewPoints {
            found: 0,
            needed: MIN_FIT_POINTS,
        })?;
    if rate[peak] < threshold {
        return Err(ArcProblem::NoExotherm {
            max_rate: rate[peak],
        });
    }
    let below = rate[..=peak].iter().rposition(|&r| r < threshold);
    Ok((below.map_or(0, |i| i + 1), peak))
}

struct ArrheniusFit {
    line: Line,
    slope: f64,
    points: usize,
}

/// ln k = ln(m / ((1 - X)^n dT_ad,meas)) against 1/T over the points with conversion up to
/// `fit_conversion`: the apparent nth-order rate constant of Townsend and Tou (1980).
fn arrhenius_fit(
    temperature: &[f64],
    rate: &[f64],
    t0: f64,
    rise: f64,
    s: &ArcSettings,
) -> Result<ArrheniusFit, ArcProblem> {
    let (mut x, mut y) = (Vec::new(), Vec::new());
    for (&t, &m) in temperature.iter().zip(rate) {
        let conversion = (t - t0) / rise;
        if conversion > s.fit_conversion || conversion >= 1.0 || m <= 0.0 {
            continue;
        }
        x.push(1.0 / t);
        y.push((m / ((1.0 - conversion.max(0.0)).powf(s.order) * rise)).ln());
    }
    if x.len() < MIN_FIT_POINTS {
        return Err(ArcProblem::TooFewFitPoints { found: x.len() });
    }
    let line = least_squares_line(&x, &y).ok_or(ArcProblem::TooFewFitPoints { found: 1 })?;
    Ok(ArrheniusFit {
        slope: line.slope,
        line,
        points: x.len(),
    })
}

/// TMRad at phi = 1 at the measured temperatures from the onset to the peak: the measured time
/// to maximum rate divided by phi, and phi times the measured self-heat rate, at the same
/// temperature (the correction of Townsend and Tou, 1980; exact for zero order before
/// depletion, an approximation otherwise). At most MAX_CURVE_POINTS, evenly spread.
fn tmr_curve(
    time: &[f64],
    temperature: &[f64],
    rate: &[f64],
    onset: usize,
    peak: usize,
    phi: f64,
) -> Vec<TmrPoint> {
    let count = peak - onset + 1;
    let step = count.div_ceil(MAX_CURVE_POINTS).max(1);
    (onset..=peak)
        .step_by(step)
        .map(|i| TmrPoint {
            temperature: temperature[i],
            self_heat_rate: phi * rate[i],
            tmr_ad: (time[peak] - time[i]) / phi,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn phi_of_a_heavy_cell() {
        // 5 g sample at 2 J/(g K) in a 20 g cell at 0.5 J/(g K): 1 + 10/10 = 2 (the definition).
        assert!((phi_factor(5e-3, 2000.0, 20e-3, 500.0) - 2.0).abs() < 1e-12);
    }

    #[test]
    fn local_slope_follows_a_parabola_at_the_centre() {
        // d/dt (1 + 2t + 3t^2) = 2 + 6t; the symmetric least-squares slope is exact for it.
        let t: Vec<f64> = (0..11).map(|i| i as f64 * 0.5).collect();
        let y: Vec<f64> = t.iter().map(|t| 1.0 + 2.0 * t + 3.0 * t * t).collect();
        let r = self_heat_rate(&t, &y, 2);
        for i in 2..9 {
            assert!((r[i] - (2.0 + 6.0 * t[i])).abs() < 1e-9, "{i}");
        }
    }

    #[test]
    fn onset_ignores_an_early_spike() {
        let rate = [0.0, 1.0, 0.0, 0.1, 0.5, 0.6, 2.0, 0.3];
        assert_eq!(exotherm(&rate, 0.4), Ok((4, 6)));
        assert!(matches!(
            exotherm(&[0.1, 0.2], 0.4),
            Err(ArcProblem::NoExotherm { .. })
        ));
    }
}
