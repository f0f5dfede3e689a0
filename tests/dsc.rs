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

/// Writes the demo scans of cases/lab/ (invented kinetics: E = 105 kJ/mol, A = 3e10 1/s,
/// first order, 650 J/g; 400 rows, 1 % noise). Run with `cargo test --test dsc -- --ignored`.
#[test]
#[ignore]
fn write_demo_scans() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/lab");
    std::fs::create_dir_all(&dir).unwrap();
    for (i, rate) in RATES_K_MIN.iter().enumerate() {
        let spec = CurveSpec {
            heating_rate: rate / 60.0,
            activation_energy: 105e3,
            pre_exponential: 3e10,
            order: 1.0,
            energy: 650e3,
            start: 303.15,
            end: 623.15,
            points: 400,
            baseline: 30.0,
            baseline_slope: 0.08,
            noise: 0.01,
            seed: 2026 + i as u64,
            sample_mass: (i % 2 == 0).then_some(4.1e-6),
        };
        let name = format!("dsc-{rate}K-min.csv");
        std::fs::write(dir.join(name), scan_csv(&spec)).unwrap();
    }
}

mod common;
use common::run;

const DEMO: [&str; 4] = [
    "cases/lab/dsc-2K-min.csv",
    "cases/lab/dsc-5K-min.csv",
    "cases/lab/dsc-10K-min.csv",
    "cases/lab/dsc-20K-min.csv",
];

/// The JSON keys of the issue, the cautions, and values near the demo's invented kinetics
/// (105 kJ/mol, 650 J/g; 400 rows a scan, so a looser 3 %).
#[test]
fn the_demo_scans_give_the_json_keys() {
    let out = run(&[&["dsc", "--format", "json"][..], &DEMO[..]].concat());
    assert_eq!(out.code, Some(0), "{}", out.stderr);
    let v: serde_json::Value = serde_json::from_str(&out.stdout).unwrap();
    let runs = v["runs"].as_array().unwrap();
    assert_eq!(runs.len(), 4);
    for key in [
        "file",
        "heating_rate_K_min",
        "onset_C",
        "peak_C",
        "energy_J_g",
    ] {
        assert!(!runs[0][key].is_null(), "runs[0].{key}");
    }
    for method in ["kissinger", "ozawa"] {
        for key in ["activation_energy_kJ_mol", "pre_exponential_1_s", "r2"] {
            assert!(v[method][key].is_number(), "{method}.{key}");
        }
        let ea = v[method]["activation_energy_kJ_mol"].as_f64().unwrap();
        assert!((ea / 105.0 - 1.0).abs() < 0.03, "{method} {ea}");
    }
    for key in [
        "energy_kJ_kg",
        "heat_release_rate_W_kg",
        "reference_temperature_C",
        "activation_energy_kJ_mol",
        "order",
    ] {
        assert!(v["decomposition"][key].is_number(), "decomposition.{key}");
    }
    assert!((v["decomposition"]["energy_kJ_kg"].as_f64().unwrap() / 650.0 - 1.0).abs() < 0.01);
    assert!(v["td24_C"].is_number());
    assert_eq!(v["cautions"].as_array().unwrap().len(), 5);
    let table = run(&[&["dsc"][..], &DEMO[..]].concat());
    assert!(table.stdout.contains("decomposition:\n") && table.stdout.contains("CAUTIONS"));
}

/// One scan: zero order at the assumed 50 kJ/mol, flagged.
#[test]
fn a_single_scan_gives_the_flagged_zero_order_estimate() {
    let out = run(&["dsc", "--format", "json", DEMO[2]]);
    assert_eq!(out.code, Some(0), "{}", out.stderr);
    let v: serde_json::Value = serde_json::from_str(&out.stdout).unwrap();
    assert!(v["kissinger"].is_null() && v["ozawa"].is_null());
    assert_eq!(v["decomposition"]["order"].as_f64(), Some(0.0));
    assert_eq!(
        v["decomposition"]["activation_energy_kJ_mol"].as_f64(),
        Some(50.0)
    );
    assert!(out.stdout.contains("dsc.single_rate"));
    assert!(out.stdout.contains("common practice"));
}

