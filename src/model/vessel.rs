//! Vessel geometry: liquid level and wetted wall area against liquid volume, for one bottom shape, from the bottom's profile as a surface of revolution.
//!
//! The vessel is vertical: a bottom head whose lowest point is at height
//! `z = 0`, and above it a cylindrical shell of inner diameter `D` that ends
//! at the height where the volume below equals the nominal volume. No top
//! head is modelled; volumes above the nominal continue the cylinder.
//!
//! Every bottom is described only by its meridian profile, a short list of
//! plane curve segments `(r(t), z(t))` with exact derivatives (a straight
//! line, or an elliptic arc of which a circular arc is the equal-axes case).
//! The shell is one more line segment. At construction the surface of
//! revolution integrals `dV = pi r^2 dz` and `dA = 2 pi r ds` are integrated
//! once by Gauss-Legendre quadrature in each segment's parameter `t`, over
//! many sub-intervals, and stored as a table of knots holding volume, area
//! and their exact height derivatives `dV/dz = pi r^2` and
//! `dA/dz = 2 pi r (ds/dt) / (dz/dt)`.
//!
//! The knots are spaced evenly in height, and the table is interpolated by
//! cubic Hermite polynomials in height. Height is the right interpolation
//! variable: in any regular curve parameter (such as the arc angle) the
//! volume grows like `t^4` at the apex, which a cubic cannot follow (it
//! turns negative in the first interval), whereas in height the volume of
//! a spherical or ellipsoidal cap is an exact cubic and the area stays
//! smooth. The curve parameter is still what the quadrature runs over, so
//! the apex, where `dz/dr = 0`, needs no special case there; the exact
//! height-to-parameter inverse of each curve places the knots.
//!
//! A horizontal segment (the disc of a flat bottom) encloses no volume; its
//! area is lumped at its height, so any positive volume wets the whole disc.
//!
//! Queries locate their interval by binary search (on height, or on the
//! cumulative volume for `level`) and evaluate a cubic; `level` inverts the
//! volume cubic by Newton's method safeguarded by bisection.
//!
//! Inputs: a negative or zero volume or height gives level, volume and
//! area 0; a NaN input gives NaN (never a panic).

use std::f64::consts::{FRAC_PI_2, PI};
use std::fmt;

/// Sub-intervals (table intervals) per curved profile segment.
const ARC_PIECES: usize = 512;
/// Sub-intervals per straight profile segment; the integrands are then
/// polynomials that a single Hermite interval reproduces exactly.
const LINE_PIECES: usize = 1;
/// Points of the Gauss-Legendre rule used on every sub-interval.
const GAUSS_POINTS: usize = 8;
/// DIN 28011 torispherical head: crown radius over inner diameter.
const DIN_CROWN_RATIO: f64 = 1.0;
/// DIN 28011 torispherical head: knuckle radius over inner diameter.
const DIN_KNUCKLE_RATIO: f64 = 0.1;
/// Iteration cap for the safeguarded Newton inversion of a volume cubic.
const MAX_NEWTON_STEPS: usize = 60;
/// Relative step size at which the Newton inversion stops.
const NEWTON_TOLERANCE: f64 = 1e-14;

/// Shape of the vessel bottom.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Bottom {
    /// Flat disc, depth 0.
    Flat,
    /// Hemisphere of radius D/2, depth D/2.
    Hemispherical,
    /// 2:1 semi-ellipsoid, semi-axes D/2 and D/4, depth D/4.
    Elliptical,
    /// DIN 28011 torispherical head: crown radius D, knuckle radius 0.1 D.
    Torispherical,
}

impl Bottom {
    /// Lower-case name of the bottom shape.
    pub fn name(&self) -> &'static str {
        match self {
            Bottom::Flat => "flat",
            Bottom::Hemispherical => "hemispherical",
            Bottom::Elliptical => "elliptical",
            Bottom::Torispherical => "torispherical",
        }
    }
}

/// Reasons a vessel geometry cannot be built.
#[derive(Debug, Clone, PartialEq)]
pub enum GeometryError {
    /// The diameter is zero, negative, infinite or NaN.
    NonPositiveDiameter(f64),
    /// The nominal volume is smaller than the bottom head (or NaN).
    NominalBelowBottom { nominal_m3: f64, bottom_m3: f64 },
}

impl fmt::Display for GeometryError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            GeometryError::NonPositiveDiameter(d) => {
                write!(f, "vessel diameter must be positive and finite, got {d} m")
            }
            GeometryError::NominalBelowBottom {
                nominal_m3,
                bottom_m3,
            } => write!(
                f,
                "nominal volume {nominal_m3} m3 is smaller than the bottom head volume {bottom_m3} m3"
            ),
        }
    }
}

impl std::error::Error for GeometryError {}

/// Level and wetted area of a vertical vessel against its liquid volume.
#[derive(Debug, Clone)]
pub struct VesselGeometry {
    bottom: Bottom,
    diameter: f64,
    bottom_depth: f64,
    bottom_volume: f64,
    bottom_area: f64,
    height: f64,
    table: Table,
}

