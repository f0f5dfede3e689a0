//! A stiff integrator for the stretches an explicit method cannot follow (a runaway whose
//! reactions become very fast, a feed consumed the instant it enters at a high temperature):
//! linearly implicit Euler steps with a numerical Jacobian, extrapolated to third order from
//! the step sequence 1, 2, 3 (Deuflhard's extrapolation of the linearly implicit Euler method;
//! L-stable), with the difference of the last two extrapolates as the error estimate.

use nalgebra::{DMatrix, DVector};

/// Right-hand side on the scaled state: f(t, y, dy).
pub type Rhs<'a> = &'a dyn Fn(f64, &[f64], &mut [f64]);
/// Called at each accepted step with (t, y, f(t, y)); true stops the integration.
pub type OnStep<'a> = &'a mut dyn FnMut(f64, &[f64], &[f64]) -> bool;

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StiffFailure {
    TooManySteps { at_time: f64 },
    StepSizeUnderflow { at_time: f64 },
    Singular { at_time: f64 },
}

/// Tolerances and budget of one stiff stretch.
#[derive(Debug, Clone, Copy)]
pub struct StiffSettings {
    pub relative_tolerance: f64,
    pub absolute_tolerance: f64,
    pub max_steps: u32,
    pub initial_step: f64,
    /// Components [start, end) that cannot be negative (amounts, conversions): a step that
    /// drives one below -absolute_tolerance is rejected and retried shorter, so that an
    /// instantaneous reaction does not step past the exhaustion of its limiting reagent.
    pub nonnegative: (usize, usize),
}

/// Integrates y' = f(t, y) from (t0, y0) to t1. Returns the time reached (t1, or earlier when
/// `on_step` stopped it).
pub fn integrate_stiff(
    f: Rhs<'_>,
    t0: f64,
    y0: &[f64],
    t1: f64,
    settings: StiffSettings,
    on_step: OnStep<'_>,
) -> Result<f64, StiffFailure> {
    let n = y0.len();
    let (mut t, mut y) = (t0, y0.to_vec());
    let mut f0 = vec![0.0; n];
    f(t, &y, &mut f0);
    let mut h = settings.initial_step.min(t1 - t0).max(1e-12 * (t1 - t0));
    let mut steps = 0;
    while t < t1 {
        if steps >= settings.max_steps {
            return Err(StiffFailure::TooManySteps { at_time: t });
        }
        steps += 1;
        let last = t + h >= t1 * (1.0 - 1e-14);
        if last {
            h = t1 - t;
        }
        let jacobian = numerical_jacobian(f, t, &y, &f0);
        let time_derivative = numerical_time_derivative(f, t, &y, &f0);
        let linear = Linearisation {
            jacobian: &jacobian,
            time_derivative: &time_derivative,
        };
        let (candidate, error) = extrapolated_step(f, t, &y, &f0, h, &linear)
            .ok_or(StiffFailure::Singular { at_time: t })?;
        let error = error_norm(&y, &candidate, &error, settings);
        let factor = (0.9 * error.max(1e-10).powf(-1.0 / 3.0)).clamp(0.2, 4.0);
        if error <= 1.0 && admissible(&candidate, settings) {
            t = if last { t1 } else { t + h };
            y = candidate;
            f(t, &y, &mut f0);
            if on_step(t, &y, &f0) {
                return Ok(t);
            }
            h *= factor;
        } else {
            h *= factor.min(0.5);
        }
        if h < 1e-14 * t.abs().max(1.0) {
            return Err(StiffFailure::StepSizeUnderflow { at_time: t });
        }
    }
    Ok(t)
}

/// Finite, and no component that must stay nonnegative below -absolute_tolerance.
fn admissible(candidate: &[f64], settings: StiffSettings) -> bool {
    let (from, to) = settings.nonnegative;
    candidate.iter().all(|v| v.is_finite())
        && candidate
            .get(from..to.min(candidate.len()))
            .is_none_or(|c| c.iter().all(|v| *v >= -settings.absolute_tolerance))
}

