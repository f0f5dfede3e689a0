//! Least-squares straight lines: the heating rate, the Kissinger and Flynn–Wall–Ozawa plots.

/// y = intercept + slope x, with the coefficient of determination.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Line {
    pub slope: f64,
    pub intercept: f64,
    /// 1 - SS_res/SS_tot; 1 when the points lie on the line (and for two points).
    pub r2: f64,
}

impl Line {
    pub fn at(&self, x: f64) -> f64 {
        self.intercept + self.slope * x
    }
}

/// True for zero, negative and NaN: a quantity that must be above zero and is not.
pub fn not_positive(x: f64) -> bool {
    x.is_nan() || x <= 0.0
}

/// The least-squares line through the points, or None with fewer than two distinct x.
pub fn fit_line(x: &[f64], y: &[f64]) -> Option<Line> {
    let n = x.len().min(y.len());
    if n < 2 {
        return None;
    }
    let count = n as f64;
    let mean_x = x[..n].iter().sum::<f64>() / count;
    let mean_y = y[..n].iter().sum::<f64>() / count;
    let (mut sxx, mut sxy, mut syy) = (0.0, 0.0, 0.0);
    for (xi, yi) in x[..n].iter().zip(&y[..n]) {
        let (dx, dy) = (xi - mean_x, yi - mean_y);
        sxx += dx * dx;
        sxy += dx * dy;
        syy += dy * dy;
    }
    if not_positive(sxx) || !sxx.is_finite() {
        return None;
    }
    let slope = sxy / sxx;
    let r2 = if syy > 0.0 {
        (sxy * sxy / (sxx * syy)).clamp(0.0, 1.0)
    } else {
        1.0
    };
    Some(Line {
        slope,
        intercept: mean_y - slope * mean_x,
        r2,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Exact line and a textbook set: x = 1..5, y = 2, 4, 5, 4, 5 gives slope 0.6,
    /// intercept 2.2, r2 = 0.6 (hand computation: Sxy = 6, Sxx = 10, Syy = 6).
    #[test]
    fn fits_known_lines() {
        let l = fit_line(&[0.0, 1.0, 2.0], &[1.0, 3.0, 5.0]).unwrap();
        assert!((l.slope - 2.0).abs() < 1e-12 && (l.intercept - 1.0).abs() < 1e-12);
        assert!((l.r2 - 1.0).abs() < 1e-12);
        let l = fit_line(&[1.0, 2.0, 3.0, 4.0, 5.0], &[2.0, 4.0, 5.0, 4.0, 5.0]).unwrap();
        assert!((l.slope - 0.6).abs() < 1e-12);
        assert!((l.intercept - 2.2).abs() < 1e-12);
        assert!((l.r2 - 0.6).abs() < 1e-12);
        assert!(fit_line(&[1.0, 1.0], &[2.0, 3.0]).is_none());
        assert!(fit_line(&[1.0], &[2.0]).is_none());
    }
}