impl VesselGeometry {
    /// Builds the geometry of a vessel with the given bottom, inner diameter
    /// and nominal volume. The shell ends where the volume below equals the
    /// nominal volume; an infinite nominal volume gives an endless shell.
    pub fn new(
        bottom: Bottom,
        diameter_m: f64,
        nominal_volume_m3: f64,
    ) -> Result<Self, GeometryError> {
        if !(diameter_m > 0.0 && diameter_m.is_finite()) {
            return Err(GeometryError::NonPositiveDiameter(diameter_m));
        }
        let mut builder = TableBuilder::new(diameter_m);
        for curve in bottom_profile(bottom, diameter_m) {
            builder.add_segment(&curve);
        }
        let head = builder.state();
        if nominal_volume_m3.is_nan() || nominal_volume_m3 < head.volume {
            return Err(GeometryError::NominalBelowBottom {
                nominal_m3: nominal_volume_m3,
                bottom_m3: head.volume,
            });
        }
        let height = head.height + (nominal_volume_m3 - head.volume) / builder.cross_section;
        if height.is_finite() && height > head.height {
            let shell_radius = diameter_m / 2.0;
            builder.add_segment(&Curve::Line(Line {
                start: (shell_radius, head.height),
                end: (shell_radius, height),
            }));
        }
        Ok(Self {
            bottom,
            diameter: diameter_m,
            bottom_depth: head.height,
            bottom_volume: head.volume,
            bottom_area: head.area,
            height,
            table: builder.finish(),
        })
    }

    /// Bottom shape.
    pub fn bottom(&self) -> Bottom {
        self.bottom
    }

    /// Inner diameter, m.
    pub fn diameter(&self) -> f64 {
        self.diameter
    }

    /// Depth of the bottom head (height of its rim above the lowest point), m.
    pub fn bottom_depth(&self) -> f64 {
        self.bottom_depth
    }

    /// Volume enclosed by the bottom head, m3.
    pub fn bottom_volume(&self) -> f64 {
        self.bottom_volume
    }

    /// Inner surface area of the bottom head, m2.
    pub fn bottom_area(&self) -> f64 {
        self.bottom_area
    }

    /// Top of the shell: the height at which the volume below equals the
    /// nominal volume, m.
    pub fn height(&self) -> f64 {
        self.height
    }

    /// Volume below `height_m`, m3 (0 for a height <= 0, NaN for NaN).
    pub fn volume_below(&self, height_m: f64) -> f64 {
        if height_m.is_nan() {
            return f64::NAN;
        }
        if height_m <= 0.0 {
            return 0.0;
        }
        self.table.volume_at(height_m)
    }

    /// Inner wall area below `height_m`, m2 (0 for a height <= 0, NaN for
    /// NaN). A flat bottom's disc counts for any positive height.
    pub fn area_below(&self, height_m: f64) -> f64 {
        if height_m.is_nan() {
            return f64::NAN;
        }
        if height_m <= 0.0 {
            return 0.0;
        }
        self.table.area_at(height_m)
    }

    /// Liquid level for `volume_m3`, m (0 for a volume <= 0, NaN for NaN).
    pub fn level(&self, volume_m3: f64) -> f64 {
        if volume_m3.is_nan() {
            return f64::NAN;
        }
        if volume_m3 <= 0.0 {
            return 0.0;
        }
        self.table.locate_volume(volume_m3).level()
    }

    /// Wetted wall area (inner surface below the level) for `volume_m3`, m2
    /// (0 for a volume <= 0, NaN for NaN). Any positive volume wets the
    /// whole disc of a flat bottom.
    pub fn wetted_area(&self, volume_m3: f64) -> f64 {
        if volume_m3.is_nan() {
            return f64::NAN;
        }
        if volume_m3 <= 0.0 {
            return 0.0;
        }
        self.table.locate_volume(volume_m3).area(&self.table)
    }

    /// Wetted area inside a jacket reaching `jacket_height_m`: the wall area
    /// below the lower of the level and the jacket height, m2. Zero for a
    /// volume <= 0 or a negative jacket height, NaN if either input is NaN;
    /// a jacket of height 0 still covers a flat bottom's disc.
    pub fn jacketed_area(&self, volume_m3: f64, jacket_height_m: f64) -> f64 {
        if volume_m3.is_nan() || jacket_height_m.is_nan() {
            return f64::NAN;
        }
        if volume_m3 <= 0.0 || jacket_height_m < 0.0 {
            return 0.0;
        }
        let fill = self.table.locate_volume(volume_m3);
        if fill.level() <= jacket_height_m {
            fill.area(&self.table)
        } else {
            self.table.area_at(jacket_height_m)
        }
    }
}

// ---------------------------------------------------------------------------
// Profile curves
// ---------------------------------------------------------------------------

/// A meridian profile segment, traversed with `z` non-decreasing.
#[derive(Debug, Clone, Copy)]
enum Curve {
    Line(Line),
    Arc(Arc),
}

/// Straight segment `(r, z) = start + t (end - start)`, `t` in `[0, 1]`.
#[derive(Debug, Clone, Copy)]
struct Line {
    start: (f64, f64),
    end: (f64, f64),
}

/// Elliptic arc `r = centre_r + semi_r sin t`, `z = centre_z - semi_z cos t`,
/// `t` in `[from, to]` within `[0, pi]`; a circular arc has equal semi-axes.
#[derive(Debug, Clone, Copy)]
struct Arc {
    centre_r: f64,
    centre_z: f64,
    semi_r: f64,
    semi_z: f64,
    from: f64,
    to: f64,
}

/// Height derivatives of enclosed volume and wall area at one profile point.
#[derive(Debug, Clone, Copy)]
struct Rates {
    volume: f64,
    area: f64,
}

impl Curve {
    fn param_range(&self) -> (f64, f64) {
        match self {
            Curve::Line(_) => (0.0, 1.0),
            Curve::Arc(arc) => (arc.from, arc.to),
        }
    }

    fn pieces(&self) -> usize {
        match self {
            Curve::Line(_) => LINE_PIECES,
            Curve::Arc(_) => ARC_PIECES,
        }
    }

    /// Point `(r, z)` at parameter `t`.
    fn point(&self, t: f64) -> (f64, f64) {
        match self {
            Curve::Line(line) => line.point(t),
            Curve::Arc(arc) => arc.point(t),
        }
    }

