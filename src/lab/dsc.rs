//! One DSC scan at a constant heating rate: heating rate, baseline, extrapolated onset
//! (ASTM E537 construction), peak temperature and specific energy of the exotherm.
//!
//! The rules, in order:
//! * Heating rate: the least-squares line of T(t); a warning when a point lies more than
//!   `RATE_TOLERANCE_K` off it. `--rate` replaces it (and then the time column is optional:
//!   t = (T - T0)/rate).
//! * Signal: specific heat flow in W/kg, exotherm up. An absolute heat flow (W, mW) is divided
//!   by the sample mass (option, else the `# sample_mass:` metadata).
//! * Smoothing: a centred moving average whose half-width is an eighth of the number of points
//!   between the rising half-height point and the peak (at least one point), used to find the
//!   peak and the limits; the energy is integrated on the raw signal.
//! * Automatic baseline (the rule is this program's, not a standard's): start from the line
//!   through the mean of the first and last 5 % of the scan. Walking out from the peak, find
//!   where the smoothed net signal falls to 1 % of the peak height on each side; push each
//!   limit out by half its distance to the peak (so that the tails are inside); the baseline
//!   is the straight line through the centroids (mean T, mean signal) of a stretch just
//!   outside each limit, as long as half the limit-to-peak distance. Done twice, the second
//!   time from the first baseline. Given limits (`--baseline "T1, T2"`) anchor the line at the
//!   mean signal within the smoothing window around T1 and T2.
//! * Energy: the trapezoidal integral of (signal - baseline) dt between the limits, J/kg.
//! * Peak temperature: the maximum of a least-squares cubic in T through the raw net signal
//!   above 80 % of the peak height.
//! * Onset (ASTM E537): the tangent at the inflection point of the leading edge (the largest
//!   slope of a local least-squares line through the raw net signal, between 10 % of the
//!   height and the peak) extended to meet the baseline.

use super::error::LabError;
use super::fit::{Line, fit_line, not_positive};
use super::table::{Column, Table, Wanted};
use crate::case::units::Dimension;
use crate::warning::Warning;

/// Largest deviation of T(t) from its least-squares line before the scan is called not linear.
pub const RATE_TOLERANCE_K: f64 = 1.0;
/// Fewest data rows for a scan.
pub const MIN_ROWS: usize = 20;
/// Net-signal fraction of the peak height that marks the ends of the exotherm.
const END_FRACTION: f64 = 0.01;
/// Net-signal fraction of the peak height at which the single-scan rate is read.
pub const DETECTION_FRACTION: f64 = 0.05;
/// Net-signal fraction of the peak height above which the parabola of the peak is fitted.
const PEAK_FIT_FRACTION: f64 = 0.8;
/// Half-width of the local tangent fits, in smoothing half-widths.
const TANGENT_WINDOW: usize = 2;

const POWER: Dimension = Dimension::new(2.0, 1.0, -3.0, 0.0, 0.0);
const SPECIFIC_POWER: Dimension = Dimension::new(2.0, 0.0, -3.0, 0.0, 0.0);

const TIME: Wanted = Wanted {
    name: "time",
    dimensions: &[Dimension::TIME],
    accepted_units: "s, min, h",
};
const TEMPERATURE: Wanted = Wanted {
    name: "temperature",
    dimensions: &[Dimension::TEMPERATURE],
    accepted_units: "degC, K, degF",
};
const HEAT_FLOW: Wanted = Wanted {
    name: "heat_flow",
    dimensions: &[POWER, SPECIFIC_POWER],
    accepted_units: "W/g, mW/mg, W/kg (specific) or mW, W (with a sample mass)",
};

/// How to read a scan.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct ScanOptions {
    /// Heating rate, K/s, replacing the one fitted from T(t).
    pub rate: Option<f64>,
    /// Baseline limits, K, replacing the automatic ones.
    pub baseline: Option<(f64, f64)>,
    /// Sample mass, kg, replacing the `sample_mass` metadata.
    pub sample_mass: Option<f64>,
    /// The file's heat flow is endotherm-up (exotherms negative).
    pub endo_up: bool,
}

