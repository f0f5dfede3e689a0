//! The overall heat-transfer coefficient from film and wall resistances in series, with the
//! process-side film from the agitated-vessel correlation Nu = C Re^(2/3) Pr^(1/3) (mu/mu_w)^0.14.
//!
//! 1/U = 1/h_process + sum(thickness/conductivity) + fouling + 1/h_coolant: the flat-wall form,
//! every term on the inner area (the wall of a vessel is thin against its radius; the test
//! against the cylinder-wall series formula bounds the error by the wall's thickness over the
//! radius).

/// The impeller types of the wall constants of Penney and Atiemo-Obeng, "Heat Transfer", in
/// Paul, Atiemo-Obeng and Kresta (eds.), Handbook of Industrial Mixing, Wiley 2004, ch. 14
/// (vessel wall, geometric factor 1), as transcribed in the open-source Python library PolyKin
/// (`polykin.transport.heat.Nu_tank`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ImpellerType {
    /// Six-blade disc (Rushton) turbine.
    Rushton,
    /// Four flat blades.
    FlatBlade,
    /// Four pitched blades (45°).
    PitchedBlade,
    /// Three-blade high-efficiency hydrofoil.
    Hydrofoil,
    /// Marine propeller (pitch = diameter).
    Propeller,
}

impl ImpellerType {
    pub const NAMES: [&'static str; 5] = [
        "rushton",
        "flat-blade",
        "pitched-blade",
        "hydrofoil",
        "propeller",
    ];

    pub fn from_name(name: &str) -> Option<ImpellerType> {
        Some(match name {
            "rushton" => ImpellerType::Rushton,
            "flat-blade" => ImpellerType::FlatBlade,
            "pitched-blade" => ImpellerType::PitchedBlade,
            "hydrofoil" => ImpellerType::Hydrofoil,
            "propeller" => ImpellerType::Propeller,
            _ => return None,
        })
    }

    pub fn name(self) -> &'static str {
        match self {
            ImpellerType::Rushton => "rushton",
            ImpellerType::FlatBlade => "flat-blade",
            ImpellerType::PitchedBlade => "pitched-blade",
            ImpellerType::Hydrofoil => "hydrofoil",
            ImpellerType::Propeller => "propeller",
        }
    }

    /// C of Nu = C Re^(2/3) Pr^(1/3) (mu/mu_w)^0.14 for the vessel wall (Penney and
    /// Atiemo-Obeng 2004, with H/T = 1 and the standard blade length).
    pub fn wall_constant(self) -> f64 {
        match self {
            ImpellerType::Rushton => 0.74,
            ImpellerType::FlatBlade => 0.66,
            ImpellerType::PitchedBlade => 0.45,
            ImpellerType::Hydrofoil => 0.31,
            ImpellerType::Propeller => 0.50,
        }
    }
}

/// Exponent of the viscosity-ratio (Sieder–Tate) correction.
const VISCOSITY_RATIO_EXPONENT: f64 = 0.14;

/// The contents' properties the correlation needs, SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Contents {
    /// kg/m^3
    pub density: f64,
    /// J/(kg K)
    pub specific_heat: f64,
    /// Pa s, at the bulk temperature
    pub viscosity: f64,
    /// Pa s, at the wall temperature
    pub wall_viscosity: f64,
    /// W/(m K)
    pub thermal_conductivity: f64,
}

impl Contents {
    /// Re = rho N d^2 / mu (N in 1/s, d the impeller diameter).
    pub fn reynolds(&self, speed: f64, impeller_diameter: f64) -> f64 {
        self.density * speed * impeller_diameter * impeller_diameter / self.viscosity
    }

    /// Pr = cp mu / k.
    pub fn prandtl(&self) -> f64 {
        self.specific_heat * self.viscosity / self.thermal_conductivity
    }
}

/// The process-side film coefficient h = Nu k / D.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ProcessFilm {
    /// From the correlation with constant `c` and the contents' properties.
    Correlation { c: f64, contents: Contents },
    /// From a Wilson plot of lab data: h = factor N^(2/3) d^(4/3) / D, the form the correlation
    /// takes for the same contents (factor in W K^-1 s^(2/3) m^(-4/3)... per unit of N, d, D).
    Fitted { factor: f64 },
}

