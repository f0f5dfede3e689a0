//! The stage-gate report's scale section, renderer-agnostic: the case's `scale_up` ladder as
//! a title, an intro, headers with units, formatted rows and the ladder's notes.

use super::celsius;
use crate::assess::scale::{Ladder, Rung, ScaleError, scale_ladder};
use crate::case::Case;
use crate::model::film::SpeedRule;
use crate::model::plant::Plant;
use std::time::Instant;
use uom::si::volume::cubic_meter;

/// What a missing figure shows.
pub const MISSING: &str = "—";

const KW: f64 = 1e3;

/// The section's columns, each with its unit ("class" is dimensionless).
pub const HEADERS: [&str; 12] = [
    "V (m³)",
    "D (m)",
    "N (1/min)",
    "A/V (1/m)",
    "U (W/(m² K))",
    "cooling capacity at Tp (kW/m³)",
    "time constant (min)",
    "peak power (kW/m³)",
    "max T normal (°C)",
    "MTSR (°C)",
    "class",
    "coolant needed (°C)",
];

/// The scale section: a title, one or two sentences, a table, and notes.
#[derive(Debug, Clone, PartialEq)]
pub struct ScaleSection {
    pub title: String,
    pub intro: String,
    pub headers: Vec<String>,
    pub rows: Vec<Vec<String>>,
    pub notes: Vec<String>,
}

/// The section of the case's `scale_up` (None without it), computed on `plant`.
pub fn scale_section(
    case: &Case,
    plant: &Plant,
    deadline: Option<Instant>,
) -> Result<Option<ScaleSection>, ScaleError> {
    let Some(asked) = &case.scale_up else {
        return Ok(None);
    };
    let volumes: Vec<f64> = asked
        .volumes
        .iter()
        .map(|v| v.get::<cubic_meter>())
        .collect();
    let ladder = scale_ladder(plant, &volumes, asked.speed_rule, deadline)?;
    Ok(Some(section_of(&ladder)))
}

fn section_of(ladder: &Ladder) -> ScaleSection {
    ScaleSection {
        title: "Scale-up: the recipe in similar vessels".to_string(),
        intro: intro(ladder),
        headers: HEADERS.iter().map(|h| h.to_string()).collect(),
        rows: ladder.rungs.iter().map(row).collect(),
        notes: ladder
            .warnings
            .iter()
            .map(|w| format!("[{}] {}", w.code, w.message))
            .collect(),
    }
}

fn intro(ladder: &Ladder) -> String {
    let rule = match ladder.speed_rule {
        SpeedRule::PowerPerVolume => "constant power per volume",
        SpeedRule::TipSpeed => "constant tip speed",
    };
    let u = if ladder.film_model {
        format!("U from the film model at each scale, the impeller speed at {rule}")
    } else {
        "U held at the case's value at every scale".to_string()
    };
    format!(
        "The case's recipe in geometrically similar vessels of {} nominal volumes, each computed as the screening check does: the same bottom shape, fill ratio, masses per volume, dosing time and coolant, with {u}. Cooling capacity and peak power are per volume of contents at the moment of the peak reaction power; the coolant needed is the warmest constant coolant that removes that peak.",
        ladder.rungs.len()
    )
}

fn row(r: &Rung) -> Vec<String> {
    vec![
        significant(r.nominal_volume, 3),
        format!("{:.3}", r.diameter),
        r.impeller_speed
            .map_or(MISSING.into(), |n| format!("{:.0}", n * 60.0)),
        format!("{:.2}", r.cooled_area / r.final_volume),
        format!("{:.0}", r.u),
        format!("{:.1}", r.cooling_capacity_per_volume / KW),
        format!("{:.1}", r.time_constant / 60.0),
        format!("{:.1}", r.peak_power_per_volume / KW),
        format!("{:.1}", celsius(r.max_temperature)),
        format!("{:.1}", celsius(r.mtsr)),
        r.class.map_or(MISSING.into(), |c| c.to_string()),
        format!("{:.1}", celsius(r.required_coolant)),
    ]
}