/// What one scan gives.
#[derive(Debug, Clone, PartialEq)]
pub struct Scan {
    pub file: String,
    /// K/s.
    pub heating_rate: f64,
    pub rate_given: bool,
    /// Extrapolated onset, K.
    pub onset: f64,
    /// Peak temperature, K.
    pub peak: f64,
    /// Specific energy of the exotherm, J/kg.
    pub energy: f64,
    /// Baseline limits, K, and whether they were found automatically.
    pub limits: (f64, f64),
    pub limits_automatic: bool,
    /// Peak height above the baseline, W/kg.
    pub peak_height: f64,
    /// Net specific heat flow (W/kg) and temperature (K) where the smoothed net signal first
    /// reaches `DETECTION_FRACTION` of the peak height.
    pub detection: (f64, f64),
    pub points: usize,
    pub warnings: Vec<Warning>,
}

/// The scan's data as SI series: time s, temperature K, specific heat flow W/kg exo-up.
struct Series {
    time: Vec<f64>,
    temperature: Vec<f64>,
    signal: Vec<f64>,
}

pub fn analyse_scan(table: &Table, options: &ScanOptions) -> Result<Scan, LabError> {
    let mut warnings = Vec::new();
    let (series, heating_rate) = read_series(table, options, &mut warnings)?;
    let found = find_exotherm(&series, options.baseline, &table.file, &mut warnings)?;
    Ok(Scan {
        file: table.file.clone(),
        heating_rate,
        rate_given: options.rate.is_some(),
        onset: found.onset,
        peak: found.peak,
        energy: found.energy,
        limits: found.limits,
        limits_automatic: options.baseline.is_none(),
        peak_height: found.height,
        detection: found.detection,
        points: series.time.len(),
        warnings,
    })
}

fn read_series(
    table: &Table,
    options: &ScanOptions,
    warnings: &mut Vec<Warning>,
) -> Result<(Series, f64), LabError> {
    let temperature_column = table.require(&TEMPERATURE)?;
    let flow_column = table.require(&HEAT_FLOW)?;
    if table.len() < MIN_ROWS {
        return Err(LabError::at(
            &table.file,
            table.header_row,
            0,
            format!("only {} data rows", table.len()),
            format!("a scan of at least {MIN_ROWS} rows"),
        ));
    }
    let temperature = temperature_column.values.clone();
    let time = match (options.rate, table.require(&TIME)) {
        (_, Ok(column)) => increasing_time(table, column)?,
        (Some(rate), Err(_)) => temperature
            .iter()
            .map(|t| (t - temperature[0]) / rate)
            .collect(),
        (None, Err(e)) => return Err(e),
    };
    check_increasing(
        table,
        temperature_column,
        &temperature,
        options.rate.is_some(),
    )?;
    let heating_rate = match options.rate {
        Some(rate) => rate,
        None => fitted_rate(table, &time, &temperature, warnings)?,
    };
    let signal = specific_signal(table, flow_column, options)?;
    Ok((
        Series {
            time,
            temperature,
            signal,
        },
        heating_rate,
    ))
}

fn increasing_time(table: &Table, column: &Column) -> Result<Vec<f64>, LabError> {
    for (i, pair) in column.values.windows(2).enumerate() {
        if pair[1] <= pair[0] {
            return Err(table.error_at_row(
                i + 1,
                column,
                format!(
                    "time does not increase ({} after {} {})",
                    column.in_own_unit(pair[1]),
                    column.in_own_unit(pair[0]),
                    column.unit_text
                ),
                "a time that increases from row to row",
            ));
        }
    }
    Ok(column.values.clone())
}