impl ProcessFilm {
    /// h_process, W/(m^2 K), at impeller speed `speed` (1/s), impeller diameter `d` and vessel
    /// diameter `vessel_diameter` (m).
    pub fn coefficient(&self, speed: f64, d: f64, vessel_diameter: f64) -> f64 {
        match *self {
            ProcessFilm::Correlation { c, contents } => {
                let nusselt = c
                    * contents.reynolds(speed, d).powf(2.0 / 3.0)
                    * contents.prandtl().powf(1.0 / 3.0)
                    * (contents.viscosity / contents.wall_viscosity).powf(VISCOSITY_RATIO_EXPONENT);
                nusselt * contents.thermal_conductivity / vessel_diameter
            }
            ProcessFilm::Fitted { factor } => {
                factor * speed.powf(2.0 / 3.0) * d.powf(4.0 / 3.0) / vessel_diameter
            }
        }
    }

    /// The Reynolds number where the contents are known.
    pub fn reynolds(&self, speed: f64, d: f64) -> Option<f64> {
        match self {
            ProcessFilm::Correlation { contents, .. } => Some(contents.reynolds(speed, d)),
            ProcessFilm::Fitted { .. } => None,
        }
    }
}

/// One layer of the wall (enamel, steel...): thickness m, conductivity W/(m K).
#[derive(Debug, Clone, PartialEq)]
pub struct WallLayer {
    pub name: String,
    pub thickness: f64,
    pub conductivity: f64,
}

impl WallLayer {
    /// thickness / conductivity, m^2 K/W.
    pub fn resistance(&self) -> f64 {
        self.thickness / self.conductivity
    }
}

/// How the impeller speed follows the scale under geometric similarity.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SpeedRule {
    /// Constant power per volume in turbulent flow (P = Np rho N^3 d^5): N ∝ d^(-2/3).
    PowerPerVolume,
    /// Constant tip speed pi N d: N ∝ 1/d.
    TipSpeed,
}

impl SpeedRule {
    /// The speed of the impeller scaled by `length_ratio` from `speed`.
    pub fn scaled_speed(self, speed: f64, length_ratio: f64) -> f64 {
        match self {
            SpeedRule::PowerPerVolume => speed * length_ratio.powf(-2.0 / 3.0),
            SpeedRule::TipSpeed => speed / length_ratio,
        }
    }

    pub fn name(self) -> &'static str {
        match self {
            SpeedRule::PowerPerVolume => "power-per-volume",
            SpeedRule::TipSpeed => "tip-speed",
        }
    }
}

/// The whole series of resistances between the contents and the coolant.
#[derive(Debug, Clone, PartialEq)]
pub struct FilmModel {
    pub process: ProcessFilm,
    pub wall: Vec<WallLayer>,
    /// m^2 K/W (both sides together)
    pub fouling: f64,
    /// Coolant-side film coefficient, W/(m^2 K).
    pub coolant_film: f64,
    /// Impeller diameter, m, and speed, 1/s.
    pub impeller_diameter: f64,
    pub impeller_speed: f64,
}

/// Each resistance of the series, m^2 K/W.
#[derive(Debug, Clone, PartialEq)]
pub struct Resistances {
    pub process_film: f64,
    /// (name, resistance) of each wall layer.
    pub wall: Vec<(String, f64)>,
    pub fouling: f64,
    pub coolant_film: f64,
}

impl Resistances {
    /// 1/U, m^2 K/W.
    pub fn total(&self) -> f64 {
        self.process_film
            + self.wall.iter().map(|(_, r)| r).sum::<f64>()
            + self.fouling
            + self.coolant_film
    }

    /// U, W/(m^2 K).
    pub fn coefficient(&self) -> f64 {
        1.0 / self.total()
    }

    /// (name, resistance, share of 1/U) of every term, in series order.
    pub fn breakdown(&self) -> Vec<(String, f64, f64)> {
        let total = self.total();
        let mut rows = vec![("process film".to_string(), self.process_film)];
        rows.extend(
            self.wall
                .iter()
                .map(|(name, r)| (format!("wall: {name}"), *r)),
        );
        rows.push(("fouling".to_string(), self.fouling));
        rows.push(("coolant film".to_string(), self.coolant_film));
        rows.into_iter()
            .map(|(name, r)| (name, r, r / total))
            .collect()
    }
}