/// `x` with `digits` significant digits, trailing zeros dropped: 0.001, 0.1, 1, 16.
fn significant(x: f64, digits: i32) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let decimals = (digits - 1 - x.abs().log10().floor() as i32).max(0) as usize;
    let text = format!("{x:.decimals$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::case::load::load_case_text;
    use crate::report::Source;
    use crate::report::scale::render_json;

    fn case_of(path: &str) -> Case {
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let text = std::fs::read_to_string(root.join(path)).expect("case readable");
        load_case_text(&text, path).expect("case valid")
    }

    fn number(cell: &str) -> f64 {
        cell.parse()
            .unwrap_or_else(|e| panic!("\"{cell}\" is not a number: {e}"))
    }

    /// The section's rows are the ladder of `exoscreen scale --format json` (the same
    /// render_json that command prints) on the film demo case, which asks for its scales in
    /// `scale_up`; each cell agrees with the JSON value to half a unit of its last digit.
    #[test]
    fn the_rows_agree_with_the_scale_commands_json() {
        let case = case_of("cases/bromination-film.yaml");
        let asked = case
            .scale_up
            .as_ref()
            .expect("the film demo case has scale_up");
        let plant = Plant::from_case(&case).expect("geometry");
        let section = scale_section(&case, &plant, None)
            .expect("computed")
            .expect("a section");
        let volumes: Vec<f64> = asked.volumes.iter().map(|v| v.value).collect();
        let ladder = scale_ladder(&plant, &volumes, asked.speed_rule, None).expect("ladder");
        let source = Source {
            file: "cases/bromination-film.yaml".into(),
        };
        let json: serde_json::Value =
            serde_json::from_str(&render_json(&case, &ladder, &source)).expect("JSON");
        let scales = json["scales"].as_array().expect("scales");
        assert_eq!(section.rows.len(), scales.len());
        assert_eq!(section.rows.len(), asked.volumes.len());
        let columns: [(usize, &str, f64); 10] = [
            (1, "diameter_m", 5e-4),
            (2, "impeller_speed_rpm", 0.5),
            (3, "area_per_volume_1_m", 5e-3),
            (4, "u_W_m2K", 0.5),
            (5, "cooling_capacity_kW_m3", 0.05),
            (6, "time_constant_min", 0.05),
            (7, "peak_power_kW_m3", 0.05),
            (8, "max_temperature_C", 0.05),
            (9, "mtsr_C", 0.05),
            (11, "required_coolant_C", 0.05),
        ];
        for (row, scale) in section.rows.iter().zip(scales) {
            assert_eq!(row.len(), section.headers.len());
            let v = scale["volume_m3"].as_f64().expect("volume");
            assert!((number(&row[0]) / v - 1.0).abs() < 5e-3, "{row:?}");
            for (index, key, half_unit) in columns {
                let expected = scale[key].as_f64().expect(key);
                let found = number(&row[index]);
                assert!(
                    (found - expected).abs() <= half_unit * (1.0 + 1e-9),
                    "{key}: {found} vs {expected}"
                );
            }
            let class = scale["criticality_class"]
                .as_u64()
                .map_or(MISSING.to_string(), |c| c.to_string());
            assert_eq!(row[10], class);
        }
        assert!(section.intro.contains("geometrically similar"));
        assert!(section.intro.contains("film model"));
    }

    /// Every header names its unit in parentheses, except the dimensionless class.
    #[test]
    fn every_header_has_a_unit_or_is_dimensionless() {
        for header in HEADERS {
            let unit = header
                .rfind(" (")
                .map(|at| &header[at..])
                .filter(|u| u.ends_with(')') && u.len() > 3);
            assert!(unit.is_some() || header == "class", "{header}");
        }
    }

    #[test]
    fn without_scale_up_there_is_no_section() {
        let case = case_of("cases/bromination-semibatch.yaml");
        assert!(case.scale_up.is_none());
        let plant = Plant::from_case(&case).expect("geometry");
        assert_eq!(scale_section(&case, &plant, None).expect("ok"), None);
    }

    /// A given U is held: the section says so in its intro and notes, and has no speeds.
    #[test]
    fn a_given_u_is_said_to_be_held() {
        let mut case = case_of("cases/bromination-semibatch.yaml");
        case.scale_up = Some(crate::case::ScaleUp {
            volumes: vec![uom::si::f64::Volume::new::<cubic_meter>(0.1)],
            speed_rule: SpeedRule::TipSpeed,
        });
        let plant = Plant::from_case(&case).expect("geometry");
        let section = scale_section(&case, &plant, None)
            .expect("ok")
            .expect("some");
        assert!(section.intro.contains("held"));
        assert!(section.notes.iter().any(|n| n.contains("scale-constant-u")));
        assert_eq!(section.rows[0][2], MISSING);
    }

    #[test]
    fn volumes_keep_three_significant_digits() {
        assert_eq!(significant(1e-3, 3), "0.001");
        assert_eq!(significant(0.1, 3), "0.1");
        assert_eq!(significant(4.0, 3), "4");
        assert_eq!(significant(16.0, 3), "16");
        assert_eq!(significant(2.5e-4, 3), "0.00025");
    }
}