/// Without a time column the temperature must increase, since time is made from it.
fn check_increasing(
    table: &Table,
    column: &Column,
    temperature: &[f64],
    time_from_temperature: bool,
) -> Result<(), LabError> {
    if !time_from_temperature || table.column(TIME.name).is_some() {
        return Ok(());
    }
    match temperature.windows(2).position(|p| p[1] <= p[0]) {
        None => Ok(()),
        Some(i) => Err(table.error_at_row(
            i + 1,
            column,
            "temperature does not increase, and without a time column the time is made from it",
            "a temperature that increases from row to row, or a `time [min]` column",
        )),
    }
}

fn fitted_rate(
    table: &Table,
    time: &[f64],
    temperature: &[f64],
    warnings: &mut Vec<Warning>,
) -> Result<f64, LabError> {
    let line = fit_line(time, temperature).ok_or_else(|| {
        LabError::analysis(&table.file, "no heating rate: the times are all equal")
    })?;
    if not_positive(line.slope) {
        return Err(LabError::analysis(
            &table.file,
            "the temperature does not rise with time: not a heating scan (give --rate if the time column is wrong)",
        ));
    }
    let worst = time
        .iter()
        .zip(temperature)
        .map(|(t, temp)| (temp - line.at(*t)).abs())
        .fold(0.0, f64::max);
    if worst > RATE_TOLERANCE_K {
        warnings.push(Warning::new(
            "dsc.rate_not_constant",
            format!(
                "{}: the temperature departs up to {worst:.1} K from a constant heating rate of {:.3} K/min (tolerance {RATE_TOLERANCE_K} K); the Kissinger and Ozawa methods assume a constant rate",
                table.file,
                line.slope * 60.0
            ),
        ));
    }
    Ok(line.slope)
}

fn specific_signal(
    table: &Table,
    column: &Column,
    options: &ScanOptions,
) -> Result<Vec<f64>, LabError> {
    let sign = if options.endo_up { -1.0 } else { 1.0 };
    if column.dimension().approx_eq(&SPECIFIC_POWER) {
        return Ok(column.values.iter().map(|v| sign * v).collect());
    }
    let mass = match options.sample_mass {
        Some(m) => m,
        None => table
            .metadata_si("sample_mass", &[Dimension::MASS], "mg, g")?
            .ok_or_else(|| {
                LabError::at(
                    &table.file,
                    table.header_row,
                    column.field,
                    format!(
                        "column `{}` is an absolute heat flow but there is no sample mass",
                        column.label()
                    ),
                    "a `# sample_mass: 4.2 mg` line above the header, --sample-mass, or a specific heat flow in W/g",
                )
            })?,
    };
    if not_positive(mass) {
        return Err(LabError::at(
            &table.file,
            table.metadata("sample_mass").map_or(0, |m| m.row),
            0,
            "the sample mass is not positive",
            "a sample mass above zero, e.g. 4.2 mg",
        ));
    }
    Ok(column.values.iter().map(|v| sign * v / mass).collect())
}

/// What the exotherm gives, in SI.
struct Exotherm {
    onset: f64,
    peak: f64,
    energy: f64,
    limits: (f64, f64),
    height: f64,
    detection: (f64, f64),
}

/// Index window [l, r] of the exotherm and the baseline line in T.
struct Baseline {
    line: Line,
    left: usize,
    right: usize,
}

