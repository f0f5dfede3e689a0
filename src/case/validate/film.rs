//! Checking `vessel.heat_transfer` (U from resistances in series, the process film from the
//! impeller and the contents or from a Wilson plot of lab data), the choice between it and a
//! given `vessel.heat_transfer_coefficient`, and `vessel.ambient_loss`.

use super::{Checker, HEAT_TRANSFER, Kind, LENGTH, Sign, TEMPERATURE, kind};
use crate::case::schema::{
    Keys, RawContents, RawHeatTransfer, RawImpeller, RawLab, RawMeasurement, RawVessel,
    RawWallLayer,
};
use crate::case::units::Dimension;
use crate::case::{AmbientLoss, Charge, FilmData, LabFit};
use crate::model::film::{Contents, FilmModel, ImpellerType, ProcessFilm, WallLayer};
use crate::model::wilson::{Measurement, wilson_fit};
use uom::si::{
    mass_density::kilogram_per_cubic_meter, specific_heat_capacity::joule_per_kilogram_kelvin,
};

const BASE: &str = "vessel.heat_transfer";

const THICKNESS: Kind = kind(Dimension::new(1., 0., 0., 0., 0.), "1.5 mm", Sign::Positive);
const CONDUCTIVITY: Kind = kind(
    Dimension::new(1., 1., -3., -1., 0.),
    "1.0 W/(m*K)",
    Sign::Positive,
);
const FOULING: Kind = kind(
    Dimension::new(0., -1., 3., 1., 0.),
    "2.0e-4 m^2*K/W",
    Sign::NonNegative,
);
const FILM: Kind = Kind {
    example: "1500 W/(m^2*K)",
    sign: Sign::Positive,
    ..HEAT_TRANSFER
};
const SPEED: Kind = kind(
    Dimension::new(0., 0., -1., 0., 0.),
    "90 1/min",
    Sign::Positive,
);
const CONSTANT: Kind = Kind {
    name: Some("the correlation's constant"),
    ..kind(Dimension::NONE, "0.33", Sign::Positive)
};
const VISCOSITY: Kind = kind(
    Dimension::new(-1., 1., -1., 0., 0.),
    "1.2 mPa*s",
    Sign::Positive,
);
const CONDUCTANCE: Kind = kind(
    Dimension::new(2., 1., -3., -1., 0.),
    "2 W/K",
    Sign::NonNegative,
);

/// Common-practice lower end of the turbulent range of the agitated-vessel correlation.
const TURBULENT_REYNOLDS: f64 = 1.0e4;

/// Default ambient temperature with an ambient loss, K (20 degC).
const DEFAULT_AMBIENT_K: f64 = 293.15;