    /// Exact derivative `(dr/dt, dz/dt)` at parameter `t`.
    fn velocity(&self, t: f64) -> (f64, f64) {
        match self {
            Curve::Line(line) => (line.end.0 - line.start.0, line.end.1 - line.start.1),
            Curve::Arc(arc) => arc.velocity(t),
        }
    }

    /// Exact inverse of `z(t)` on a rising segment.
    fn param_at_height(&self, z: f64) -> f64 {
        match self {
            Curve::Line(line) => (z - line.start.1) / (line.end.1 - line.start.1),
            Curve::Arc(arc) => arc.param_at_height(z),
        }
    }

    /// `dV/dz = pi r^2` and `dA/dz = 2 pi r |ds/dt| / (dz/dt)` on a rising segment.
    fn rates_per_height(&self, t: f64) -> Rates {
        let radius = self.point(t).0;
        let area = match self {
            Curve::Line(line) => line.area_per_height(radius),
            Curve::Arc(arc) => arc.area_per_height(t),
        };
        Rates {
            volume: PI * radius * radius,
            area,
        }
    }
}

impl Line {
    fn point(&self, t: f64) -> (f64, f64) {
        (
            self.start.0 + t * (self.end.0 - self.start.0),
            self.start.1 + t * (self.end.1 - self.start.1),
        )
    }

    fn area_per_height(&self, radius: f64) -> f64 {
        let length = (self.end.0 - self.start.0).hypot(self.end.1 - self.start.1);
        2.0 * PI * radius * length / (self.end.1 - self.start.1)
    }
}

impl Arc {
    fn circle(centre: (f64, f64), radius: f64, from: f64, to: f64) -> Self {
        Self::ellipse(centre, radius, radius, from, to)
    }

    fn ellipse(centre: (f64, f64), semi_r: f64, semi_z: f64, from: f64, to: f64) -> Self {
        Self {
            centre_r: centre.0,
            centre_z: centre.1,
            semi_r,
            semi_z,
            from,
            to,
        }
    }

    fn point(&self, t: f64) -> (f64, f64) {
        let (sin, cos) = t.sin_cos();
        (
            self.centre_r + self.semi_r * sin,
            self.centre_z - self.semi_z * cos,
        )
    }

    fn velocity(&self, t: f64) -> (f64, f64) {
        let (sin, cos) = t.sin_cos();
        (self.semi_r * cos, self.semi_z * sin)
    }

    /// Half-angle form `1 - cos t = 2 sin^2(t/2)`, accurate near the apex.
    fn param_at_height(&self, z: f64) -> f64 {
        let versine = ((z - self.centre_z) / self.semi_z + 1.0).clamp(0.0, 2.0);
        2.0 * (0.5 * versine).sqrt().asin()
    }

    /// `2 pi r |ds/dt| / (dz/dt)`, with `r / sin t` taken exactly so that an
    /// arc through the axis (centre on the axis) stays finite at the apex.
    fn area_per_height(&self, t: f64) -> f64 {
        let (sin, cos) = t.sin_cos();
        let speed = (self.semi_r * cos).hypot(self.semi_z * sin);
        let off_axis = if self.centre_r == 0.0 {
            0.0
        } else {
            self.centre_r / sin
        };
        2.0 * PI * speed * (off_axis + self.semi_r) / self.semi_z
    }
}

/// Meridian profile of the bottom head, lowest point at `z = 0`.
fn bottom_profile(bottom: Bottom, diameter: f64) -> Vec<Curve> {
    let radius = diameter / 2.0;
    match bottom {
        Bottom::Flat => vec![Curve::Line(Line {
            start: (0.0, 0.0),
            end: (radius, 0.0),
        })],
        Bottom::Hemispherical => vec![Curve::Arc(Arc::circle(
            (0.0, radius),
            radius,
            0.0,
            FRAC_PI_2,
        ))],
        Bottom::Elliptical => {
            let depth = diameter / 4.0;
            vec![Curve::Arc(Arc::ellipse(
                (0.0, depth),
                radius,
                depth,
                0.0,
                FRAC_PI_2,
            ))]
        }
        Bottom::Torispherical => torispherical_profile(diameter),
    }
}

/// Crown arc (centre on the axis at height R) and knuckle arc (centre at
/// `(D/2 - r, depth)`), tangent at the angle `theta1` from the axis with
/// `sin theta1 = (D/2 - r) / (R - r)`.
fn torispherical_profile(diameter: f64) -> Vec<Curve> {
    let crown = DIN_CROWN_RATIO * diameter;
    let knuckle = DIN_KNUCKLE_RATIO * diameter;
    let knuckle_centre_r = diameter / 2.0 - knuckle;
    let tangent_angle = (knuckle_centre_r / (crown - knuckle)).asin();
    let depth = crown - (crown - knuckle) * tangent_angle.cos();
    vec![
        Curve::Arc(Arc::circle((0.0, crown), crown, 0.0, tangent_angle)),
        Curve::Arc(Arc::circle(
            (knuckle_centre_r, depth),
            knuckle,
            tangent_angle,
            FRAC_PI_2,
        )),
    ]
}

// ---------------------------------------------------------------------------
// Interpolation table
// ---------------------------------------------------------------------------

/// Cubic `c0 + c1 s + c2 s^2 + c3 s^3` on `s` in `[0, 1]`.
#[derive(Debug, Clone, Copy)]
struct Cubic([f64; 4]);

impl Cubic {
    /// Hermite cubic from end values and end slopes (per unit `s`).
    fn hermite(start: f64, end: f64, start_slope: f64, end_slope: f64) -> Self {
        let rise = end - start;
        Self([
            start,
            start_slope,
            3.0 * rise - 2.0 * start_slope - end_slope,
            -2.0 * rise + start_slope + end_slope,
        ])
    }

    fn eval(&self, s: f64) -> f64 {
        let [c0, c1, c2, c3] = self.0;
        c0 + s * (c1 + s * (c2 + s * c3))
    }