fn numerical_jacobian(f: Rhs<'_>, t: f64, y: &[f64], f0: &[f64]) -> DMatrix<f64> {
    let n = y.len();
    let mut jacobian = DMatrix::zeros(n, n);
    let mut probe = y.to_vec();
    let mut shifted = vec![0.0; n];
    for j in 0..n {
        let delta = f64::EPSILON.sqrt() * y[j].abs().max(1e-6);
        probe[j] = y[j] + delta;
        f(t, &probe, &mut shifted);
        probe[j] = y[j];
        for i in 0..n {
            jacobian[(i, j)] = (shifted[i] - f0[i]) / delta;
        }
    }
    jacobian
}

/// df/dt at fixed y, by a forward difference: the feed makes the balance depend on time, and
/// leaving this out would cost the stiff components their order.
fn numerical_time_derivative(f: Rhs<'_>, t: f64, y: &[f64], f0: &[f64]) -> Vec<f64> {
    let delta = f64::EPSILON.sqrt() * t.abs().max(1.0);
    let mut shifted = vec![0.0; y.len()];
    f(t + delta, y, &mut shifted);
    shifted
        .iter()
        .zip(f0)
        .map(|(a, b)| (a - b) / delta)
        .collect()
}

/// The Jacobian and df/dt at the start of a macro step.
struct Linearisation<'a> {
    jacobian: &'a DMatrix<f64>,
    time_derivative: &'a [f64],
}

/// One macro step of size h: the linearly implicit Euler solutions with 1, 2 and 3 sub-steps,
/// extrapolated (T33, third order); returns it with T33 - T32 as the error.
fn extrapolated_step(
    f: Rhs<'_>,
    t: f64,
    y: &[f64],
    f0: &[f64],
    h: f64,
    linear: &Linearisation<'_>,
) -> Option<(Vec<f64>, Vec<f64>)> {
    let t11 = euler_substeps(f, t, y, f0, h, 1, linear)?;
    let t21 = euler_substeps(f, t, y, f0, h, 2, linear)?;
    let t31 = euler_substeps(f, t, y, f0, h, 3, linear)?;
    let n = y.len();
    let mut t33 = vec![0.0; n];
    let mut error = vec![0.0; n];
    for i in 0..n {
        let t22 = 2.0 * t21[i] - t11[i];
        let t32 = 3.0 * t31[i] - 2.0 * t21[i];
        t33[i] = t32 + (t32 - t22) / 2.0;
        error[i] = t33[i] - t32;
    }
    Some((t33, error))
}

/// `count` linearly implicit Euler sub-steps: (I - h J) dz = h f(t, z) + h^2 df/dt.
fn euler_substeps(
    f: Rhs<'_>,
    t: f64,
    y: &[f64],
    f0: &[f64],
    h_total: f64,
    count: usize,
    linear: &Linearisation<'_>,
) -> Option<Vec<f64>> {
    let n = y.len();
    let h = h_total / count as f64;
    let matrix = DMatrix::identity(n, n) - linear.jacobian * h;
    let lu = matrix.lu();
    let mut z = y.to_vec();
    let mut fz = f0.to_vec();
    for k in 0..count {
        if k > 0 {
            f(t + k as f64 * h, &z, &mut fz);
        }
        let rhs = DVector::from_iterator(
            n,
            fz.iter()
                .zip(linear.time_derivative)
                .map(|(v, ft)| v * h + ft * h * h),
        );
        let dz = lu.solve(&rhs)?;
        z.iter_mut().zip(dz.iter()).for_each(|(zi, d)| *zi += d);
    }
    Some(z)
}