fn find_exotherm(
    s: &Series,
    given: Option<(f64, f64)>,
    file: &str,
    warnings: &mut Vec<Warning>,
) -> Result<Exotherm, LabError> {
    let n = s.signal.len();
    let rough = moving_average(&s.signal, (n / 200).max(1));
    let first = end_line(&s.temperature, &rough);
    let half_width = smoothing_half_width(&s.temperature, &rough, &first, file)?;
    let smooth = moving_average(&s.signal, half_width);
    let baseline = match given {
        Some(limits) => given_baseline(s, &smooth, limits, file)?,
        None => automatic_baseline(s, &smooth, first, file, warnings)?,
    };
    let net: Vec<f64> = (0..n)
        .map(|i| s.signal[i] - baseline.line.at(s.temperature[i]))
        .collect();
    let net_smooth: Vec<f64> = (0..n)
        .map(|i| smooth[i] - baseline.line.at(s.temperature[i]))
        .collect();
    let (left, right) = (baseline.left, baseline.right);
    let top = argmax(&net_smooth[left..=right]) + left;
    let height = net_smooth[top];
    if not_positive(height) {
        return Err(LabError::analysis(
            file,
            "no exotherm above the baseline between the limits",
        ));
    }
    let energy = integral(&s.time, &net, left, right);
    let peak = peak_temperature(&s.temperature, &net, &net_smooth, top, height);
    let onset = onset_temperature(s, &net, &net_smooth, &baseline, top, height, half_width)
        .ok_or_else(|| {
            LabError::analysis(
                file,
                "no extrapolated onset: the leading edge of the exotherm has no rising tangent",
            )
        })?;
    let detection = detection_point(&s.temperature, &net_smooth, left, top, height);
    Ok(Exotherm {
        onset,
        peak,
        energy,
        limits: (s.temperature[left], s.temperature[right]),
        height,
        detection,
    })
}

/// Centred moving average of half-width h (the window shrinks at the ends); prefix sums.
fn moving_average(y: &[f64], h: usize) -> Vec<f64> {
    let mut prefix = Vec::with_capacity(y.len() + 1);
    prefix.push(0.0);
    for v in y {
        prefix.push(prefix[prefix.len() - 1] + v);
    }
    (0..y.len())
        .map(|i| {
            let (a, b) = (i.saturating_sub(h), (i + h + 1).min(y.len()));
            (prefix[b] - prefix[a]) / (b - a) as f64
        })
        .collect()
}

fn argmax(y: &[f64]) -> usize {
    let mut best = 0;
    for (i, v) in y.iter().enumerate() {
        if *v > y[best] {
            best = i;
        }
    }
    best
}

/// Line through the centroids of the first and last 5 % of the scan (at least 3 points).
fn end_line(temperature: &[f64], y: &[f64]) -> Line {
    let n = y.len();
    let k = (n / 20).max(3).min(n / 2);
    line_through(
        centroid(temperature, y, 0, k),
        centroid(temperature, y, n - k, n),
    )
}

fn centroid(x: &[f64], y: &[f64], from: usize, to: usize) -> (f64, f64) {
    let count = (to - from).max(1) as f64;
    let sx: f64 = x[from..to].iter().sum();
    let sy: f64 = y[from..to].iter().sum();
    (sx / count, sy / count)
}

fn line_through(a: (f64, f64), b: (f64, f64)) -> Line {
    let slope = if (b.0 - a.0).abs() > 0.0 {
        (b.1 - a.1) / (b.0 - a.0)
    } else {
        0.0
    };
    Line {
        slope,
        intercept: a.1 - slope * a.0,
        r2: 1.0,
    }
}

/// An eighth of the points between the rising half-height point and the peak.
fn smoothing_half_width(
    temperature: &[f64],
    rough: &[f64],
    line: &Line,
    file: &str,
) -> Result<usize, LabError> {
    let net: Vec<f64> = rough
        .iter()
        .zip(temperature)
        .map(|(y, t)| y - line.at(*t))
        .collect();
    let top = argmax(&net);
    if not_positive(net[top]) {
        return Err(LabError::analysis(
            file,
            "no exotherm: the heat flow never rises above the line joining the ends of the scan (is the sign convention right? see --endo-up)",
        ));
    }
    let half = walk(&net, top, net[top] / 2.0, false);
    Ok(((top - half) / 8).clamp(1, (net.len() / 20).max(1)))
}