    fn rise_at(&self, s: f64) -> f64 {
        let [_, c1, c2, c3] = self.0;
        s * (c1 + s * (c2 + s * c3))
    }

    fn slope(&self, s: f64) -> f64 {
        let [_, c1, c2, c3] = self.0;
        c1 + s * (2.0 * c2 + s * 3.0 * c3)
    }

    /// `s` in `[0, 1]` with `eval(s) = target`, for a rising cubic and a
    /// target between its end values: Newton, kept inside a bisection bracket.
    fn solve(&self, target: f64) -> f64 {
        let rise = target - self.0[0];
        let (mut low, mut high) = (0.0, 1.0);
        let mut s = self.initial_guess(rise);
        for _ in 0..MAX_NEWTON_STEPS {
            let residual = self.rise_at(s) - rise;
            if residual == 0.0 {
                return s;
            }
            if residual > 0.0 {
                high = s;
            } else {
                low = s;
            }
            let newton = s - residual / self.slope(s);
            let next = if newton >= low && newton <= high {
                newton
            } else {
                0.5 * (low + high)
            };
            let step = (next - s).abs();
            s = next;
            if step <= NEWTON_TOLERANCE * s {
                break;
            }
        }
        s
    }

    /// Root of the cubic's quadratic part (a close start also at an apex,
    /// where the slope `c1` is 0), else the linear interpolate.
    fn initial_guess(&self, rise: f64) -> f64 {
        let [_, c1, c2, c3] = self.0;
        let discriminant = c1 * c1 + 4.0 * c2 * rise;
        let quadratic = 2.0 * rise / (c1 + discriminant.sqrt());
        if (0.0..=1.0).contains(&quadratic) {
            quadratic
        } else {
            (rise / (c1 + c2 + c3)).clamp(0.0, 1.0)
        }
    }
}

/// One table interval: height `start .. start + width`, volume and area as
/// cubics in `s = (z - start) / width`.
#[derive(Debug, Clone, Copy)]
struct Interval {
    start: f64,
    width: f64,
    volume: Cubic,
    area: Cubic,
}

/// Height, cumulative volume and cumulative area at one knot.
#[derive(Debug, Clone, Copy)]
struct State {
    height: f64,
    volume: f64,
    area: f64,
}

#[derive(Debug, Clone)]
struct Table {
    /// Knot heights, `intervals.len() + 1` of them (empty if no intervals).
    heights: Vec<f64>,
    /// Cumulative volume at the knots.
    volumes: Vec<f64>,
    intervals: Vec<Interval>,
    /// Last knot; above it the cylinder continues.
    top: State,
    cross_section: f64,
    circumference: f64,
}

/// Where a liquid volume sits in the table.
enum Fill<'a> {
    Inside(&'a Interval, f64),
    Above(f64),
}

impl Fill<'_> {
    fn level(&self) -> f64 {
        match *self {
            Fill::Inside(interval, s) => interval.start + s * interval.width,
            Fill::Above(level) => level,
        }
    }

    fn area(&self, table: &Table) -> f64 {
        match *self {
            Fill::Inside(interval, s) => interval.area.eval(s),
            Fill::Above(level) => table.area_at(level),
        }
    }
}

impl Table {
    /// Volume below `height >= 0`.
    fn volume_at(&self, height: f64) -> f64 {
        if height >= self.top.height {
            return self.top.volume + self.cross_section * (height - self.top.height);
        }
        let (interval, s) = self.locate_height(height);
        interval.volume.eval(s)
    }

    /// Area below `height >= 0`, including any disc lumped at height 0.
    fn area_at(&self, height: f64) -> f64 {
        if height >= self.top.height {
            return self.top.area + self.circumference * (height - self.top.height);
        }
        let (interval, s) = self.locate_height(height);
        interval.area.eval(s)
    }

    /// Interval and local coordinate for `0 <= height < top.height`.
    fn locate_height(&self, height: f64) -> (&Interval, f64) {
        let index = self.heights.partition_point(|&z| z < height).max(1) - 1;
        let interval = &self.intervals[index];
        let s = ((height - interval.start) / interval.width).clamp(0.0, 1.0);
        (interval, s)
    }

    /// Interval and local coordinate for a volume `> 0`.
    fn locate_volume(&self, volume: f64) -> Fill<'_> {
        if volume >= self.top.volume {
            let excess = volume - self.top.volume;
            return Fill::Above(self.top.height + excess / self.cross_section);
        }
        let index = self.volumes.partition_point(|&v| v < volume).max(1) - 1;
        let interval = &self.intervals[index];
        Fill::Inside(interval, interval.volume.solve(volume))
    }
}

/// Accumulates the table segment by segment, bottom to top.
struct TableBuilder {
    rule: Vec<(f64, f64)>,
    heights: Vec<f64>,
    volumes: Vec<f64>,
    intervals: Vec<Interval>,
    current: State,
    cross_section: f64,
    circumference: f64,
}

impl TableBuilder {
    fn new(diameter: f64) -> Self {
        Self {
            rule: gauss_legendre_rule(GAUSS_POINTS),
            heights: Vec::new(),
            volumes: Vec::new(),
            intervals: Vec::new(),
            current: State {
                height: 0.0,
                volume: 0.0,
                area: 0.0,
            },
            cross_section: PI * diameter * diameter / 4.0,
            circumference: PI * diameter,
        }
    }

    fn state(&self) -> State {
        self.current
    }