impl FilmModel {
    /// The resistances in a vessel of diameter `vessel_diameter` (m).
    pub fn resistances(&self, vessel_diameter: f64) -> Resistances {
        let h =
            self.process
                .coefficient(self.impeller_speed, self.impeller_diameter, vessel_diameter);
        Resistances {
            process_film: 1.0 / h,
            wall: self
                .wall
                .iter()
                .map(|l| (l.name.clone(), l.resistance()))
                .collect(),
            fouling: self.fouling,
            coolant_film: 1.0 / self.coolant_film,
        }
    }

    /// U, W/(m^2 K), in a vessel of diameter `vessel_diameter`.
    pub fn coefficient(&self, vessel_diameter: f64) -> f64 {
        self.resistances(vessel_diameter).coefficient()
    }

    /// The same wall, fouling and coolant side with the impeller scaled by `length_ratio`
    /// (diameter in proportion, speed by `rule`).
    pub fn scaled(&self, length_ratio: f64, rule: SpeedRule) -> FilmModel {
        FilmModel {
            impeller_diameter: self.impeller_diameter * length_ratio,
            impeller_speed: rule.scaled_speed(self.impeller_speed, length_ratio),
            ..self.clone()
        }
    }

    /// Re of the impeller where the contents are known.
    pub fn reynolds(&self) -> Option<f64> {
        self.process
            .reynolds(self.impeller_speed, self.impeller_diameter)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn water_like() -> Contents {
        Contents {
            density: 1000.0,
            specific_heat: 4200.0,
            viscosity: 1e-3,
            wall_viscosity: 1e-3,
            thermal_conductivity: 0.6,
        }
    }

    /// Check values from the Python library PolyKin 0.8.0 (PyPI `polykin`), function
    /// `polykin.hmt.correlations.Nu_tank(surface='wall', impeller=..., Re, Pr, mur)` with its
    /// default geometry (H/T = 1, L/Ls = 1), h = Nu k / T; computed with it locally, the
    /// values written here (no Python code in the project). Inputs of its own docstring example
    /// (which prints h = 1.6e+03 for HE3): T = 2 m, d = T/3, 120 rpm, water (rho 1000,
    /// mu 1e-3, k 0.6, cp 4200). Impeller codes there: 6BD, 4BF, 4BP, HE3, PROP.
    #[test]
    fn the_film_coefficient_matches_the_polykin_library() {
        let contents = water_like();
        let speed = 120.0 / 60.0;
        let vessel = 2.0;
        let d = vessel / 3.0;
        for (kind, expected) in POLYKIN_WALL_H {
            let film = ProcessFilm::Correlation {
                c: kind.wall_constant(),
                contents,
            };
            let h = film.coefficient(speed, d, vessel);
            let deviation = (h - expected).abs() / expected;
            assert!(deviation < 0.02, "{kind:?}: {h} vs {expected}");
        }
    }

    /// h (W/(m^2 K)) of PolyKin's Nu_tank for the inputs above (see the test).
    const POLYKIN_WALL_H: [(ImpellerType, f64); 5] = [
        (ImpellerType::Rushton, 3926.003111791104),
        (ImpellerType::FlatBlade, 3501.5703429488226),
        (ImpellerType::PitchedBlade, 2387.4343247378333),
        (ImpellerType::Hydrofoil, 1644.6769792638408),
        (ImpellerType::Propeller, 2652.704805264259),
    ];

    /// The same library with a viscosity ratio: Nu_tank('wall', '4BP', Re, Pr, mu/mu_w) for
    /// T = 1.6 m, d = 0.8 m, 90 rpm, rho 1050, cp 1750, k 0.14, mu 2.5 mPa s, mu_w 4 mPa s
    /// (Re = 403 200, Pr = 31.25): h = 633.7833008783647 W/(m^2 K).
    #[test]
    fn the_viscosity_ratio_enters_as_in_the_polykin_library() {
        let film = ProcessFilm::Correlation {
            c: ImpellerType::PitchedBlade.wall_constant(),
            contents: Contents {
                density: 1050.0,
                specific_heat: 1750.0,
                viscosity: 2.5e-3,
                wall_viscosity: 4e-3,
                thermal_conductivity: 0.14,
            },
        };
        let h = film.coefficient(1.5, 0.8, 1.6);
        assert!((h / 633.7833008783647 - 1.0).abs() < 0.02, "{h}");
        assert!((film.reynolds(1.5, 0.8).unwrap() - 403_200.0).abs() < 1e-6);
    }

    /// Textbook series formula for a plain cylindrical wall (Incropera and DeWitt,
    /// Fundamentals of Heat and Mass Transfer, the conduction resistance of a cylinder
    /// ln(r_o/r_i)/(2 pi k L)): 1/(U_i A_i) = 1/(h_i A_i) + ln(r_o/r_i)/(2 pi k L) + 1/(h_o A_o).
    /// In the thin-wall limit the flat sum must agree to the order of thickness/radius.
    #[test]
    fn the_resistance_sum_is_the_thin_wall_limit_of_the_cylinder_formula() {
        let (h_i, h_o, k) = (800.0, 2000.0, 16.0);
        let r_i = 0.8;
        for thickness in [8e-3, 8e-4, 8e-5] {
            let model = FilmModel {
                process: ProcessFilm::Fitted { factor: 1.0 },
                wall: vec![WallLayer {
                    name: "steel".into(),
                    thickness,
                    conductivity: k,
                }],
                fouling: 0.0,
                coolant_film: h_o,
                impeller_diameter: 1.0,
                impeller_speed: 1.0,
            };
            let mut r = model.resistances(1.0);
            r.process_film = 1.0 / h_i;
            let flat = r.coefficient();
            let r_o = r_i + thickness;
            let length = 1.0;
            let a_i = 2.0 * std::f64::consts::PI * r_i * length;
            let a_o = 2.0 * std::f64::consts::PI * r_o * length;
            let series = 1.0 / (h_i * a_i)
                + (r_o / r_i).ln() / (2.0 * std::f64::consts::PI * k * length)
                + 1.0 / (h_o * a_o);
            let cylinder = 1.0 / (series * a_i);
            let relative = (flat - cylinder).abs() / cylinder;
            assert!(relative < 2.0 * thickness / r_i, "{thickness}: {relative}");
        }
    }

    #[test]
    fn the_shares_add_up_to_one() {
        let model = FilmModel {
            process: ProcessFilm::Correlation {
                c: 0.45,
                contents: water_like(),
            },
            wall: vec![
                WallLayer {
                    name: "enamel".into(),
                    thickness: 1.5e-3,
                    conductivity: 1.0,
                },
                WallLayer {
                    name: "steel".into(),
                    thickness: 12e-3,
                    conductivity: 48.0,
                },
            ],
            fouling: 2e-4,
            coolant_film: 1500.0,
            impeller_diameter: 0.8,
            impeller_speed: 1.5,
        };
        let shares: f64 = model.resistances(1.6).breakdown().iter().map(|r| r.2).sum();
        assert!((shares - 1.0).abs() < 1e-12);
    }

    /// h ∝ N^(2/3) d^(4/3) / D: at constant P/V (N ∝ D^(-2/3)) h ∝ D^(-1/9), at constant tip
    /// speed h ∝ D^(-1/3) (derived from the correlation's exponents).
    #[test]
    fn the_process_film_scales_as_the_correlation_says() {
        let film = ProcessFilm::Correlation {
            c: 0.45,
            contents: water_like(),
        };
        let (n, d, big_d) = (2.0, 0.5, 1.5);
        let h0 = film.coefficient(n, d, big_d);
        for (rule, exponent) in [
            (SpeedRule::PowerPerVolume, -1.0 / 9.0),
            (SpeedRule::TipSpeed, -1.0 / 3.0),
        ] {
            let s: f64 = 4.0;
            let h = film.coefficient(rule.scaled_speed(n, s), d * s, big_d * s);
            assert!((h / h0 - s.powf(exponent)).abs() < 1e-12, "{rule:?}");
        }
    }
}
