//! The rate law of the model (A + B -> P, r = k c_A^a c_B^b, B dosed) fitted to the thermal
//! conversion of isothermal runs: a golden-section search on ln k per run, then a straight
//! line of ln k against 1/T across the runs for Ea and k_ref.

use crate::lab::arc::least_squares_line;
use crate::model::network::{GAS_CONSTANT, arrhenius};
use crate::numeric::golden_section_max;

/// A run whose reactor temperature spans at most this band (K) counts as isothermal (a
/// screening choice of this program).
pub const ISOTHERMAL_BAND: f64 = 2.0;
/// Points of the coarse scan of ln k before the golden-section refinement.
const SCAN_POINTS: usize = 49;
/// The scan covers reactions from 1/SLOWEST_SHARE to 1/FASTEST_SHARE of the run's duration
/// as characteristic time: 1e-2 (barely starts) to 1e4 (follows the feed).
const SLOWEST: f64 = 1e-2;
const FASTEST: f64 = 1e4;
/// Largest step of the integration relative to the reaction's own time scale.
const STEP_SHARE: f64 = 0.25;
/// Cap of substeps between two data points.
const MAX_SUBSTEPS: usize = 400;

/// The rate law and the charge of one run, SI: mol, m^3.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RateModel {
    /// Order in the charged reactant A (0 when the rate does not depend on it).
    pub order_charged: f64,
    /// Order in the dosed reactant B.
    pub order_dosed: f64,
    /// mol of A at the start; infinite when A is not tracked (order 0).
    pub charge_amount: f64,
    /// m^3 of liquid at the start.
    pub volume_start: f64,
    /// m^3 the whole feed adds; the volume grows in proportion to the dosed amount.
    pub feed_volume: f64,
}

impl RateModel {
    pub fn overall_order(&self) -> f64 {
        self.order_charged + self.order_dosed
    }

    /// d(extent)/dt, mol/s, at extent `xi`, dosed `n_dosed` (mol) and volume `v` (m^3).
    fn rate(&self, k: f64, xi: f64, n_dosed: f64, v: f64) -> f64 {
        let c_a = ((self.charge_amount - xi) / v).max(0.0);
        let c_b = ((n_dosed - xi) / v).max(0.0);
        k * v * power(c_a, self.order_charged) * power(c_b, self.order_dosed)
    }

    /// An upper bound of |d rate / d xi| / 1, 1/s, from the largest concentrations.
    fn stiffness(&self, k: f64, dosed_total: f64) -> f64 {
        let v = self.volume_start.max(1e-300);
        let c_a = if self.charge_amount.is_finite() {
            self.charge_amount / v
        } else {
            1.0
        };
        let c_b = dosed_total / v;
        let (a, b) = (self.order_charged, self.order_dosed);
        let term_a = if a > 0.0 {
            a * power(c_a, a - 1.0) * power(c_b, b)
        } else {
            0.0
        };
        let term_b = if b > 0.0 {
            b * power(c_a, a) * power(c_b, b - 1.0)
        } else {
            0.0
        };
        k * (term_a + term_b)
    }

    /// A concentration scale (mol/m^3) for the range of k: the larger start concentration.
    fn concentration_scale(&self, dosed_total: f64) -> f64 {
        let v = self.volume_start.max(1e-300);
        let c_a = if self.charge_amount.is_finite() {
            self.charge_amount / v
        } else {
            0.0
        };
        c_a.max(dosed_total / v).max(1e-12)
    }
}

fn power(c: f64, order: f64) -> f64 {
    if order == 0.0 { 1.0 } else { c.powf(order) }
}

/// A run for the fit, SI series of equal length (s, K, mol dosed cumulative, X_th measured).
#[derive(Debug, Clone, Copy)]
pub struct FitRun<'a> {
    pub time: &'a [f64],
    pub reactor_temperature: &'a [f64],
    pub dosed: &'a [f64],
    pub thermal_conversion: &'a [f64],
    pub model: RateModel,
}

impl FitRun<'_> {
    fn dosed_total(&self) -> f64 {
        self.dosed[self.dosed.len() - 1] - self.dosed[0]
    }

    fn duration(&self) -> f64 {
        self.time[self.time.len() - 1] - self.time[0]
    }

    /// Mean reactor temperature, K.
    pub fn mean_temperature(&self) -> f64 {
        self.reactor_temperature.iter().sum::<f64>() / self.reactor_temperature.len() as f64
    }

    /// max - min of the reactor temperature, K.
    pub fn temperature_span(&self) -> f64 {
        let (lo, hi) = self
            .reactor_temperature
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &t| {
                (lo.min(t), hi.max(t))
            });
        hi - lo
    }
}