    /// Adds a segment starting where the previous one ended. A horizontal
    /// segment only adds its area, lumped at its height.
    fn add_segment(&mut self, curve: &Curve) {
        let (from, to) = curve.param_range();
        let (z_from, z_to) = (curve.point(from).1, curve.point(to).1);
        if z_to <= z_from {
            self.current.area += self.integrate(curve, from, to).1;
            return;
        }
        if self.heights.is_empty() {
            self.heights.push(self.current.height);
            self.volumes.push(self.current.volume);
        }
        let pieces = curve.pieces();
        let mut t_start = from;
        let mut rates_start = curve.rates_per_height(from);
        for piece in 1..=pieces {
            let (t_end, z_end) = if piece == pieces {
                (to, z_to)
            } else {
                let target = z_from + (z_to - z_from) * piece as f64 / pieces as f64;
                let t = curve.param_at_height(target);
                (t, curve.point(t).1)
            };
            let rates_end = curve.rates_per_height(t_end);
            let (volume, area) = self.integrate(curve, t_start, t_end);
            self.push_interval(z_end, volume, area, rates_start, rates_end);
            t_start = t_end;
            rates_start = rates_end;
        }
    }

    fn push_interval(&mut self, z_end: f64, volume: f64, area: f64, start: Rates, end: Rates) {
        let from = self.current;
        let width = z_end - from.height;
        self.intervals.push(Interval {
            start: from.height,
            width,
            volume: Cubic::hermite(
                from.volume,
                from.volume + volume,
                start.volume * width,
                end.volume * width,
            ),
            area: Cubic::hermite(
                from.area,
                from.area + area,
                start.area * width,
                end.area * width,
            ),
        });
        self.current = State {
            height: z_end,
            volume: from.volume + volume,
            area: from.area + area,
        };
        self.heights.push(z_end);
        self.volumes.push(self.current.volume);
    }

    /// `(integral of pi r^2 dz, integral of 2 pi r ds)` over `t` in `[a, b]`.
    fn integrate(&self, curve: &Curve, a: f64, b: f64) -> (f64, f64) {
        let (mid, half) = (0.5 * (a + b), 0.5 * (b - a));
        let (mut volume, mut area) = (0.0, 0.0);
        for &(node, weight) in &self.rule {
            let t = mid + half * node;
            let (r, _) = curve.point(t);
            let (dr, dz) = curve.velocity(t);
            volume += weight * PI * r * r * dz;
            area += weight * 2.0 * PI * r * dr.hypot(dz);
        }
        (volume * half, area * half)
    }

    fn finish(self) -> Table {
        Table {
            heights: self.heights,
            volumes: self.volumes,
            intervals: self.intervals,
            top: self.current,
            cross_section: self.cross_section,
            circumference: self.circumference,
        }
    }
}

