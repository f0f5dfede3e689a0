//! Invented DSC scans from known nth-order Arrhenius kinetics, for the round-trip tests, the
//! benchmark and the demo data: d alpha/dt = A exp(-E/(R T)) (1 - alpha)^n at T = T0 + beta t,
//! integrated by classical RK4 in temperature, heat flow = energy * d alpha/dt over a sloping
//! baseline, with seeded noise (xorshift64*, no dependency).

use crate::model::network::GAS_CONSTANT;
use std::fmt::Write;

/// What to generate, in SI (K, K/s, J/mol, 1/s, J/kg, W/kg, kg).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CurveSpec {
    pub heating_rate: f64,
    pub activation_energy: f64,
    pub pre_exponential: f64,
    pub order: f64,
    pub energy: f64,
    pub start: f64,
    pub end: f64,
    pub points: usize,
    /// Baseline at `start` (W/kg) and its slope (W/(kg K)).
    pub baseline: f64,
    pub baseline_slope: f64,
    /// Standard deviation of the noise as a fraction of the peak heat flow.
    pub noise: f64,
    pub seed: u64,
    /// Some: write an absolute heat flow in mW with this sample mass in the metadata;
    /// None: a specific heat flow in W/g.
    pub sample_mass: Option<f64>,
}

/// RK4 steps between two written points.
const SUBSTEPS: usize = 20;

/// The scan as (time s, temperature K, heat flow W/kg) without noise or baseline.
pub fn exotherm(spec: &CurveSpec) -> Vec<(f64, f64, f64)> {
    let rate = |t: f64, alpha: f64| {
        spec.pre_exponential
            * (-spec.activation_energy / (GAS_CONSTANT * t)).exp()
            * (1.0 - alpha).max(0.0).powf(spec.order)
            / spec.heating_rate
    };
    let n = spec.points.max(2);
    let step = (spec.end - spec.start) / (n - 1) as f64;
    let h = step / SUBSTEPS as f64;
    let mut alpha: f64 = 0.0;
    let mut out = Vec::with_capacity(n);
    for i in 0..n {
        let t = spec.start + step * i as f64;
        let flow = spec.energy * spec.heating_rate * rate(t, alpha);
        out.push(((t - spec.start) / spec.heating_rate, t, flow));
        for k in 0..SUBSTEPS {
            let tk = t + h * k as f64;
            let k1 = rate(tk, alpha);
            let k2 = rate(tk + h / 2.0, alpha + h / 2.0 * k1);
            let k3 = rate(tk + h / 2.0, alpha + h / 2.0 * k2);
            let k4 = rate(tk + h, alpha + h * k3);
            alpha = (alpha + h / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4)).min(1.0);
        }
    }
    out
}

/// The scan as CSV text in the lab table format (time in min, temperature in degC).
pub fn scan_csv(spec: &CurveSpec) -> String {
    let curve = exotherm(spec);
    let top = curve.iter().map(|p| p.2).fold(0.0, f64::max);
    let mut noise = Noise::new(spec.seed);
    let mut text = String::new();
    let _ = writeln!(
        text,
        "# invented DSC scan at {} K/min, nth-order Arrhenius kinetics (E = {} kJ/mol, A = {:e} 1/s, n = {}, energy = {} J/g)",
        spec.heating_rate * 60.0,
        spec.activation_energy / 1e3,
        spec.pre_exponential,
        spec.order,
        spec.energy / 1e3
    );
    let unit = match spec.sample_mass {
        Some(mass) => {
            let _ = writeln!(text, "# sample_mass: {} mg", (mass * 1e9).round() / 1e3);
            "mW"
        }
        None => "W/g",
    };
    let _ = writeln!(text, "time [min], temperature [degC], heat_flow [{unit}]");
    for (time, temperature, flow) in curve {
        let signal = flow
            + spec.baseline
            + spec.baseline_slope * (temperature - spec.start)
            + spec.noise * top * noise.gaussian();
        let written = match spec.sample_mass {
            Some(mass) => signal * mass * 1e3,
            None => signal / 1e3,
        };
        let _ = writeln!(
            text,
            "{:.5}, {:.4}, {:.7e}",
            time / 60.0,
            temperature - 273.15,
            written
        );
    }
    text
}

/// xorshift64* uniforms; a near-Gaussian as the sum of 12 uniforms minus 6.
pub struct Noise(u64);

impl Noise {
    pub fn new(seed: u64) -> Noise {
        Noise(seed.max(1))
    }

    pub fn uniform(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        let x = self.0.wrapping_mul(0x2545_F491_4F6C_DD1D);
        (x >> 11) as f64 / (1u64 << 53) as f64
    }

    pub fn gaussian(&mut self) -> f64 {
        (0..12).map(|_| self.uniform()).sum::<f64>() - 6.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// First order at a constant rate integrates to alpha -> 1: the area under the heat flow
    /// is the energy (trapezoid on 4000 points), and the peak sits at Kissinger's peak
    /// condition (Kissinger 1957), within the point spacing.
    #[test]
    fn the_generated_exotherm_holds_its_energy_and_peak() {
        let spec = CurveSpec {
            heating_rate: 10.0 / 60.0,
            activation_energy: 120e3,
            pre_exponential: 1e12,
            order: 1.0,
            energy: 800e3,
            start: 333.15,
            end: 573.15,
            points: 4000,
            baseline: 0.0,
            baseline_slope: 0.0,
            noise: 0.0,
            seed: 1,
            sample_mass: None,
        };
        let curve = exotherm(&spec);
        let area: f64 = curve
            .windows(2)
            .map(|w| 0.5 * (w[0].2 + w[1].2) * (w[1].0 - w[0].0))
            .sum();
        assert!((area / 800e3 - 1.0).abs() < 1e-4, "{area}");
        let top = curve.iter().max_by(|a, b| a.2.total_cmp(&b.2)).unwrap();
        let peak = super::super::kinetics::first_order_peak(120e3, 1e12, 10.0 / 60.0).unwrap();
        assert!((top.1 - peak).abs() < 0.1, "{} vs {peak}", top.1);
    }
}
