//! The warnings of the assessment, the models' assumptions and limits (condensed from
//! SAFETY.md) and the cautions every report carries.

use super::{Block, Section};
use crate::assess::Assessment;
use crate::report::cautions::CAUTIONS;

pub fn warnings_section(a: &Assessment) -> Section {
    let blocks = if a.warnings.is_empty() {
        vec![Block::Paragraph("None.".to_string())]
    } else {
        vec![Block::Definitions(
            a.warnings
                .iter()
                .map(|w| (w.code.clone(), w.message.replace("degC", "°C")))
                .collect(),
        )]
    };
    Section {
        id: "warnings",
        heading: format!("Warnings ({})", a.warnings.len()),
        new_page: false,
        blocks,
    }
}

/// SAFETY.md in brief; the file itself has the full text.
const ASSUMPTIONS: [&str; 9] = [
    "One well-stirred liquid phase at one temperature: no hot spots, mixing time, stratification, second phase or feed pooling; a stirrer failure is not modelled.",
    "Volumes add; densities and heat capacities are constant.",
    "Power-law Arrhenius kinetics as given, valid at every temperature the run reaches: extrapolation is the user's assumption. No autocatalysis, inhibition or induction time beyond the rate laws.",
    "Off-gas leaves the liquid the instant it forms; its pressure, dissolved gas and absorption heats are not modelled.",
    "The jacket: one coolant temperature (or an idealised controller that holds Tp) and one overall U over the wetted, jacketed wall; no jacket dynamics, fouling or heat losses.",
    "A cooling failure is U A = 0 from the failure on (adiabatic, the worst case); the feed continues or stops as the case says; a dosing interlock acts instantly at its set point.",
    "Decomposition: one global n-th order Arrhenius reaction with a constant energy per kg. TMRad uses the zero-order approximation of Townsend and Tou (1980), conservative for ordinary kinetics and not valid for autocatalytic decompositions; TD24 depends strongly on Ea_d.",
    "MTT is the value given in the case. Above it the base model does not boil (unless solvent data are given): temperatures printed there are what the heat would do, not what the vessel would do.",
    "Left out: vapour pressure and pressure build-up, gas from the decomposition, two-phase relief sizing, solids, phase changes, side reactions not written, impurities, wrong charges, and any human or control-system error.",
];

pub fn assumptions_section() -> Section {
    Section {
        id: "assumptions",
        heading: "Assumptions and limits of the models".to_string(),
        new_page: true,
        blocks: vec![
            Block::Paragraph(
                "In brief; SAFETY.md in the tool's repository gives them in full, with when not to rely on the figures."
                    .to_string(),
            ),
            Block::Bullets(ASSUMPTIONS.iter().map(|s| s.to_string()).collect()),
            Block::Paragraph(
                "A case that passes every figure here is a case worth measuring, not a case proven safe."
                    .to_string(),
            ),
        ],
    }
}

pub fn cautions_section() -> Section {
    Section {
        id: "cautions",
        heading: "Cautions".to_string(),
        new_page: false,
        blocks: vec![Block::Bullets(
            CAUTIONS.iter().map(|s| s.to_string()).collect(),
        )],
    }
}