/// From `start`, the first index (going right, or left) where y <= level; the end if none.
fn walk(y: &[f64], start: usize, level: f64, right: bool) -> usize {
    if right {
        (start..y.len())
            .find(|&i| y[i] <= level)
            .unwrap_or(y.len() - 1)
    } else {
        (0..=start).rev().find(|&i| y[i] <= level).unwrap_or(0)
    }
}

fn automatic_baseline(
    s: &Series,
    smooth: &[f64],
    first: Line,
    file: &str,
    warnings: &mut Vec<Warning>,
) -> Result<Baseline, LabError> {
    let n = smooth.len();
    let mut baseline = Baseline {
        line: first,
        left: 0,
        right: n - 1,
    };
    for _ in 0..2 {
        let net: Vec<f64> = (0..n)
            .map(|i| smooth[i] - baseline.line.at(s.temperature[i]))
            .collect();
        let top = argmax(&net);
        let height = net[top];
        if not_positive(height) {
            return Err(LabError::analysis(file, "no exotherm above the baseline"));
        }
        let low = walk(&net, top, END_FRACTION * height, false);
        let high = walk(&net, top, END_FRACTION * height, true);
        let left = low.saturating_sub((top - low) / 2);
        let right = (high + (high - top) / 2).min(n - 1);
        let left_stretch = ((top - low) / 2).max(3);
        let right_stretch = ((high - top) / 2).max(3);
        let a = centroid(
            &s.temperature,
            &s.signal,
            left.saturating_sub(left_stretch),
            left + 1,
        );
        let b = centroid(
            &s.temperature,
            &s.signal,
            right,
            (right + right_stretch).min(n - 1) + 1,
        );
        baseline = Baseline {
            line: line_through(a, b),
            left,
            right,
        };
    }
    if baseline.left == 0 || baseline.right == n - 1 {
        warnings.push(Warning::new(
            "dsc.baseline_at_scan_end",
            format!(
                "{file}: the scan ends before the signal is flat on the {} side of the exotherm; the automatic baseline is anchored at the end of the scan (give --baseline, or scan a wider range)",
                if baseline.left == 0 { "low" } else { "high" }
            ),
        ));
    }
    Ok(baseline)
}

fn given_baseline(
    s: &Series,
    smooth: &[f64],
    (low, high): (f64, f64),
    file: &str,
) -> Result<Baseline, LabError> {
    let t = &s.temperature;
    let (t_min, t_max) = (t[0], t[t.len() - 1]);
    if low.is_nan() || high.is_nan() || low >= high || low < t_min || high > t_max {
        return Err(LabError::analysis(
            file,
            format!(
                "the baseline limits {:.1} and {:.1} degC are not two increasing temperatures within the scan ({:.1} to {:.1} degC)",
                low - 273.15,
                high - 273.15,
                t_min - 273.15,
                t_max - 273.15
            ),
        ));
    }
    let left = t.iter().position(|v| *v >= low).unwrap_or(0);
    let right = t.iter().rposition(|v| *v <= high).unwrap_or(t.len() - 1);
    if right <= left + 2 {
        return Err(LabError::analysis(
            file,
            "the baseline limits enclose too few points",
        ));
    }
    Ok(Baseline {
        // The smoothed signal is already the mean over the window around each limit.
        line: line_through((t[left], smooth[left]), (t[right], smooth[right])),
        left,
        right,
    })
}

/// Trapezoidal integral of y dt over [from, to].
fn integral(time: &[f64], y: &[f64], from: usize, to: usize) -> f64 {
    (from..to)
        .map(|i| 0.5 * (y[i] + y[i + 1]) * (time[i + 1] - time[i]))
        .sum()
}

