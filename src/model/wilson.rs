//! The Wilson plot (Wilson, Trans. ASME 37 (1915) 47): overall coefficients measured at several
//! stirrer speeds in one vessel, 1/U fitted by least squares as a straight line in N^(-2/3);
//! the slope is the process film (1/h = slope N^(-2/3)), the intercept the rest of the series
//! (wall, fouling, coolant side) of the lab vessel.

/// One measurement: stirrer speed (1/s) and overall coefficient (W/(m^2 K)).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Measurement {
    pub speed: f64,
    pub coefficient: f64,
}

/// The straight line 1/U = intercept + slope N^(-2/3).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WilsonFit {
    /// m^2 K/W · s^(-2/3)
    pub slope: f64,
    /// m^2 K/W: wall, fouling and coolant side of the lab vessel
    pub intercept: f64,
    /// Coefficient of determination of the line.
    pub r_squared: f64,
    pub points: usize,
}

#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum WilsonError {
    #[error("a Wilson plot needs measurements at two or more different speeds (found {0})")]
    TooFewSpeeds(usize),
    #[error(
        "1/U does not fall as the speed rises (slope {0:.3e} of 1/U against N^(-2/3)): the data show no process film to carry over"
    )]
    NoProcessFilm(f64),
}

impl WilsonFit {
    /// The process-side film coefficient of the lab vessel at speed N (1/s), W/(m^2 K).
    pub fn process_film(&self, speed: f64) -> f64 {
        speed.powf(2.0 / 3.0) / self.slope
    }

    /// The factor K of h = K N^(2/3) d^(4/3) / D for the lab's impeller diameter `d` and
    /// vessel diameter `vessel` (m): what carries h to another vessel with the same contents.
    pub fn film_factor(&self, d: f64, vessel: f64) -> f64 {
        vessel / (self.slope * d.powf(4.0 / 3.0))
    }
}

/// Least-squares line of 1/U against N^(-2/3).
pub fn wilson_fit(measurements: &[Measurement]) -> Result<WilsonFit, WilsonError> {
    let points: Vec<(f64, f64)> = measurements
        .iter()
        .map(|m| (m.speed.powf(-2.0 / 3.0), 1.0 / m.coefficient))
        .collect();
    let n = points.len() as f64;
    let mean_x = points.iter().map(|p| p.0).sum::<f64>() / n;
    let mean_y = points.iter().map(|p| p.1).sum::<f64>() / n;
    let sxx: f64 = points.iter().map(|p| (p.0 - mean_x).powi(2)).sum();
    let sxy: f64 = points.iter().map(|p| (p.0 - mean_x) * (p.1 - mean_y)).sum();
    let syy: f64 = points.iter().map(|p| (p.1 - mean_y).powi(2)).sum();
    let distinct = {
        let mut speeds: Vec<f64> = measurements.iter().map(|m| m.speed).collect();
        speeds.sort_by(f64::total_cmp);
        speeds.dedup();
        speeds.len()
    };
    if distinct < 2 || sxx <= 0.0 {
        return Err(WilsonError::TooFewSpeeds(distinct));
    }
    let slope = sxy / sxx;
    if slope.is_nan() || slope <= 0.0 {
        return Err(WilsonError::NoProcessFilm(slope));
    }
    let intercept = mean_y - slope * mean_x;
    let r_squared = if syy > 0.0 {
        sxy * sxy / (sxx * syy)
    } else {
        1.0
    };
    Ok(WilsonFit {
        slope,
        intercept,
        r_squared,
        points: measurements.len(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Synthetic data from known resistances: h = K N^(2/3), rest R; the fit returns both.
    #[test]
    fn the_fit_recovers_the_resistances_of_synthetic_data() {
        let (k, rest) = (520.0, 1.0 / 400.0);
        let data: Vec<Measurement> = [1.5, 2.5, 4.0, 6.0, 8.0]
            .iter()
            .map(|&n: &f64| Measurement {
                speed: n,
                coefficient: 1.0 / (1.0 / (k * n.powf(2.0 / 3.0)) + rest),
            })
            .collect();
        let fit = wilson_fit(&data).unwrap();
        assert!((fit.slope - 1.0 / k).abs() < 1e-12 * (1.0 / k));
        assert!((fit.intercept - rest).abs() < 1e-12);
        assert!((fit.r_squared - 1.0).abs() < 1e-12);
        assert!((fit.process_film(3.0) - k * 3f64.powf(2.0 / 3.0)).abs() < 1e-9);
    }

    /// With ±1 % noise in U the resistances still come back within a few per cent.
    #[test]
    fn noisy_data_give_the_resistances_approximately() {
        let (k, rest) = (520.0, 1.0 / 400.0);
        let noise = [1.01, 0.99, 1.005, 0.995, 1.0, 1.008];
        let data: Vec<Measurement> = [1.0, 2.0, 3.0, 4.5, 6.0, 8.0]
            .iter()
            .zip(noise)
            .map(|(&n, e): (&f64, f64)| Measurement {
                speed: n,
                coefficient: e / (1.0 / (k * n.powf(2.0 / 3.0)) + rest),
            })
            .collect();
        let fit = wilson_fit(&data).unwrap();
        assert!((fit.slope * k - 1.0).abs() < 0.05, "{fit:?}");
        assert!((fit.intercept / rest - 1.0).abs() < 0.05, "{fit:?}");
    }

    #[test]
    fn one_speed_or_a_rising_line_is_refused() {
        let same = [
            Measurement {
                speed: 2.0,
                coefficient: 200.0,
            },
            Measurement {
                speed: 2.0,
                coefficient: 210.0,
            },
        ];
        assert_eq!(wilson_fit(&same), Err(WilsonError::TooFewSpeeds(1)));
        let falling = [
            Measurement {
                speed: 1.0,
                coefficient: 250.0,
            },
            Measurement {
                speed: 4.0,
                coefficient: 200.0,
            },
        ];
        assert!(matches!(
            wilson_fit(&falling),
            Err(WilsonError::NoProcessFilm(_))
        ));
    }
}
