//! Round trips of `exoscreen dsc`'s analysis: scans generated from known first-order kinetics
//! (lab::synthetic, RK4 of d alpha/dt = A exp(-E/RT)(1 - alpha)) at 2, 5, 10 and 20 K/min,
//! with 1 % noise, read back as CSV text.

use exoscreen::lab::Table;
use exoscreen::lab::dsc::{ScanOptions, analyse_scan};
use exoscreen::lab::kinetics::first_order_peak;
use exoscreen::lab::study::study;
use exoscreen::lab::synthetic::{CurveSpec, scan_csv};

const E: f64 = 120e3;
const A: f64 = 1e12;
const Q: f64 = 800e3;
const RATES_K_MIN: [f64; 4] = [2.0, 5.0, 10.0, 20.0];

fn spec(rate_k_min: f64, noise: f64, seed: u64) -> CurveSpec {
    CurveSpec {
        heating_rate: rate_k_min / 60.0,
        activation_energy: E,
        pre_exponential: A,
        order: 1.0,
        energy: Q,
        start: 313.15,
        end: 573.15,
        points: 2000,
        baseline: 20.0,
        baseline_slope: 0.05,
        noise,
        seed,
        // Two scans in mW with a sample mass, two in W/g: both paths.
        sample_mass: (rate_k_min < 6.0).then_some(3.2e-6),
    }
}

fn table(rate: f64, noise: f64, seed: u64) -> Table {
    let name = format!("scan-{rate}.csv");
    Table::parse(&scan_csv(&spec(rate, noise, seed)), &name).expect("generated scan reads")
}

/// Ea within 2 % (Kissinger and E698), every energy within 1 %, heating rates exact.
#[test]
fn kinetics_and_energy_come_back_from_noisy_scans() {
    for seed in [7, 11, 12345] {
        let tables: Vec<Table> = RATES_K_MIN.iter().map(|r| table(*r, 0.01, seed)).collect();
        let options = vec![ScanOptions::default(); tables.len()];
        let result = study(&tables, &options, None).unwrap();
        for (scan, rate) in result.scans.iter().zip(RATES_K_MIN) {
            assert!((scan.heating_rate * 60.0 / rate - 1.0).abs() < 1e-4);
            assert!(
                (scan.energy / Q - 1.0).abs() < 0.01,
                "{}: {}",
                scan.file,
                scan.energy
            );
            // Peak within 0.4 K of Kissinger's peak condition for these kinetics.
            let tp = first_order_peak(E, A, rate / 60.0).unwrap();
            assert!(
                (scan.peak - tp).abs() < 0.4,
                "{}: {} vs {tp}",
                scan.file,
                scan.peak
            );
        }
        let k = result.kissinger.unwrap();
        let o = result.ozawa.unwrap();
        assert!(
            (k.activation_energy / E - 1.0).abs() < 0.02,
            "Kissinger {k:?}"
        );
        assert!((o.activation_energy / E - 1.0).abs() < 0.02, "Ozawa {o:?}");
        assert!(k.r2 > 0.99 && o.r2 > 0.99);
        let block = result.block.unwrap();
        assert_eq!(block.law.order, 1.0);
        assert!(result.td24.is_some());
    }
}

/// The extrapolated onset moves less than 2 K between the clean and the noisy scan.
#[test]
fn the_onset_moves_under_two_kelvin_with_noise() {
    for rate in RATES_K_MIN {
        let clean = analyse_scan(&table(rate, 0.0, 1), &ScanOptions::default()).unwrap();
        for seed in [3, 5, 99] {
            let noisy = analyse_scan(&table(rate, 0.01, seed), &ScanOptions::default()).unwrap();
            assert!(
                (noisy.onset - clean.onset).abs() < 2.0,
                "{rate} K/min seed {seed}: {} vs {}",
                noisy.onset - 273.15,
                clean.onset - 273.15
            );
        }
        // The onset lies below the peak and above the start of the scan.
        assert!(clean.onset < clean.peak && clean.onset > 313.15);
    }
}

/// Given baseline limits around the exotherm give the same energy within 1 %.
#[test]
fn given_limits_give_the_same_energy() {
    let t = table(10.0, 0.01, 4);
    let options = ScanOptions {
        baseline: Some((100.0 + 273.15, 260.0 + 273.15)),
        ..ScanOptions::default()
    };
    let scan = analyse_scan(&t, &options).unwrap();
    assert!((scan.energy / Q - 1.0).abs() < 0.01, "{}", scan.energy);
    assert!(!scan.limits_automatic);
}
