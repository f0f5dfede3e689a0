//! Assessment: the screening figures, the criticality class and the warnings of one case.

pub mod class;
pub mod decomposition;
pub mod envelope;
pub mod figures;
pub mod limit;
pub mod offgas;
pub mod runaway;
pub mod scale;
pub mod search;
pub mod warnings;

use crate::case::Case;
use crate::model::plant::Plant;
use crate::model::scenario::{ScenarioError, Trajectory};
use crate::warning::Warning;
pub use envelope::EnvelopePoint;
pub use figures::{Figures, NormalFigures};
use std::time::{Duration, Instant};

/// Wall-clock budget of one assessment; beyond it the computation ends with an error.
pub const TIME_BUDGET: Duration = Duration::from_secs(60);

#[derive(Debug, thiserror::Error)]
pub enum AssessError {
    #[error(transparent)]
    Scenario(#[from] ScenarioError),
    #[error("the vessel geometry could not be built: {0}")]
    Geometry(String),
}

/// A case with everything computed from it.
pub struct Assessment {
    pub case: Case,
    pub plant: Plant,
    pub normal_run: Trajectory,
    pub figures: Figures,
    /// Cooling failures over the whole process, decomposition on (envelope.rs); empty when
    /// one of its runs failed, with the reason in `envelope_error` and a warning.
    pub envelope: Vec<EnvelopePoint>,
    pub envelope_error: Option<ScenarioError>,
    /// The full model from the worst failure time (decomposition on, boiling barrier).
    pub runaway: Option<runaway::Runaway>,
    /// Peak rate of each gas species in normal operation.
    pub normal_off_gas: Vec<offgas::SpeciesPeak>,
    pub warnings: Vec<Warning>,
}

/// Assesses a case within the default wall-clock budget.
pub fn assess(case: Case) -> Result<Assessment, AssessError> {
    assess_within(case, TIME_BUDGET)
}

/// Assesses a case; a computation that runs past `budget` ends with an error that names the
/// scenario (every integration also has its own step budget).
pub fn assess_within(case: Case, budget: Duration) -> Result<Assessment, AssessError> {
    let plant = Plant::from_case(&case).map_err(|e| AssessError::Geometry(e.to_string()))?;
    let deadline = Instant::now() + budget;
    let computation = figures::compute(&plant, Some(deadline))?;
    // The envelope goes beyond the contract figures: a run it cannot integrate is reported,
    // and does not take the figures with it.
    let (envelope, envelope_error) = match envelope::failure_envelope(
        &plant,
        &computation.normal_run,
        envelope::ENVELOPE_POINTS,
        Some(deadline),
    ) {
        Ok(points) => (points, None),
        Err(e) => (Vec::new(), Some(e)),
    };
    let runaway = runaway::coupled_runaway(
        &plant,
        &computation.normal_run,
        computation.figures.worst.failure_time,
        Some(deadline),
    );
    let normal_off_gas =
        offgas::species_peaks(&plant, &computation.normal_run, 0.0, plant.process_duration);
    let mut warnings = case.input_warnings.clone();
    warnings.extend(warnings::figure_warnings(&plant, &computation.figures));
    let runaway = match runaway {
        Ok(r) => {
            warnings.extend(warnings::runaway_warnings(&plant, &r, &case.limit_settings));
            Some(r)
        }
        Err(e) => {
            warnings.push(Warning::new(
                "runaway-failed",
                format!("the coupled runaway (decomposition on) could not be computed: {e}"),
            ));
            None
        }
    };
    warnings.extend(warnings::off_gas_warnings(
        &normal_off_gas,
        &case.limit_settings,
        &computation.figures,
    ));
    warnings.extend(envelope_error.as_ref().map(|e| {
        Warning::new(
            "failure-envelope-failed",
            format!("the failure envelope (decomposition on) could not be computed: {e}"),
        )
    }));
    Ok(Assessment {
        case,
        plant,
        normal_run: computation.normal_run,
        figures: computation.figures,
        envelope,
        envelope_error,
        runaway,
        normal_off_gas,
        warnings,
    })
}