/// Scans written to a temporary directory, with the rate given and the heat flow endo-up,
/// through the binary.
#[test]
fn the_binary_reads_scans_from_files_with_options() {
    let dir = tempfile::tempdir().unwrap();
    let mut args = vec![
        "dsc".to_string(),
        "--format".into(),
        "json".into(),
        "--endo-up".into(),
    ];
    for rate in RATES_K_MIN {
        let text = scan_csv(&spec(rate, 0.01, 21));
        // Endo-up: the same scan with the heat flow negated.
        let flipped: String = text
            .lines()
            .map(|l| match l.rsplit_once(", ") {
                Some((head, flow)) if !l.starts_with('#') && !l.starts_with("time") => {
                    format!("{head}, -{flow}\n").replace("--", "")
                }
                _ => format!("{l}\n"),
            })
            .collect();
        let path = dir.path().join(format!("s{rate}.csv"));
        std::fs::write(&path, flipped).unwrap();
        args.push(path.display().to_string());
        args.push("--rate".into());
        args.push(format!("{rate} K/min"));
    }
    let refs: Vec<&str> = args.iter().map(String::as_str).collect();
    let out = run(&refs);
    assert_eq!(out.code, Some(0), "{}", out.stderr);
    let v: serde_json::Value = serde_json::from_str(&out.stdout).unwrap();
    let ea = v["kissinger"]["activation_energy_kJ_mol"].as_f64().unwrap();
    assert!((ea / 120.0 - 1.0).abs() < 0.02, "{ea}");
    assert_eq!(v["runs"][0]["heating_rate_given"], true);
}

/// Bad input: exit 2, file:row:column, what is accepted, nothing on stdout.
#[test]
fn bad_scans_are_placed_errors() {
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("bad.csv");
    std::fs::write(
        &bad,
        "# sample_mass: 3 mg\ntime [min], temperature [degC], heat_flow [mW]\n0, 30, 1\n1, 3l, 1\n",
    )
    .unwrap();
    let out = run(&["dsc", bad.to_str().unwrap()]);
    assert_eq!(out.code, Some(2));
    assert!(
        out.stderr
            .contains("bad.csv:4:2: `3l` in column `temperature` is not a number"),
        "{}",
        out.stderr
    );
    assert!(out.stdout.is_empty());
    let no_mass = dir.path().join("no-mass.csv");
    let text = scan_csv(&spec(2.0, 0.0, 1)).replace("# sample_mass: 3.2 mg\n", "");
    std::fs::write(&no_mass, text).unwrap();
    let out = run(&["dsc", no_mass.to_str().unwrap()]);
    assert_eq!(out.code, Some(2));
    assert!(
        out.stderr.contains("no-mass.csv:2:3:") && out.stderr.contains("sample_mass"),
        "{}",
        out.stderr
    );
    let out = run(&["dsc", DEMO[0], "--rate", "10 kg"]);
    assert_eq!(out.code, Some(2));
    assert!(out.stderr.contains("10 K/min"), "{}", out.stderr);
    let out = run(&[
        "dsc", DEMO[0], DEMO[1], DEMO[2], "--rate", "2 K/min", "--rate", "5 K/min",
    ]);
    assert_eq!(out.code, Some(2));
    assert!(
        out.stderr.contains("2 --rate values for 3 files"),
        "{}",
        out.stderr
    );
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(200))]
    /// Any finite numbers (increasing times) in a well-formed table give a scan or an error, never a panic.
    #[test]
    fn arbitrary_scans_never_panic(
        rows in proptest::collection::vec((1e-3f64..10.0, -100f64..500.0, -1e2f64..1e2), 0..80),
        endo_up: bool,
        with_limits: bool,
    ) {
        let mut text = String::from("# sample_mass: 2 mg\ntime [min], temperature [degC], heat_flow [mW]\n");
        let mut t = 0.0;
        for (dt, temp, q) in &rows {
            t += dt;
            text.push_str(&format!("{t}, {temp}, {q}\n"));
        }
        if let Ok(table) = Table::parse(&text, "p.csv") {
            let options = ScanOptions {
                endo_up,
                baseline: with_limits.then_some((350.0, 450.0)),
                ..ScanOptions::default()
            };
            let _ = analyse_scan(&table, &options);
            let _ = study(&[table], &[options], None);
        }
    }
}