/// X_th(t) of the rate law with rate constant k(T) along the run's measured temperature and
/// dosing: d xi/dt = k V c_A^a c_B^b, c_A = (n_A0 - xi)/V, c_B = (n_dosed(t) - xi)/V; X_th =
/// xi / n_dosed,total. Classical RK4 with the measured series interpolated linearly between
/// points and substeps held below STEP_SHARE of the reaction's time scale.
pub fn simulate_conversion(run: &FitRun, rate_constant: &dyn Fn(f64) -> f64) -> Vec<f64> {
    let m = run.model;
    let total = run.dosed_total();
    let n0 = run.dosed[0];
    let k_max = run
        .reactor_temperature
        .iter()
        .map(|&t| rate_constant(t))
        .fold(0.0_f64, f64::max);
    let stiffness = m.stiffness(k_max, total);
    let mut xi = 0.0_f64;
    let mut out = Vec::with_capacity(run.time.len());
    out.push(0.0);
    for i in 1..run.time.len() {
        let (t0, t1) = (run.time[i - 1], run.time[i]);
        let h_total = t1 - t0;
        let substeps = ((h_total * stiffness / STEP_SHARE).ceil() as usize).clamp(1, MAX_SUBSTEPS);
        let h = h_total / substeps as f64;
        let at = |s: f64| {
            let w = (s - t0) / h_total;
            let lerp = |a: &[f64]| a[i - 1] + w * (a[i] - a[i - 1]);
            let n_dosed = lerp(run.dosed) - n0;
            let v = m.volume_start + m.feed_volume * n_dosed / total;
            (rate_constant(lerp(run.reactor_temperature)), n_dosed, v)
        };
        let f = |s: f64, x: f64| {
            let (k, n_dosed, v) = at(s);
            m.rate(k, x, n_dosed, v)
        };
        for j in 0..substeps {
            let s = t0 + j as f64 * h;
            let k1 = f(s, xi);
            let k2 = f(s + 0.5 * h, xi + 0.5 * h * k1);
            let k3 = f(s + 0.5 * h, xi + 0.5 * h * k2);
            let k4 = f(s + h, xi + h * k3);
            xi += h / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4);
            let (_, n_dosed, _) = at(s + h);
            xi = xi.clamp(0.0, n_dosed.min(m.charge_amount).max(0.0));
        }
        out.push(xi / total);
    }
    out
}

/// Root mean square of measured X_th minus s X_sim + c (t - t0)/duration, with the scale s and
/// the drift c that fit best (linear least squares, given X_sim). An offset e of the baseline
/// adds e (t - t0) to Q(t) and e times the duration to Q_total: a drift and a scale of X_th,
/// which the two parameters take up, so that the noise of the baseline windows, integrated
/// over a long run, does not bend k. Without a solvable 2 x 2 system: s = 1, c = 0.
pub fn rms_with_drift(time: &[f64], simulated: &[f64], measured: &[f64]) -> f64 {
    let n = simulated.len().min(measured.len()).min(time.len());
    if n == 0 {
        return 0.0;
    }
    let span = (time[n - 1] - time[0]).max(f64::MIN_POSITIVE);
    let tau = |i: usize| (time[i] - time[0]) / span;
    let (mut sxx, mut sxt, mut stt, mut sxy, mut sty) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for i in 0..n {
        let (x, t, y) = (simulated[i], tau(i), measured[i]);
        sxx += x * x;
        sxt += x * t;
        stt += t * t;
        sxy += x * y;
        sty += t * y;
    }
    let det = sxx * stt - sxt * sxt;
    let (scale, drift) = if det.abs() > 1e-12 * sxx * stt && det.is_finite() {
        ((sxy * stt - sty * sxt) / det, (sxx * sty - sxt * sxy) / det)
    } else {
        (1.0, 0.0)
    };
    let sum: f64 = (0..n)
        .map(|i| {
            let e = measured[i] - scale * simulated[i] - drift * tau(i);
            e * e
        })
        .sum();
    (sum / n as f64).sqrt()
}

/// Best constant k of one run: (k, RMS of X_th, see `rms_with_drift`). A coarse scan of ln k over the range of
/// SLOWEST..FASTEST characteristic times, then a golden-section search between the scan's
/// neighbours of its best point.
pub fn fit_rate_constant(run: &FitRun) -> (f64, f64) {
    let scale = run.model.concentration_scale(run.dosed_total());
    let order_term = scale.powf(run.model.overall_order() - 1.0);
    let ln_lo = (SLOWEST / (run.duration() * order_term)).ln();
    let ln_hi = (FASTEST / (run.duration() * order_term)).ln();
    let misfit = |ln_k: f64| {
        let k = ln_k.exp();
        rms_with_drift(
            run.time,
            &simulate_conversion(run, &|_| k),
            run.thermal_conversion,
        )
    };
    let step = (ln_hi - ln_lo) / (SCAN_POINTS - 1) as f64;
    let best = (0..SCAN_POINTS)
        .map(|i| (i, misfit(ln_lo + i as f64 * step)))
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map_or(0, |(i, _)| i);
    let a = ln_lo + best.saturating_sub(1) as f64 * step;
    let b = ln_lo + (best + 1).min(SCAN_POINTS - 1) as f64 * step;
    let (ln_k, neg) = golden_section_max(&|x| -misfit(x), a, b, 50);
    (ln_k.exp(), -neg)
}

