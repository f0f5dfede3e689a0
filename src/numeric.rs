//! Small numerical tools shared by the layers: bracketing root search and golden-section
//! maximisation on an interval.

/// Root of `f` in [a, b] by bisection, when f(a) and f(b) differ in sign; None otherwise.
/// Bisection is chosen for its guarantee: the functions searched here are monotone but
/// steep (exponential in temperature), where faster methods gain little.
pub fn bisect(f: &dyn Fn(f64) -> f64, mut a: f64, mut b: f64, tolerance: f64) -> Option<f64> {
    let (mut fa, fb) = (f(a), f(b));
    if !(fa.is_finite() && fb.is_finite()) || fa * fb > 0.0 {
        return None;
    }
    for _ in 0..200 {
        let mid = 0.5 * (a + b);
        let fm = f(mid);
        if (b - a).abs() < tolerance || fm == 0.0 {
            return Some(mid);
        }
        if fa * fm < 0.0 {
            b = mid;
        } else {
            a = mid;
            fa = fm;
        }
    }
    Some(0.5 * (a + b))
}

/// Golden-section search for the maximum of a unimodal function on [a, b]: (argmax, max).
pub fn golden_section_max(
    f: &dyn Fn(f64) -> f64,
    mut a: f64,
    mut b: f64,
    iterations: usize,
) -> (f64, f64) {
    let ratio = (5.0_f64.sqrt() - 1.0) / 2.0;
    let mut c = b - ratio * (b - a);
    let mut d = a + ratio * (b - a);
    let (mut fc, mut fd) = (f(c), f(d));
    for _ in 0..iterations {
        if fc > fd {
            b = d;
            d = c;
            fd = fc;
            c = b - ratio * (b - a);
            fc = f(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + ratio * (b - a);
            fd = f(d);
        }
    }
    if fc > fd { (c, fc) } else { (d, fd) }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bisection_finds_the_square_root_of_two() {
        let root = bisect(&|x| x * x - 2.0, 0.0, 2.0, 1e-12).unwrap();
        assert!((root - std::f64::consts::SQRT_2).abs() < 1e-11);
        assert!(bisect(&|x| x * x + 1.0, 0.0, 2.0, 1e-12).is_none());
    }

    #[test]
    fn golden_section_finds_the_top_of_a_parabola() {
        let (x, y) = golden_section_max(&|x| -(x - 0.3) * (x - 0.3) + 1.0, 0.0, 1.0, 60);
        assert!((x - 0.3).abs() < 1e-8 && (y - 1.0).abs() < 1e-12);
    }
}