/// Maximum of the least-squares cubic through the raw net signal where the smoothed one is
/// above `PEAK_FIT_FRACTION` of the height (a cubic follows the skew of the peak, which biases
/// a parabola); the smoothed maximum when the fit has no maximum inside that stretch.
fn peak_temperature(t: &[f64], net: &[f64], net_smooth: &[f64], top: usize, height: f64) -> f64 {
    let level = PEAK_FIT_FRACTION * height;
    let mut from = walk(net_smooth, top, level, false);
    let mut to = walk(net_smooth, top, level, true);
    if to - from < 6 {
        from = top.saturating_sub(3);
        to = (top + 3).min(t.len() - 1);
    }
    cubic_maximum(&t[from..=to], &net[from..=to], t[top])
        .filter(|v| *v >= t[from] && *v <= t[to])
        .unwrap_or(t[top])
}

/// Where y = a + b u + c u^2 + d u^3 (u = x - centre, scaled) has a maximum, if it has one.
fn cubic_maximum(x: &[f64], y: &[f64], centre: f64) -> Option<f64> {
    let scale = x.iter().map(|xi| (xi - centre).abs()).fold(0.0, f64::max);
    if not_positive(scale) || x.len() < 5 {
        return None;
    }
    let mut m = nalgebra::Matrix4::<f64>::zeros();
    let mut v = nalgebra::Vector4::<f64>::zeros();
    for (xi, yi) in x.iter().zip(y) {
        let u = (xi - centre) / scale;
        let p = [1.0, u, u * u, u * u * u];
        for r in 0..4 {
            for c in 0..4 {
                m[(r, c)] += p[r] * p[c];
            }
            v[r] += p[r] * yi;
        }
    }
    let k = m.lu().solve(&v)?;
    let (b, c, d) = (k[1], k[2], k[3]);
    // y' = b + 2c u + 3d u^2 = 0 with y'' = 2c + 6d u < 0.
    let roots: Vec<f64> = if d.abs() < 1e-12 * c.abs().max(1e-300) {
        vec![-b / (2.0 * c)]
    } else {
        let disc = 4.0 * c * c - 12.0 * d * b;
        if disc < 0.0 {
            return None;
        }
        let r = disc.sqrt();
        vec![(-2.0 * c + r) / (6.0 * d), (-2.0 * c - r) / (6.0 * d)]
    };
    roots
        .into_iter()
        .filter(|u| u.is_finite() && 2.0 * c + 6.0 * d * u < 0.0 && u.abs() <= 1.0)
        .map(|u| centre + u * scale)
        .next()
}

/// ASTM E537 extrapolated onset: the tangent at the steepest point of the leading edge, from a
/// local least-squares line through the raw net signal, meets the baseline (net = 0).
fn onset_temperature(
    s: &Series,
    net: &[f64],
    net_smooth: &[f64],
    baseline: &Baseline,
    top: usize,
    height: f64,
    half_width: usize,
) -> Option<f64> {
    let t = &s.temperature;
    let start = walk(net_smooth, top, 0.1 * height, false).max(baseline.left);
    let h = (TANGENT_WINDOW * half_width).max(2);
    let mut best: Option<Line> = None;
    let mut best_at = 0.0;
    for i in start..=top {
        let (a, b) = (i.saturating_sub(h), (i + h + 1).min(t.len()));
        let Some(local) = fit_line(&t[a..b], &net[a..b]) else {
            continue;
        };
        if best.is_none_or(|l| local.slope > l.slope) {
            best = Some(local);
            best_at = t[i];
        }
    }
    let tangent = best?;
    if not_positive(tangent.slope) {
        return None;
    }
    let onset = best_at - tangent.at(best_at) / tangent.slope;
    onset.is_finite().then_some(onset)
}

/// Where the smoothed net signal first reaches `DETECTION_FRACTION` of the height: (W/kg, K).
fn detection_point(
    t: &[f64],
    net_smooth: &[f64],
    left: usize,
    top: usize,
    height: f64,
) -> (f64, f64) {
    let level = DETECTION_FRACTION * height;
    let i = (left..=top)
        .find(|&i| net_smooth[i] >= level)
        .unwrap_or(top);
    (net_smooth[i], t[i])
}