/// k_ref, Ea and the fit's residual across isothermal runs.
#[derive(Debug, Clone, PartialEq)]
pub struct ArrheniusFit {
    /// Per run: (mean temperature K, fitted k, RMS of X_th with that k).
    pub runs: Vec<(f64, f64, f64)>,
    pub k_ref: f64,
    /// K: 1/mean(1/T) of the runs, where k_ref and Ea are uncorrelated.
    pub reference_temperature: f64,
    pub activation_energy: f64,
    /// RMS of X_th over every point of every run with k(T) of the fitted Arrhenius law (each
    /// run with its own scale and drift, see `rms_with_drift`).
    pub residual_rms: f64,
}

/// Fits every run, then ln k = ln k_ref - (Ea/R)(1/T - 1/T_ref). None with fewer than two
/// distinct temperatures.
pub fn fit_arrhenius(runs: &[FitRun]) -> Option<ArrheniusFit> {
    let fitted: Vec<(f64, f64, f64)> = runs
        .iter()
        .map(|r| {
            let (k, residual) = fit_rate_constant(r);
            (r.mean_temperature(), k, residual)
        })
        .collect();
    let x: Vec<f64> = fitted.iter().map(|f| 1.0 / f.0).collect();
    let y: Vec<f64> = fitted.iter().map(|f| f.1.ln()).collect();
    let line = least_squares_line(&x, &y)?;
    if (x.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
        - x.iter().cloned().fold(f64::INFINITY, f64::min))
        * 1e4
        < 1e-6
    {
        return None;
    }
    let reference_temperature = 1.0 / line.x_mean;
    let k_ref = line.intercept.exp();
    let activation_energy = -line.slope * GAS_CONSTANT;
    let (mut sum, mut count) = (0.0, 0usize);
    for r in runs {
        let k = |t: f64| arrhenius(k_ref, activation_energy, reference_temperature, t);
        let sim = simulate_conversion(r, &k);
        let e = rms_with_drift(r.time, &sim, r.thermal_conversion);
        sum += e * e * sim.len() as f64;
        count += sim.len();
    }
    Some(ArrheniusFit {
        runs: fitted,
        k_ref,
        reference_temperature,
        activation_energy,
        residual_rms: (sum / count.max(1) as f64).sqrt(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A measured curve that is 0.98 X_sim + 0.01 (t - t0)/duration fits with zero residual;
    /// a different shape does not.
    #[test]
    fn scale_and_drift_are_taken_up() {
        let t: Vec<f64> = (0..50).map(|i| i as f64 * 7.0).collect();
        let sim: Vec<f64> = t.iter().map(|t| 1.0 - (-t / 60.0).exp()).collect();
        let end = t[t.len() - 1];
        let measured: Vec<f64> = t
            .iter()
            .zip(&sim)
            .map(|(t, x)| 0.98 * x + 0.01 * t / end)
            .collect();
        assert!(rms_with_drift(&t, &sim, &measured) < 1e-12);
        let other: Vec<f64> = t.iter().map(|t| 1.0 - (-t / 30.0).exp()).collect();
        assert!(rms_with_drift(&t, &sim, &other) > 1e-3);
    }

    /// Batch, first order in B dosed all at t = 0: X_th = 1 - exp(-k t) (the analytic solution).
    #[test]
    fn first_order_batch_matches_the_exponential() {
        let time: Vec<f64> = (0..=100).map(|i| i as f64 * 10.0).collect();
        let dosed: Vec<f64> = time
            .iter()
            .map(|&t| if t > 0.0 { 1.0 } else { 0.0 })
            .collect();
        // Dosing the whole amount within the first 10 s; afterwards the solution is
        // 1 - exp(-k (t - tau)) for some tau in (0, 10 s): check the ratio of successive
        // remainders, which must be exp(-k dt).
        let temp = vec![300.0; time.len()];
        let x = vec![0.0; time.len()];
        let run = FitRun {
            time: &time,
            reactor_temperature: &temp,
            dosed: &dosed,
            thermal_conversion: &x,
            model: RateModel {
                order_charged: 0.0,
                order_dosed: 1.0,
                charge_amount: f64::INFINITY,
                volume_start: 1e-3,
                feed_volume: 0.0,
            },
        };
        let k = 3e-3;
        let sim = simulate_conversion(&run, &|_| k);
        for i in 5..50 {
            let ratio = (1.0 - sim[i + 1]) / (1.0 - sim[i]);
            assert!((ratio - (-k * 10.0_f64).exp()).abs() < 1e-7, "{i}: {ratio}");
        }
        // Fitting the simulated curve gives k back.
        let run = FitRun {
            thermal_conversion: &sim,
            ..run
        };
        let (fitted, residual) = fit_rate_constant(&run);
        assert!((fitted / k - 1.0).abs() < 1e-4, "{fitted}");
        assert!(residual < 1e-6);
    }
}