/// A time that goes back is placed at its row; a heating rate that is not constant is a
/// warning; a scan without exotherm is an analysis error (exit 1).
#[test]
fn time_order_linearity_and_no_exotherm() {
    let text = scan_csv(&spec(10.0, 0.0, 1));
    let mut lines: Vec<String> = text.lines().map(String::from).collect();
    // Line 100 of the file gets the time of line 99.
    let previous_time = lines[98].split(',').next().unwrap().to_string();
    let rest = lines[99].split_once(',').unwrap().1.to_string();
    lines[99] = format!("{previous_time},{rest}");
    let broken = Table::parse(&lines.join("\n"), "t.csv").unwrap();
    let e = analyse_scan(&broken, &ScanOptions::default())
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("t.csv:100:1: time does not increase"), "{e}");

    // Temperatures bent by up to 3 K off the line: the rate is still fitted, with a warning.
    let bent: String = text
        .lines()
        .enumerate()
        .map(|(i, l)| {
            let cells: Vec<&str> = l.split(", ").collect();
            if l.starts_with('#') || l.starts_with("time") || cells.len() != 3 {
                return format!("{l}\n");
            }
            let temp: f64 = cells[1].parse().unwrap();
            let bend = 3.0 * (i as f64 / 300.0).sin();
            format!("{}, {:.4}, {}\n", cells[0], temp + bend, cells[2])
        })
        .collect();
    let scan = analyse_scan(
        &Table::parse(&bent, "b.csv").unwrap(),
        &ScanOptions::default(),
    )
    .unwrap();
    assert!(
        scan.warnings
            .iter()
            .any(|w| w.code == "dsc.rate_not_constant")
    );

    let flat = "time [min], temperature [degC], heat_flow [W/g]\n".to_string()
        + &(0..50)
            .map(|i| format!("{i}, {}, -0.01\n", 30 + i))
            .collect::<String>();
    let e = analyse_scan(
        &Table::parse(&flat, "f.csv").unwrap(),
        &ScanOptions::default(),
    )
    .unwrap_err();
    assert_eq!(e.exit_code(), 1, "{e}");
}

/// The printed block pasted into a demo case (in place of its own) loads through the case
/// loader with the same values.
#[test]
fn the_printed_block_loads_in_a_case() {
    use exoscreen::case::load::load_case_text;
    let out = run(&[&["dsc", "--format", "json"][..], &DEMO[..]].concat());
    let v: serde_json::Value = serde_json::from_str(&out.stdout).unwrap();
    let block = v["decomposition"]["yaml"].as_str().unwrap();
    let case =
        std::fs::read_to_string(common::root().join("cases/bromination-semibatch.yaml")).unwrap();
    let start = case.find("decomposition:\n").unwrap();
    let end = start + case[start..].find("\n\n").unwrap() + 1;
    let pasted = format!("{}{}{}", &case[..start], block, &case[end..]);
    let loaded = load_case_text(&pasted, "pasted.yaml").unwrap();
    let d = loaded.decomposition.unwrap();
    let q = v["decomposition"]["heat_release_rate_W_kg"]
        .as_f64()
        .unwrap();
    assert!((d.heat_release_rate.value / q - 1.0).abs() < 1e-3);
    let ea = v["decomposition"]["activation_energy_kJ_mol"]
        .as_f64()
        .unwrap();
    assert!((d.activation_energy.value / (ea * 1e3) - 1.0).abs() < 1e-3);
    assert_eq!(d.order, 1.0);
}
