//! The failure envelope: a cooling failure at evenly spaced times over the whole process
//! (0 to the process duration, not only the feed window), each followed with the full model
//! (decomposition on), giving the highest temperature reached after the failure and the time
//! from the failure to the fastest temperature rise.
//!
//! The failure runs are independent of one another, so they are shared among a few threads.

use crate::model::balance::{Layout, Phase};
use crate::model::plant::Plant;
use crate::model::scenario::{FailureOptions, ScenarioError, Trajectory, run_failure};
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::time::Instant;

/// Failure times of the envelope in a report (ends included).
pub const ENVELOPE_POINTS: usize = 200;
/// At most this many threads share the failure runs.
const MAX_THREADS: usize = 8;

/// One failure time of the envelope, in SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EnvelopePoint {
    /// When the cooling fails, s from the start of the process.
    pub failure_time: f64,
    /// Highest temperature after the failure, K.
    pub max_temperature: f64,
    /// From the failure to the maximum of dT/dt, s.
    pub time_to_max_rate: f64,
    /// The maximum of dT/dt after the failure, K/s.
    pub max_rate: f64,
}

/// `points` failure times evenly spaced over [0, process duration], ends included.
pub fn failure_times(plant: &Plant, points: usize) -> Vec<f64> {
    let end = plant.process_duration;
    match points {
        0 => Vec::new(),
        1 => vec![0.0],
        n => (0..n)
            .map(|k| {
                if k == n - 1 {
                    end
                } else {
                    end * k as f64 / (n - 1) as f64
                }
            })
            .collect(),
    }
}

/// One envelope point: a cooling failure at `t_f` with the case's dosing rule and the
/// decomposition on.
pub fn envelope_point(
    plant: &Plant,
    normal_run: &Trajectory,
    t_f: f64,
    deadline: Option<Instant>,
) -> Result<EnvelopePoint, ScenarioError> {
    let options = FailureOptions {
        dosing: plant.dosing_after_failure,
        decomposition: true,
    };
    let run = run_failure(plant, normal_run, t_f, options, deadline)?;
    let end = run.end_time();
    let temperature = |_: &Phase, _: f64, x: &[f64]| x[Layout::TEMPERATURE];
    let (_, max_temperature) = run.maximum(t_f, end, &temperature);
    let rate = |phase: &Phase, t: f64, x: &[f64]| plant.temperature_rate(phase, t, x);
    let (max_rate_time, max_rate) = run.maximum(t_f, end, &rate);
    Ok(EnvelopePoint {
        failure_time: t_f,
        max_temperature,
        time_to_max_rate: (max_rate_time - t_f).max(0.0),
        max_rate,
    })
}

/// The envelope at `points` failure times over the whole process, in order of failure time.
/// On a failed run, the error of the earliest failure time that failed.
pub fn failure_envelope(
    plant: &Plant,
    normal_run: &Trajectory,
    points: usize,
    deadline: Option<Instant>,
) -> Result<Vec<EnvelopePoint>, ScenarioError> {
    let times = failure_times(plant, points);
    let threads = std::thread::available_parallelism()
        .map_or(1, |n| n.get())
        .clamp(1, MAX_THREADS)
        .min(times.len().max(1));
    let results: Vec<Mutex<Option<Result<EnvelopePoint, ScenarioError>>>> =
        times.iter().map(|_| Mutex::new(None)).collect();
    let next = AtomicUsize::new(0);
    let failed = AtomicBool::new(false);
    let work = || {
        loop {
            let k = next.fetch_add(1, Ordering::Relaxed);
            if k >= times.len() || failed.load(Ordering::Relaxed) {
                break;
            }
            let result = envelope_point(plant, normal_run, times[k], deadline);
            if result.is_err() {
                failed.store(true, Ordering::Relaxed);
            }
            *results[k].lock().unwrap_or_else(|e| e.into_inner()) = Some(result);
        }
    };
    if threads <= 1 {
        work();
    } else {
        std::thread::scope(|scope| {
            for _ in 1..threads {
                scope.spawn(work);
            }
            work();
        });
    }
    let mut envelope = Vec::with_capacity(times.len());
    for slot in results {
        match slot.into_inner().unwrap_or_else(|e| e.into_inner()) {
            Some(Ok(point)) => envelope.push(point),
            Some(Err(e)) => return Err(e),
            // Skipped once a run had failed: every skipped time comes after a claimed one, so
            // the failure has been returned before any gap is reached.
            None => break,
        }
    }
    Ok(envelope)
}