impl Checker<'_> {
    /// Exactly one of `heat_transfer_coefficient` and `heat_transfer`: (U in SI, the film data).
    pub(super) fn heat_transfer_choice(
        &mut self,
        raw: Option<&RawVessel>,
        diameter: Option<f64>,
        charge: Option<&Charge>,
    ) -> (Option<f64>, Option<Option<FilmData>>) {
        let given = raw.and_then(|r| r.heat_transfer_coefficient.as_ref());
        let block = raw.and_then(|r| r.heat_transfer.as_ref());
        match (given, block) {
            (Some(_), Some(_)) => {
                self.error(
                    BASE,
                    "both vessel.heat_transfer_coefficient and vessel.heat_transfer are given",
                    "exactly one of vessel.heat_transfer_coefficient (a given U) and vessel.heat_transfer (U from resistances in series)",
                );
                (None, None)
            }
            (Some(_), None) => {
                let u = self.quantity("vessel.heat_transfer_coefficient", given, HEAT_TRANSFER);
                (u, Some(None))
            }
            (None, Some(block)) => {
                let film = self.heat_transfer(block, charge);
                let u = match (&film, diameter) {
                    (Some(f), Some(d)) => Some(f.model.coefficient(d)),
                    _ => None,
                };
                (u, film.map(Some))
            }
            (None, None) => {
                self.missing(
                    "vessel.heat_transfer_coefficient",
                    "vessel.heat_transfer_coefficient: 280 W/(m^2*K), or a vessel.heat_transfer block (wall, coolant_film, impeller, contents or lab)",
                );
                (None, None)
            }
        }
    }

    fn heat_transfer(
        &mut self,
        raw: &RawHeatTransfer,
        charge: Option<&Charge>,
    ) -> Option<FilmData> {
        self.unknown_keys(BASE, &raw.unknown, RawHeatTransfer::KEYS);
        let wall = self.wall(raw.wall.as_deref());
        let fouling = self.quantity_or(
            &format!("{BASE}.fouling"),
            raw.fouling.as_ref(),
            FOULING,
            0.0,
        );
        let coolant_film = self.quantity(
            &format!("{BASE}.coolant_film"),
            raw.coolant_film.as_ref(),
            FILM,
        );
        let impeller = self.impeller(raw.impeller.as_ref(), raw.lab.is_some());
        let process = self.process_side(raw, charge, impeller.map(|i| i.constant));
        let (impeller, (process, lab)) = (impeller?, process?);
        let model = FilmModel {
            process,
            wall: wall?,
            fouling: fouling?,
            coolant_film: coolant_film?,
            impeller_diameter: impeller.diameter,
            impeller_speed: impeller.speed,
        };
        self.film_warnings(&model, lab.as_ref());
        Some(FilmData {
            model,
            impeller_type: impeller.kind,
            lab,
        })
    }

    fn wall(&mut self, raw: Option<&[RawWallLayer]>) -> Option<Vec<WallLayer>> {
        let path = format!("{BASE}.wall");
        let raw = self.required(
            &path,
            raw,
            "a list of layers, e.g. [{ material: enamel, thickness: 1.5 mm, conductivity: 1.0 W/(m*K) }]",
        )?;
        if raw.is_empty() {
            self.error(
                &path,
                "the list of wall layers is empty",
                "at least one layer with thickness and conductivity",
            );
            return None;
        }
        let mut layers = Vec::new();
        let mut ok = true;
        for (index, layer) in raw.iter().enumerate() {
            let base = format!("{path}[{index}]");
            self.unknown_keys(&base, &layer.unknown, RawWallLayer::KEYS);
            let name = match &layer.material {
                Some(m) => self
                    .single(&format!("{base}.material"), m, "enamel")
                    .map(str::to_string),
                None => Some(format!("layer {}", index + 1)),
            };
            let thickness = self.quantity(
                &format!("{base}.thickness"),
                layer.thickness.as_ref(),
                THICKNESS,
            );
            let conductivity = self.quantity(
                &format!("{base}.conductivity"),
                layer.conductivity.as_ref(),
                CONDUCTIVITY,
            );
            match (name, thickness, conductivity) {
                (Some(name), Some(thickness), Some(conductivity)) => layers.push(WallLayer {
                    name,
                    thickness,
                    conductivity,
                }),
                _ => ok = false,
            }
        }
        ok.then_some(layers)
    }

    fn impeller(&mut self, raw: Option<&RawImpeller>, from_lab: bool) -> Option<Impeller> {
        let base = format!("{BASE}.impeller");
        let raw = self.required(
            &base,
            raw,
            "{ type: pitched-blade, diameter: 0.8 m, speed: 90 1/min }",
        )?;
        self.unknown_keys(&base, &raw.unknown, RawImpeller::KEYS);
        let kind = match &raw.r#type {
            Some(_) => {
                let word = self.word(
                    &format!("{base}.type"),
                    raw.r#type.as_ref(),
                    &ImpellerType::NAMES,
                    None,
                )?;
                ImpellerType::from_name(word)
            }
            None => None,
        };
        let constant = match &raw.constant {
            Some(scalar) => Some(self.parse(&format!("{base}.constant"), scalar, CONSTANT)?),
            None => kind.map(ImpellerType::wall_constant),
        };
        if constant.is_none() && !from_lab {
            self.error(
                &format!("{base}.type"),
                "the impeller has neither a type nor a constant, so the process film has no correlation constant",
                format!("{base}.type: one of {} (Penney and Atiemo-Obeng 2004), or {base}.constant: 0.33", ImpellerType::NAMES.join(", ")),
            );
        }
        let diameter = self.quantity(
            &format!("{base}.diameter"),
            raw.diameter.as_ref(),
            Kind {
                example: "0.8 m",
                ..LENGTH
            },
        );
        let speed = self.quantity(&format!("{base}.speed"), raw.speed.as_ref(), SPEED);
        if constant.is_none() && !from_lab {
            return None;
        }
        Some(Impeller {
            kind,
            constant: constant.unwrap_or(f64::NAN),
            diameter: diameter?,
            speed: speed?,
        })
    }

    /// The process film: from the contents' properties or from lab data, exactly one.
    fn process_side(
        &mut self,
        raw: &RawHeatTransfer,
        charge: Option<&Charge>,
        constant: Option<f64>,
    ) -> Option<(ProcessFilm, Option<LabFit>)> {
        match (&raw.contents, &raw.lab) {
            (Some(_), Some(_)) => {
                self.error(
                    &format!("{BASE}.lab"),
                    "both vessel.heat_transfer.contents and vessel.heat_transfer.lab are given",
                    "exactly one: contents (viscosity, thermal_conductivity) for the correlation, or lab (a Wilson plot)",
                );
                None
            }
            (Some(contents), None) => {
                let contents = self.contents(contents, charge)?;
                Some((
                    ProcessFilm::Correlation {
                        c: constant?,
                        contents,
                    },
                    None,
                ))
            }
            (None, Some(lab)) => {
                let lab = self.lab(lab)?;
                let factor = lab
                    .fit
                    .film_factor(lab.impeller_diameter, lab.vessel_diameter);
                Some((ProcessFilm::Fitted { factor }, Some(lab)))
            }
            (None, None) => {
                self.missing(
                    &format!("{BASE}.contents"),
                    "vessel.heat_transfer.contents: { viscosity: 1.2 mPa*s, thermal_conductivity: 0.14 W/(m*K) }, or vessel.heat_transfer.lab (a Wilson plot)",
                );
                None
            }
        }
    }

    fn contents(&mut self, raw: &RawContents, charge: Option<&Charge>) -> Option<Contents> {
        let base = format!("{BASE}.contents");
        self.unknown_keys(&base, &raw.unknown, RawContents::KEYS);
        let viscosity = self.quantity(
            &format!("{base}.viscosity"),
            raw.viscosity.as_ref(),
            VISCOSITY,
        );
        let wall_viscosity = match &raw.wall_viscosity {
            Some(scalar) => self.parse(&format!("{base}.wall_viscosity"), scalar, VISCOSITY),
            None => viscosity,
        };
        let conductivity = self.quantity(
            &format!("{base}.thermal_conductivity"),
            raw.thermal_conductivity.as_ref(),
            Kind {
                example: "0.14 W/(m*K)",
                ..CONDUCTIVITY
            },
        );
        let charge = charge?;
        Some(Contents {
            density: charge.density.get::<kilogram_per_cubic_meter>(),
            specific_heat: charge.specific_heat.get::<joule_per_kilogram_kelvin>(),
            viscosity: viscosity?,
            wall_viscosity: wall_viscosity?,
            thermal_conductivity: conductivity?,
        })
    }

    fn lab(&mut self, raw: &RawLab) -> Option<LabFit> {
        let base = format!("{BASE}.lab");
        self.unknown_keys(&base, &raw.unknown, RawLab::KEYS);
        let vessel = self.quantity(
            &format!("{base}.vessel_diameter"),
            raw.vessel_diameter.as_ref(),
            Kind {
                example: "0.11 m",
                ..LENGTH
            },
        );
        let impeller = self.quantity(
            &format!("{base}.impeller_diameter"),
            raw.impeller_diameter.as_ref(),
            Kind {
                example: "0.055 m",
                ..LENGTH
            },
        );
        let measurements = self.measurements(raw.measurements.as_deref());
        let measurements = measurements?;
        let fit = match wilson_fit(&measurements) {
            Ok(fit) => fit,
            Err(e) => {
                self.error(
                    &format!("{base}.measurements"),
                    e.to_string(),
                    "overall coefficients at two or more stirrer speeds that rise with the speed",
                );
                return None;
            }
        };
        Some(LabFit {
            fit,
            vessel_diameter: vessel?,
            impeller_diameter: impeller?,
        })
    }

    fn measurements(&mut self, raw: Option<&[RawMeasurement]>) -> Option<Vec<Measurement>> {
        let path = format!("{BASE}.lab.measurements");
        let raw = self.required(
            &path,
            raw,
            "a list like [{ speed: 200 1/min, coefficient: 180 W/(m^2*K) }, ...]",
        )?;
        let mut out = Vec::new();
        let mut ok = true;
        for (index, m) in raw.iter().enumerate() {
            let base = format!("{path}[{index}]");
            self.unknown_keys(&base, &m.unknown, RawMeasurement::KEYS);
            let speed = self.quantity(
                &format!("{base}.speed"),
                m.speed.as_ref(),
                Kind {
                    example: "200 1/min",
                    ..SPEED
                },
            );
            let coefficient = self.quantity(
                &format!("{base}.coefficient"),
                m.coefficient.as_ref(),
                Kind {
                    example: "180 W/(m^2*K)",
                    sign: Sign::Positive,
                    ..HEAT_TRANSFER
                },
            );
            match (speed, coefficient) {
                (Some(speed), Some(coefficient)) => out.push(Measurement { speed, coefficient }),
                _ => ok = false,
            }
        }
        if ok && out.len() < 2 {
            self.error(
                &path,
                format!(
                    "{} measurement(s): a Wilson plot needs two or more speeds",
                    out.len()
                ),
                "overall coefficients at two or more stirrer speeds",
            );
            return None;
        }
        ok.then_some(out)
    }

    fn film_warnings(&mut self, model: &FilmModel, lab: Option<&LabFit>) {
        if let Some(re) = model.reynolds() {
            if re < TURBULENT_REYNOLDS {
                self.warn("film-not-turbulent", format!("the impeller Reynolds number is {re:.0}, below 10^4: the agitated-vessel correlation with Re^(2/3) is for turbulent flow (common practice), the process film is uncertain"));
            }
        }
        if let Some(lab) = lab {
            if lab.fit.r_squared < 0.95 {
                self.warn("wilson-poor-fit", format!("the Wilson plot of vessel.heat_transfer.lab fits with r^2 = {:.3} only: the process film carried to the plant is uncertain", lab.fit.r_squared));
            }
            if lab.fit.intercept < 0.0 {
                self.warn("wilson-negative-intercept", format!("the Wilson plot's intercept (the lab's wall and coolant side) is negative ({:.3e} m^2 K/W): the lab data do not follow 1/U = a + b N^(-2/3) well", lab.fit.intercept));
            }
        }
    }

    /// `vessel.ambient_loss` and `vessel.ambient_temperature`.
    pub(super) fn ambient(&mut self, raw: Option<&RawVessel>) -> Option<Option<AmbientLoss>> {
        let loss = raw.and_then(|r| r.ambient_loss.as_ref());
        let temperature = raw.and_then(|r| r.ambient_temperature.as_ref());
        let Some(loss) = loss else {
            if temperature.is_some() {
                self.warn(
                    "ambient-temperature-unused",
                    "vessel.ambient_temperature is used only with vessel.ambient_loss",
                );
            }
            return Some(None);
        };
        let conductance = self.parse("vessel.ambient_loss", loss, CONDUCTANCE);
        let temperature = self.quantity_or(
            "vessel.ambient_temperature",
            temperature,
            Kind {
                example: "20 degC",
                ..TEMPERATURE
            },
            DEFAULT_AMBIENT_K,
        );
        Some(Some(AmbientLoss {
            conductance: conductance?,
            temperature: temperature?,
        }))
    }
}

/// The impeller as checked: its type if named, C, diameter (m), speed (1/s).
#[derive(Debug, Clone, Copy)]
struct Impeller {
    kind: Option<ImpellerType>,
    constant: f64,
    diameter: f64,
    speed: f64,
}