fn error_norm(y: &[f64], y_new: &[f64], error: &[f64], s: StiffSettings) -> f64 {
    let sum: f64 = y
        .iter()
        .zip(y_new)
        .zip(error)
        .map(|((a, b), e)| {
            let scale = s.absolute_tolerance + s.relative_tolerance * a.abs().max(b.abs());
            (e / scale).powi(2)
        })
        .sum();
    (sum / y.len().max(1) as f64).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    const SETTINGS: StiffSettings = StiffSettings {
        relative_tolerance: 1e-8,
        absolute_tolerance: 1e-10,
        max_steps: 100_000,
        initial_step: 1e-6,
        nonnegative: (0, 0),
    };

    /// y' = -L (y - cos t), y(0) = 0, L = 1e5: a stiff linear problem with the exact solution
    /// y = (L^2 cos t + L sin t - L^2 e^(-L t)) / (L^2 + 1) (solved by hand, any ODE text).
    /// An explicit method would need some 2 L / 3.3 = 60 000 steps for stability alone.
    #[test]
    fn follows_a_stiff_linear_problem() {
        let l = 1e5;
        let f = |t: f64, y: &[f64], dy: &mut [f64]| dy[0] = -l * (y[0] - t.cos());
        let (mut steps, mut y_end) = (0, 0.0);
        let mut record = |_: f64, y: &[f64], _: &[f64]| {
            steps += 1;
            y_end = y[0];
            false
        };
        integrate_stiff(&f, 0.0, &[0.0], 2.0, SETTINGS, &mut record).unwrap();
        let t: f64 = 2.0;
        let exact = (l * l * t.cos() + l * t.sin() - l * l * (-l * t).exp()) / (l * l + 1.0);
        assert!((y_end - exact).abs() < 1e-7, "{y_end} vs {exact}");
        assert!(steps < 10_000, "{steps} steps");
    }

    /// Robertson's chemical kinetics problem (Robertson 1966; the standard stiff test of
    /// Hairer and Wanner, vol. II): at t = 40 the reference values are y1 = 0.7158271,
    /// y2 = 9.185535e-6, y3 = 0.2841637 (from memory of the published tables; the sum
    /// y1 + y2 + y3 = 1 is exact and checked too).
    #[test]
    fn solves_the_robertson_problem() {
        let f = |_: f64, y: &[f64], dy: &mut [f64]| {
            dy[0] = -0.04 * y[0] + 1e4 * y[1] * y[2];
            dy[1] = 0.04 * y[0] - 1e4 * y[1] * y[2] - 3e7 * y[1] * y[1];
            dy[2] = 3e7 * y[1] * y[1];
        };
        let mut last = vec![0.0; 3];
        let mut record = |_: f64, y: &[f64], _: &[f64]| {
            last.copy_from_slice(y);
            false
        };
        let settings = StiffSettings {
            absolute_tolerance: 1e-12,
            ..SETTINGS
        };
        integrate_stiff(&f, 0.0, &[1.0, 0.0, 0.0], 40.0, settings, &mut record).unwrap();
        assert!((last[0] - 0.7158271).abs() < 1e-6, "{last:?}");
        assert!((last[1] - 9.185535e-6).abs() < 1e-10, "{last:?}");
        assert!((last[2] - 0.2841637).abs() < 1e-6, "{last:?}");
        assert!((last.iter().sum::<f64>() - 1.0).abs() < 1e-9);
    }

    /// An instantaneous reaction A + B -> P (k = 1e12) with B fed at rate 1 into A(0) = 1:
    /// in the limit k -> infinity, A = max(0, 1 - t) and B = max(0, t - 1) (the feed-controlled
    /// limit; a mass balance, solved by hand). Without the nonnegativity rule the step across
    /// the exhaustion of A drove A negative by a few per cent (found with k_ref 1e20 L/(mol s)).
    #[test]
    fn an_instantaneous_reaction_keeps_its_amounts_nonnegative() {
        let k = 1e12;
        let f = |_: f64, y: &[f64], dy: &mut [f64]| {
            let r = k * y[0].max(0.0) * y[1].max(0.0);
            dy[0] = -r;
            dy[1] = 1.0 - r;
        };
        let mut lowest = f64::INFINITY;
        let mut last = vec![0.0; 2];
        let mut record = |_: f64, y: &[f64], _: &[f64]| {
            lowest = lowest.min(y[0]).min(y[1]);
            last.copy_from_slice(y);
            false
        };
        let settings = StiffSettings {
            nonnegative: (0, 2),
            ..SETTINGS
        };
        integrate_stiff(&f, 0.0, &[1.0, 0.0], 2.0, settings, &mut record).unwrap();
        assert!(
            lowest >= -SETTINGS.absolute_tolerance,
            "lowest amount {lowest}"
        );
        assert!(last[0].abs() < 1e-6, "{last:?}");
        assert!((last[1] - 1.0).abs() < 1e-6, "{last:?}");
    }
}