/// Nodes and weights of the `n`-point Gauss-Legendre rule on `[-1, 1]`.
fn gauss_legendre_rule(n: usize) -> Vec<(f64, f64)> {
    (0..n)
        .map(|i| {
            let mut x = (PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
            for _ in 0..100 {
                let (p, dp) = legendre_with_derivative(n, x);
                let step = p / dp;
                x -= step;
                if step.abs() <= 1e-16 {
                    break;
                }
            }
            let (_, dp) = legendre_with_derivative(n, x);
            (x, 2.0 / ((1.0 - x * x) * dp * dp))
        })
        .collect()
}

/// Legendre polynomial `P_n(x)` and its derivative, by the three-term recurrence.
fn legendre_with_derivative(n: usize, x: f64) -> (f64, f64) {
    let (mut previous, mut current) = (1.0, x);
    for k in 2..=n {
        let k = k as f64;
        let next = ((2.0 * k - 1.0) * x * current - (k - 1.0) * previous) / k;
        previous = current;
        current = next;
    }
    let derivative = n as f64 * (x * current - previous) / (x * x - 1.0);
    (current, derivative)
}

#[cfg(test)]
mod tests {
    use super::*;

    const ALL_BOTTOMS: [Bottom; 4] = [
        Bottom::Flat,
        Bottom::Hemispherical,
        Bottom::Elliptical,
        Bottom::Torispherical,
    ];

    fn relative_error(value: f64, expected: f64) -> f64 {
        ((value - expected) / expected).abs()
    }

    fn assert_close(value: f64, expected: f64, tolerance: f64, what: &str) {
        let error = relative_error(value, expected);
        assert!(
            error <= tolerance,
            "{what}: got {value}, expected {expected}, relative error {error:e}"
        );
    }

    fn vessel(bottom: Bottom, diameter: f64, nominal: f64) -> VesselGeometry {
        VesselGeometry::new(bottom, diameter, nominal).expect("valid geometry")
    }

    fn spherical_cap_volume(radius: f64, h: f64) -> f64 {
        PI * h * h * (3.0 * radius - h) / 3.0
    }

    #[test]
    fn gauss_legendre_rule_integrates_degree_15_exactly() {
        // Source: an n-point Gauss-Legendre rule is exact to degree 2n - 1;
        // integral of x^14 over [-1, 1] is 2/15.
        let rule = gauss_legendre_rule(GAUSS_POINTS);
        let weights: f64 = rule.iter().map(|&(_, w)| w).sum();
        let moment: f64 = rule.iter().map(|&(x, w)| w * x.powi(14)).sum();
        assert_close(weights, 2.0, 1e-15, "weights");
        assert_close(moment, 2.0 / 15.0, 1e-14, "x^14 moment");
    }

    #[test]
    fn hemisphere_matches_spherical_cap() {
        // Source: spherical cap closed forms, V = pi h^2 (3R - h) / 3 and
        // A = 2 pi R h; full hemisphere 2/3 pi R^3 (any geometry text).
        for diameter in [0.3, 1.8, 4.0] {
            let radius = diameter / 2.0;
            let v = vessel(Bottom::Hemispherical, diameter, 10.0 * radius.powi(3));
            for fraction in [1e-6, 1e-3, 0.05, 0.2, 0.37, 0.5, 0.81, 0.999, 1.0] {
                let h = fraction * radius;
                let volume = spherical_cap_volume(radius, h);
                let area = 2.0 * PI * radius * h;
                assert_close(v.volume_below(h), volume, 1e-9, "cap volume");
                assert_close(v.area_below(h), area, 1e-9, "cap area");
                assert_close(v.level(volume), h, 1e-9, "cap level");
                assert_close(v.wetted_area(volume), area, 1e-9, "cap wetted area");
            }
            assert_close(v.bottom_depth(), radius, 1e-15, "depth");
            assert_close(
                v.bottom_volume(),
                2.0 / 3.0 * PI * radius.powi(3),
                1e-12,
                "head V",
            );
            assert_close(v.bottom_area(), 2.0 * PI * radius * radius, 1e-12, "head A");
        }
    }

    /// Source: oblate half-spheroid, derived here. With `u = cos t` the
    /// profile `r = a sin t, z = b (1 - cos t)` gives
    /// `dA = 2 pi a sqrt(b^2 + k^2 u^2) du`, `k^2 = a^2 - b^2`, whose
    /// antiderivative is `u/2 sqrt(b^2 + k^2 u^2) + b^2/(2k) asinh(k u / b)`.
    fn spheroid_cap_area(a: f64, b: f64, h: f64) -> f64 {
        let k = (a * a - b * b).sqrt();
        let antiderivative = |u: f64| {
            0.5 * u * (b * b + k * k * u * u).sqrt() + b * b / (2.0 * k) * (k * u / b).asinh()
        };
        let u_level = 1.0 - h / b;
        2.0 * PI * a * (antiderivative(1.0) - antiderivative(u_level))
    }

    #[test]
    fn elliptical_matches_half_ellipsoid() {
        // Source: half-ellipsoid volume pi D^3 / 24; ellipsoid cap volume
        // pi a^2 h^2 (3b - h) / (3 b^2); oblate half-spheroid area
        // A = pi a^2 + pi b^2 / e * atanh(e), e = sqrt(1 - b^2 / a^2).
        for diameter in [0.5, 1.8, 3.2] {
            let (a, b) = (diameter / 2.0, diameter / 4.0);
            let v = vessel(Bottom::Elliptical, diameter, diameter.powi(3));
            let e = (1.0 - b * b / (a * a)).sqrt();
            let head_area = PI * a * a + PI * b * b / e * e.atanh();
            assert_close(
                head_area / diameter.powi(2),
                1.08399,
                1e-5,
                "quoted 1.08399",
            );
            assert_close(v.bottom_area(), head_area, 1e-12, "head area");
            assert_close(
                v.bottom_volume(),
                PI * diameter.powi(3) / 24.0,
                1e-12,
                "head V",
            );
            assert_close(v.bottom_depth(), b, 1e-15, "depth");
            assert_close(
                spheroid_cap_area(a, b, b),
                head_area,
                1e-13,
                "antiderivative",
            );
            let dense = (1..=400).map(|i| i as f64 / 400.0);
            for fraction in [1e-6, 1e-4, 1e-3].into_iter().chain(dense) {
                let h = fraction * b;
                let volume = PI * a * a * h * h * (3.0 * b - h) / (3.0 * b * b);
                let area = spheroid_cap_area(a, b, h);
                assert_close(v.volume_below(h), volume, 1e-9, "cap volume");
                assert_close(v.area_below(h), area, 1e-9, "cap area");
                assert_close(v.level(volume), h, 1e-9, "cap level");
            }
        }
    }

    /// DIN 28011 head on D = 1: crown R = 1, knuckle r = 0.1, knuckle centre
    /// at radius a = 0.4, tangent angle sin(theta1) = a / (R - r).
    struct DinHead {
        crown: f64,
        knuckle: f64,
        offset: f64,
        theta1: f64,
        tangent_height: f64,
        depth: f64,
    }

    fn din_head(diameter: f64) -> DinHead {
        let (crown, knuckle) = (diameter, 0.1 * diameter);
        let offset = diameter / 2.0 - knuckle;
        let theta1 = (offset / (crown - knuckle)).asin();
        DinHead {
            crown,
            knuckle,
            offset,
            theta1,
            tangent_height: crown * (1.0 - theta1.cos()),
            depth: crown - (crown - knuckle) * theta1.cos(),
        }
    }

    impl DinHead {
        /// Source: derived here. Knuckle `r = a + k sin t, z = depth - k cos t`:
        /// `V = pi k int (a + k sin t)^2 sin t dt`, `A = 2 pi k int (a + k sin t) dt`,
        /// integrated in closed form from theta1 to the angle of height `h`.
        fn knuckle_volume_area(&self, h: f64) -> (f64, f64) {
            let (a, k) = (self.offset, self.knuckle);
            let angle = ((self.depth - h) / k).acos();
            let volume_primitive = |t: f64| {
                let c = t.cos();
                -a * a * c + a * k * (t - (2.0 * t).sin() / 2.0) + k * k * (c * c * c / 3.0 - c)
            };
            let area_primitive = |t: f64| a * t - k * t.cos();
            let volume = PI * k * (volume_primitive(angle) - volume_primitive(self.theta1));
            let area = 2.0 * PI * k * (area_primitive(angle) - area_primitive(self.theta1));
            let crown_volume = spherical_cap_volume(self.crown, self.tangent_height);
            let crown_area = 2.0 * PI * self.crown * self.tangent_height;
            (crown_volume + volume, crown_area + area)
        }
    }

    #[test]
    fn torispherical_matches_din_28011_head() {
        // Source: derived values for DIN 28011 (R = D, r = 0.1 D): volume
        // 0.09897 D^3, depth 0.19377 D, tangent 0.10419 D, area 0.98999 D^2.
        for diameter in [1.0, 1.8, 2.6] {
            let v = vessel(Bottom::Torispherical, diameter, 2.0 * diameter.powi(3));
            let head = din_head(diameter);
            let d3 = diameter.powi(3);
            assert_close(v.bottom_volume() / d3, 0.09897, 5e-5, "head volume");
            assert_close(v.bottom_depth() / diameter, 0.19377, 5e-5, "depth");
            assert_close(head.tangent_height / diameter, 0.10419, 5e-5, "tangent");
            assert_close(
                v.bottom_area() / diameter.powi(2),
                0.98999,
                5e-5,
                "head area",
            );
            let (volume, area) = head.knuckle_volume_area(head.depth);
            assert_close(v.bottom_volume(), volume, 1e-12, "head volume closed form");
            assert_close(v.bottom_area(), area, 1e-12, "head area closed form");
        }
    }

    #[test]
    fn torispherical_crown_and_knuckle_match_closed_forms() {
        // Source: spherical cap (radius R = D) below the tangent height;
        // knuckle closed form (DinHead::knuckle_volume_area) above it.
        let diameter = 1.8;
        let v = vessel(Bottom::Torispherical, diameter, 6.3);
        let head = din_head(diameter);
        let dense = || (1..=400).map(|i| i as f64 / 400.0);
        for fraction in [1e-6, 1e-3].into_iter().chain(dense()) {
            let h = fraction * head.tangent_height;
            let volume = spherical_cap_volume(head.crown, h);
            assert_close(v.volume_below(h), volume, 1e-9, "crown volume");
            assert_close(
                v.area_below(h),
                2.0 * PI * head.crown * h,
                1e-9,
                "crown area",
            );
            assert_close(v.level(volume), h, 1e-9, "crown level");
        }
        for fraction in dense() {
            let h = head.tangent_height + fraction * (head.depth - head.tangent_height);
            let (volume, area) = head.knuckle_volume_area(h);
            assert_close(v.volume_below(h), volume, 1e-9, "knuckle volume");
            assert_close(v.area_below(h), area, 1e-9, "knuckle area");
            assert_close(v.level(volume), h, 1e-9, "knuckle level");
        }
    }

    #[test]
    fn flat_bottom_is_a_cylinder_with_a_disc() {
        // Source: cylinder, V = pi D^2 h / 4, A = pi D^2 / 4 + pi D h.
        let diameter = 1.8;
        let v = vessel(Bottom::Flat, diameter, 6.3);
        assert_eq!(v.bottom_depth(), 0.0);
        assert_eq!(v.bottom_volume(), 0.0);
        let disc = PI * diameter * diameter / 4.0;
        assert_close(v.bottom_area(), disc, 1e-14, "disc");
        for h in [1e-9, 0.01, 0.7, 2.0, v.height(), 3.5] {
            let volume = disc * h;
            let area = disc + PI * diameter * h;
            assert_close(v.volume_below(h), volume, 1e-12, "volume");
            assert_close(v.area_below(h), area, 1e-12, "area");
            assert_close(v.level(volume), h, 1e-12, "level");
            assert_close(v.wetted_area(volume), area, 1e-12, "wetted");
        }
        // Any positive volume wets the whole disc.
        assert!(v.wetted_area(1e-300) >= disc);
        assert_eq!(v.area_below(0.0), 0.0);
    }

    #[test]
    fn check_table_for_1_8_m_vessel() {
        // Source: derived check values for D = 1.8 m, nominal 6.3 m3.
        let cases = [
            (Bottom::Torispherical, 0.5, 0.3184, 3.0351),
            (Bottom::Torispherical, 1.0, 0.5150, 4.1472),
            (Bottom::Torispherical, 2.5, 1.1044, 7.4805),
            (Bottom::Torispherical, 5.0, 2.0869, 13.0361),
            (Bottom::Elliptical, 0.5, 0.3446, 2.8999),
            (Bottom::Elliptical, 1.0, 0.5430, 4.0379),
            (Bottom::Elliptical, 2.5, 1.1324, 7.3712),
            (Bottom::Elliptical, 5.0, 2.1149, 12.9268),
        ];
        for (bottom, volume, level, area) in cases {
            let v = vessel(bottom, 1.8, 6.3);
            assert_close(v.level(volume), level, 1e-3, bottom.name());
            assert_close(v.wetted_area(volume), area, 1e-3, bottom.name());
        }
    }

    #[test]
    fn level_inverts_volume_for_every_bottom() {
        // Source: definition, level(volume_below(h)) = h.
        for bottom in ALL_BOTTOMS {
            let v = vessel(bottom, 1.8, 6.3);
            let top = 1.2 * v.height();
            for i in 1..=4000 {
                let h = top * (i as f64 / 4000.0).powi(2);
                let back = v.level(v.volume_below(h));
                assert!(
                    (back - h).abs() <= 1e-9,
                    "{}: h {h} -> {back}",
                    bottom.name()
                );
                let area = v.wetted_area(v.volume_below(h));
                assert_close(area, v.area_below(h), 1e-9, bottom.name());
            }
        }
    }

    #[test]
    fn volume_area_and_level_are_monotone() {
        // Source: definition; the wall only rises and widens.
        for bottom in ALL_BOTTOMS {
            let v = vessel(bottom, 1.8, 6.3);
            let (mut volume, mut area, mut level) = (0.0, 0.0, 0.0);
            for i in 1..=20000 {
                let h = 1.1 * v.height() * i as f64 / 20000.0;
                let (next_volume, next_area) = (v.volume_below(h), v.area_below(h));
                let next_level = v.level(7.0 * i as f64 / 20000.0);
                assert!(next_volume > volume, "{} volume at {h}", bottom.name());
                assert!(next_area > area, "{} area at {h}", bottom.name());
                assert!(next_level > level, "{} level", bottom.name());
                (volume, area, level) = (next_volume, next_area, next_level);
            }
        }
    }

    #[test]
    fn jacketed_area_is_capped_at_the_jacket() {
        // Source: definition, area below min(level, jacket height).
        for bottom in ALL_BOTTOMS {
            let v = vessel(bottom, 1.8, 6.3);
            let jacket = 1.5;
            let capped = v.area_below(jacket);
            for volume in [0.2, 1.0, 3.0, 5.0, 6.3, 8.0] {
                let expected = v.wetted_area(volume).min(capped);
                assert_eq!(
                    v.jacketed_area(volume, jacket),
                    expected,
                    "{}",
                    bottom.name()
                );
            }
            assert_eq!(v.jacketed_area(0.0, jacket), 0.0);
            assert_eq!(v.jacketed_area(1.0, -0.1), 0.0);
        }
        let flat = vessel(Bottom::Flat, 1.8, 6.3);
        assert_eq!(flat.jacketed_area(1.0, 0.0), flat.bottom_area());
    }

    #[test]
    fn area_per_volume_scales_as_inverse_cube_root() {
        // Source: geometric similarity, A ~ L^2 and V ~ L^3.
        for bottom in ALL_BOTTOMS {
            let small = vessel(bottom, 1.0, 1.5);
            for scale in [0.2, 2.0, 7.5] {
                let large = vessel(bottom, scale, 1.5 * scale.powi(3));
                for fill in [0.01, 0.08, 0.3, 0.9, 1.3] {
                    let (v_small, v_large) = (1.5 * fill, 1.5 * fill * scale.powi(3));
                    let ratio = (large.wetted_area(v_large) / v_large)
                        / (small.wetted_area(v_small) / v_small);
                    let expected = (v_large / v_small).powf(-1.0 / 3.0);
                    assert_close(ratio, expected, 1e-12, bottom.name());
                }
            }
        }
    }

    #[test]
    fn volume_above_nominal_continues_the_cylinder() {
        // Source: specification, the shell continues above the nominal volume.
        for bottom in ALL_BOTTOMS {
            let v = vessel(bottom, 1.8, 6.3);
            assert_close(v.volume_below(v.height()), 6.3, 1e-12, "nominal");
            let extra = PI * 1.8 * 1.8 / 4.0;
            assert_close(v.level(6.3 + extra), v.height() + 1.0, 1e-12, "level");
            assert_close(
                v.wetted_area(6.3 + extra),
                v.area_below(v.height()) + PI * 1.8,
                1e-12,
                "area",
            );
        }
    }

    #[test]
    fn construction_errors() {
        // Source: specification of GeometryError.
        let head = vessel(Bottom::Torispherical, 1.8, 6.3).bottom_volume();
        match VesselGeometry::new(Bottom::Torispherical, 1.8, 0.5) {
            Err(GeometryError::NominalBelowBottom {
                nominal_m3,
                bottom_m3,
            }) => {
                assert_eq!(nominal_m3, 0.5);
                assert_eq!(bottom_m3, head);
            }
            other => panic!("expected NominalBelowBottom, got {other:?}"),
        }
        for diameter in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            let result = VesselGeometry::new(Bottom::Flat, diameter, 1.0);
            assert!(matches!(result, Err(GeometryError::NonPositiveDiameter(_))));
        }
        let error = VesselGeometry::new(Bottom::Hemispherical, 2.0, 1.0).unwrap_err();
        assert!(error.to_string().contains("smaller than the bottom head"));
        assert!(VesselGeometry::new(Bottom::Hemispherical, 2.0, f64::NAN).is_err());
    }

    #[test]
    fn nominal_equal_to_head_and_endless_shell() {
        // Source: specification; a shell of zero length still continues.
        let head = vessel(Bottom::Elliptical, 1.8, 6.3).bottom_volume();
        let short = vessel(Bottom::Elliptical, 1.8, head);
        assert_eq!(short.height(), short.bottom_depth());
        let endless = vessel(Bottom::Elliptical, 1.8, f64::INFINITY);
        assert_eq!(endless.height(), f64::INFINITY);
        let reference = vessel(Bottom::Elliptical, 1.8, 6.3);
        for volume in [0.3, 2.0, 9.0] {
            assert_close(short.level(volume), reference.level(volume), 1e-12, "short");
            assert_close(
                endless.level(volume),
                reference.level(volume),
                1e-12,
                "endless",
            );
        }
        let empty_flat = vessel(Bottom::Flat, 1.0, 0.0);
        assert_close(
            empty_flat.wetted_area(PI / 4.0),
            PI / 4.0 + PI,
            1e-12,
            "flat, no shell",
        );
    }

    #[test]
    fn degenerate_inputs() {
        // Source: specification; <= 0 gives 0, NaN gives NaN, no panic.
        for bottom in ALL_BOTTOMS {
            let v = vessel(bottom, 1.8, 6.3);
            assert_eq!(bottom.name(), v.bottom().name());
            assert_eq!(v.diameter(), 1.8);
            for value in [0.0, -1.0, f64::NEG_INFINITY] {
                assert_eq!(v.level(value), 0.0);
                assert_eq!(v.wetted_area(value), 0.0);
                assert_eq!(v.volume_below(value), 0.0);
                assert_eq!(v.area_below(value), 0.0);
            }
            assert!(v.level(f64::NAN).is_nan());
            assert!(v.wetted_area(f64::NAN).is_nan());
            assert!(v.volume_below(f64::NAN).is_nan());
            assert!(v.area_below(f64::NAN).is_nan());
            assert!(v.jacketed_area(f64::NAN, 1.0).is_nan());
            assert!(v.jacketed_area(1.0, f64::NAN).is_nan());
            assert_eq!(v.level(f64::INFINITY), f64::INFINITY);
        }
    }
}
