//! Physics checks of the model against analytic solutions, published formulas and the derived
//! check values of shared/reference/methods-and-check-values.md (cited by section and tag:
//! [R] read, [D] derived, [M] from memory). Each case is small and built in the test, so that
//! the expected value follows from the inputs by hand.

use exoscreen::assess::decomposition::{td24, tmr_ad};
use exoscreen::assess::{Assessment, assess};
use exoscreen::case::Dosing;
use exoscreen::case::load::load_case_text;
use exoscreen::model::balance::Layout;
use exoscreen::model::plant::Plant;
use exoscreen::model::scenario::{FailureOptions, run_failure, run_normal};

/// Molar gas constant, J/(mol K) (CODATA 2018, exact; the value model.md fixes).
const R: f64 = 8.314462618;
const ZERO_C: f64 = 273.15;

// ---------------------------------------------------------------------------------------------
// Case building
// ---------------------------------------------------------------------------------------------

/// The parts of a case that the checks vary; everything else is a fixed 1.2 m vessel with a
/// DIN 28011 bottom (2.5 m^3 nominal, jacket up to 1.5 m).
struct Spec {
    charge: &'static str,
    charge_cp: &'static str,
    charge_amounts: String,
    feed: Option<String>,
    reactions: String,
    u: &'static str,
    coolant: String,
    tp: String,
    duration: &'static str,
    failure: &'static str,
    decomposition: Option<String>,
    mtt: String,
}

impl Spec {
    fn new(charge_amounts: &str, reactions: String) -> Spec {
        Spec {
            charge: "1000 kg",
            charge_cp: "2 kJ/(kg*K)",
            charge_amounts: charge_amounts.to_string(),
            feed: None,
            reactions,
            u: "0 W/(m^2*K)",
            coolant: "20 degC".to_string(),
            tp: "60 degC".to_string(),
            duration: "1 h",
            failure: "{ dosing: stops, horizon: 24 h }",
            decomposition: None,
            mtt: "200 degC".to_string(),
        }
    }

    fn yaml(&self) -> String {
        let feed = self
            .feed
            .as_ref()
            .map_or(String::new(), |f| format!("feed: {f}\n"));
        let decomposition = self
            .decomposition
            .as_ref()
            .map_or(String::new(), |d| format!("decomposition: {d}\n"));
        format!(
            "format: 1
title: physics check
charge:
  mass: {charge}
  specific_heat: {cp}
  density: 1000 kg/m^3
  amounts: {amounts}
{feed}reactions:
{reactions}
vessel:
  diameter: 1.2 m
  bottom: torispherical
  nominal_volume: 2.5 m^3
  jacket_height: 1.5 m
  heat_transfer_coefficient: {u}
coolant:
  temperature: {coolant}
process:
  temperature: {tp}
  duration: {duration}
failure: {failure}
{decomposition}limits:
  mtt: {mtt}
",
            charge = self.charge,
            cp = self.charge_cp,
            amounts = self.charge_amounts,
            reactions = self.reactions,
            u = self.u,
            coolant = self.coolant,
            tp = self.tp,
            duration = self.duration,
            failure = self.failure,
            mtt = self.mtt,
        )
    }

    fn plant(&self) -> Plant {
        let case = load_case_text(&self.yaml(), "physics.yaml").expect("the case loads");
        Plant::from_case(&case).expect("the vessel builds")
    }

    fn assess(&self) -> Assessment {
        let case = load_case_text(&self.yaml(), "physics.yaml").expect("the case loads");
        assess(case).expect("the case is assessed")
    }
}

/// One reaction entry of the `reactions` list.
fn reaction(equation: &str, enthalpy: &str, k: &str, t_ref: &str, ea: &str) -> String {
    format!(
        "  - {{ equation: \"{equation}\", enthalpy: {enthalpy}, rate_constant: {k}, reference_temperature: {t_ref}, activation_energy: {ea} }}"
    )
}

fn index(plant: &Plant, name: &str) -> usize {
    plant.network.index_of(name).expect("species exists")
}

fn amount(plant: &Plant, state: &[f64], name: &str) -> f64 {
    state[plant.layout().amount(index(plant, name))]
}

/// Composite Simpson rule of f over [a, b] with n (even) intervals.
fn simpson(f: &dyn Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
    let h = (b - a) / n as f64;
    let inner: f64 = (1..n)
        .map(|i| {
            let w = if i % 2 == 1 { 4.0 } else { 2.0 };
            w * f(a + h * i as f64)
        })
        .sum();
    (f(a) + f(b) + inner) * h / 3.0
}

// ---------------------------------------------------------------------------------------------
// 1. Energy conservation in an adiabatic batch
// ---------------------------------------------------------------------------------------------

/// A + B -> P, -100 kJ/mol, 1.0 kmol A (limiting) and 1.2 kmol B in 1000 kg at 2 kJ/(kg K):
/// dT_ad = 1e8 J / 2e6 J/K = 50 K.
fn adiabatic_batch() -> Spec {
    Spec::new(
        "{ A: 1.0 kmol, B: 1.2 kmol }",
        reaction(
            "A + B -> P",
            "-100 kJ/mol",
            "1.0e-4 L/(mol*s)",
            "60 degC",
            "60 kJ/mol",
        ),
    )
}

/// Energy balance of a closed adiabatic vessel with constant heat capacity C (first law):
/// C (T - T0) = (-dH) (n_A0 - n_A), so T - T0 = dT_ad X with X the conversion of the limiting
/// reactant, and the cumulative reaction heat over C equals T - T0. Checked at every accepted
/// step of two adiabatic runs: normal operation with U = 0, and a cooling failure at t = 0.
#[test]
fn adiabatic_batch_conserves_energy() {
    let spec = adiabatic_batch();
    let plant = spec.plant();
    let layout = plant.layout();
    let t0 = 60.0 + ZERO_C;
    let c: f64 = 1000.0 * 2000.0;
    let dt_ad = 100e3 * 1000.0 / c;
    assert!((dt_ad - 50.0).abs() < 1e-12);
    let normal = run_normal(&plant, None).expect("normal run");
    let options = FailureOptions {
        dosing: Dosing::Stops,
        decomposition: true,
    };
    let failure = run_failure(&plant, &normal, 0.0, options, None).expect("failure run");
    let mut worst = (0.0_f64, 0.0_f64);
    for run in [&normal, &failure] {
        for s in run.samples() {
            let rise = s.state[Layout::TEMPERATURE] - t0;
            let conversion = 1.0 - amount(&plant, s.state, "A") / 1000.0;
            let heat = s.state[layout.reaction_heat()];
            worst.0 = worst.0.max((rise - dt_ad * conversion).abs());
            worst.1 = worst.1.max((heat / c - rise).abs());
        }
    }
    let end = failure.last_state();
    let conversion_end = 1.0 - amount(&plant, end, "A") / 1000.0;
    let rise_end = end[Layout::TEMPERATURE] - t0;
    println!(
        "adiabatic batch: T_end - T0 = {rise_end:.9} K, dT_ad X = {:.9} K, X = {conversion_end:.9}; \
         max |dT - dT_ad X| = {:.3e} K, max |Q/C - dT| = {:.3e} K",
        dt_ad * conversion_end,
        worst.0,
        worst.1
    );
    assert!(worst.0 < 1e-6, "energy balance off by {} K", worst.0);
    assert!(worst.1 < 1e-6, "reaction heat off by {} K", worst.1);
    // The run follows the failure until the heat left is below 1e-6 K (scenario.rs): the
    // reaction is complete there and the figures are Tp + dT_ad.
    assert!(conversion_end > 1.0 - 1e-6, "conversion {conversion_end}");
    let a = spec.assess();
    let f = &a.figures;
    println!(
        "adiabatic batch figures: dT_ad {:.9} K, MTSR - Tp {:.9} K, simulated MTSR - Tp {:.9} K",
        f.adiabatic_rise,
        f.mtsr - t0,
        f.worst.max_temperature - t0
    );
    assert!((f.adiabatic_rise - 50.0).abs() < 1e-9);
    // MTSR(t) = T + Q_acc/C is itself conserved when U = 0: its maximum is Tp + dT_ad.
    assert!((f.mtsr - (t0 + 50.0)).abs() < 1e-6);
    assert!((f.worst.max_temperature - (t0 + 50.0)).abs() < 1e-5);
    assert!(f.worst.failure_time == 0.0);
}

// ---------------------------------------------------------------------------------------------
// 2. Isothermal batch kinetics
// ---------------------------------------------------------------------------------------------

/// A -> P, enthalpy 0, k = 0.06 1/min = 1e-3 1/s: analytic n_A/n_A0 = exp(-k t) (first-order
/// rate law integrated at constant T and V). The unit 1/min also checks the conversion.
#[test]
fn isothermal_first_order_batch_follows_exp() {
    let mut spec = Spec::new(
        "{ A: 1.0 kmol }",
        reaction("A -> P", "0 kJ/mol", "0.06 1/min", "60 degC", "50 kJ/mol"),
    );
    spec.duration = "2 h";
    let plant = spec.plant();
    let tp = 60.0 + ZERO_C;
    let k = 1e-3;
    let run = run_normal(&plant, None).expect("normal run");
    let worst_drift = run
        .samples()
        .map(|s| (s.state[Layout::TEMPERATURE] - tp).abs())
        .fold(0.0, f64::max);
    assert!(worst_drift < 1e-9, "T drifted by {worst_drift} K");
    let mut worst = 0.0_f64;
    // Every accepted step, and dense output at chosen times (k t = 0.3 ... 7.2).
    let mut points: Vec<(f64, f64)> = run
        .samples()
        .map(|s| (s.time, amount(&plant, s.state, "A")))
        .collect();
    for t in [300.0, 900.0, 1800.0, 3600.0, 5400.0, 7200.0] {
        points.push((t, amount(&plant, &run.state_at(t).1, "A")));
    }
    for (t, n) in points {
        let exact = (-k * t).exp();
        worst = worst.max(((n / 1000.0) / exact - 1.0).abs());
    }
    println!("first order: max relative error of n_A/n_A0 against exp(-k t): {worst:.3e}");
    assert!(worst < 1e-7, "relative error {worst}");
}

/// A + B -> P with c_A0 = c_B0 = c0 = 1000 mol/m^3, k = 1e-3 L/(mol s): analytic
/// n_A/n_A0 = 1/(1 + k c0 t) (second-order rate law, equal concentrations, constant T, V).
#[test]
fn isothermal_second_order_batch_follows_hyperbola() {
    let mut spec = Spec::new(
        "{ A: 1.0 kmol, B: 1.0 kmol }",
        reaction(
            "A + B -> P",
            "0 kJ/mol",
            "1.0e-3 L/(mol*s)",
            "60 degC",
            "50 kJ/mol",
        ),
    );
    spec.duration = "2 h";
    let plant = spec.plant();
    let kc0 = 1e-6 * 1000.0;
    let run = run_normal(&plant, None).expect("normal run");
    let points: Vec<(f64, f64)> = run
        .samples()
        .map(|s| (s.time, amount(&plant, s.state, "A")))
        .collect();
    let error = |(t, n): &(f64, f64)| ((n / 1000.0) * (1.0 + kc0 * t) - 1.0).abs();
    let worst = points.iter().map(error).fold(0.0, f64::max);
    println!("second order: max relative error of n_A/n_A0 against 1/(1 + k c0 t): {worst:.3e}");
    assert!(worst < 1e-7, "relative error {worst}");
    // Between accepted steps the state comes from cubic Hermite interpolation, one order
    // below the solver: 1e-6 relative there.
    let between: Vec<(f64, f64)> = [300.0, 900.0, 1800.0, 3600.0, 5400.0, 7200.0]
        .iter()
        .map(|t| (*t, amount(&plant, &run.state_at(*t).1, "A")))
        .collect();
    let worst_between = between.iter().map(error).fold(0.0, f64::max);
    assert!(
        worst_between < 1e-6,
        "interpolated: relative error {worst_between}"
    );
}

// ---------------------------------------------------------------------------------------------
// 3. Adiabatic decomposition: time to maximum rate
// ---------------------------------------------------------------------------------------------

/// First-order decomposition of 2000 kJ/kg in a mass of 2 kJ/(kg K) (dT_ad = 1000 K) from
/// T0 = 400 K, with q0 at T0 set so that the zero-order TMRad is 2 h. The main reaction has
/// enthalpy 0 and a negligible rate.
fn decomposition_batch(ea: f64, q0: f64) -> Spec {
    let mut spec = Spec::new(
        "{ A: 1.0 kmol }",
        reaction("A -> P", "0 kJ/mol", "1.0e-12 1/s", "400 K", "50 kJ/mol"),
    );
    spec.tp = "400 K".to_string();
    spec.coolant = "400 K".to_string();
    spec.u = "300 W/(m^2*K)";
    spec.duration = "1 min";
    spec.mtt = "500 K".to_string();
    spec.decomposition = Some(format!(
        "{{ energy: 2000 kJ/kg, heat_release_rate: {q0:e} W/kg, reference_temperature: 400 K, activation_energy: {} kJ/mol, order: 1 }}",
        ea / 1e3
    ));
    spec
}

/// Time to maximum rate of an adiabatic nth-order runaway.
/// Zero-order value (Townsend and Tou 1980, reference §2 "Zero-order TMRad" [M citation]):
/// TMRad0 = cp R T0^2 / (q0 Ea). The reference derives (§2 "Consumption correction" [D])
/// TMRad ~ TMRad0 (1 + n/B + 2 R T0/Ea), B = Ea dT_ad/(R T0^2): the zero-order value is
/// a lower bound off by about c = n/B + 2 R T0/Ea. Independent exact value: in an adiabatic
/// batch T and alpha are tied (alpha = (T - T0)/dT_ad, first law), so dT/dt is a function of
/// T alone, its maximum is at T* where Ea/(R T^2) = n/(T_f - T), and the time to reach T* is
/// the quadrature t* = int_T0^T* cp dT / (q(T) (1 - alpha(T))^n).
#[test]
fn adiabatic_decomposition_time_to_maximum_rate() {
    let (t0, cp, energy, n) = (400.0, 2000.0, 2.0e6, 1.0);
    let dt_ad = energy / cp;
    let t_final = t0 + dt_ad;
    for ea in [100e3, 150e3] {
        let tmr0 = 2.0 * 3600.0;
        let q0 = cp * R * t0 * t0 / (ea * tmr0);
        let plant = decomposition_batch(ea, q0).plant();
        let law = plant.decomposition.expect("decomposition data");
        assert!((tmr_ad(&law, cp, t0) / tmr0 - 1.0).abs() < 1e-9);
        let normal = run_normal(&plant, None).expect("normal run");
        let options = FailureOptions {
            dosing: Dosing::Stops,
            decomposition: true,
        };
        let run = run_failure(&plant, &normal, 0.0, options, None).expect("runaway is followed");
        let rate = |phase: &_, t: f64, x: &[f64]| plant.temperature_rate(phase, t, x);
        let (t_max, rate_max) = run.maximum(0.0, run.end_time(), &rate);
        // Exact reference by quadrature (substitution T = T0 + dT_ad a).
        let big_b = ea * dt_ad / (R * t0 * t0);
        let c = n / big_b + 2.0 * R * t0 / ea;
        let t_star = (-ea + (ea * ea + 4.0 * n * R * ea * t_final).sqrt()) / (2.0 * n * R);
        let inverse_rate = |t: f64| {
            let q = q0 * (-(ea / R) * (1.0 / t - 1.0 / t0)).exp();
            cp / (q * (1.0 - (t - t0) / dt_ad).powf(n))
        };
        let t_quad = simpson(&inverse_rate, t0, t_star, 200_000);
        let rate_star = 1.0 / inverse_rate(t_star);
        let t_end = run.last_state()[Layout::TEMPERATURE];
        let ratio = t_max / tmr0;
        println!(
            "decomposition Ea {} kJ/mol: B = {big_b:.1}, c = n/B + 2RT0/Ea = {c:.4}; \
             simulated TMR {t_max:.3} s, TMRad0 {tmr0:.1} s, ratio {ratio:.5} \
             (TMRad0 (1 + c) gives {:.5}); quadrature t* {t_quad:.3} s (rel. diff {:.2e}); \
             max rate {rate_max:.4e} K/s vs {rate_star:.4e}; T* {t_star:.2} K; \
             T_end - T0 {:.6} K (E_d/cp {dt_ad} K)",
            ea / 1e3,
            1.0 + c,
            t_max / t_quad - 1.0,
            t_end - t0
        );
        // The zero-order formula is a lower bound, within about c of the runaway time.
        assert!(
            ratio >= 1.0 && ratio <= 1.0 + 2.0 * c,
            "ratio {ratio} outside [1, 1 + 2c]"
        );
        assert!((ratio - (1.0 + c)).abs() <= c, "first-order correction");
        // The independent quadrature.
        assert!((t_max / t_quad - 1.0).abs() < 1e-5);
        assert!((rate_max / rate_star - 1.0).abs() < 1e-3);
        // Burnt out: the whole decomposition energy is in the temperature (first law).
        assert!(
            (t_end - t_final).abs() < 1.0,
            "T_end {t_end}, expected {t_final}"
        );
    }
}

// ---------------------------------------------------------------------------------------------
// 4. Dilution by dosing (reference §1, "Dilution by dosing" [D])
// ---------------------------------------------------------------------------------------------

/// A charged (4.0 kmol in 1100 kg), B fed (3.6 kmol in 400 kg over 1 h at Tp), both at
/// 2 kJ/(kg K): Q_total = 100 kJ/mol x 3.6 kmol = 3.6e8 J, C_final = 3e6 J/K, dT_ad,f = 120 K,
/// Tp = 60 degC. At a quarter of the feed X_ac = 0.25 and m/m_f = 1200/1500 = 0.8: the
/// reference's check values (MTSR 97.5 degC, 90.0 degC on the final-mass basis). The rate at Tp
/// is negligible (k c_A ~ 1e-8 1/s, so about 2e-5 of the fed B reacts during the feed), but
/// with Ea = 150 kJ/mol the adiabatic run after a failure completes within the horizon.
fn dilution_semibatch() -> Spec {
    let mut spec = Spec::new(
        "{ A: 4.0 kmol }",
        reaction(
            "A + B -> P",
            "-100 kJ/mol",
            "2.75e-9 L/(mol*s)",
            "60 degC",
            "150 kJ/mol",
        ),
    );
    spec.charge = "1100 kg";
    spec.feed = Some(
        "{ mass: 400 kg, specific_heat: 2 kJ/(kg*K), density: 1000 kg/m^3, temperature: 60 degC, amounts: { B: 3.6 kmol }, start: 0 h, duration: 1 h }"
            .to_string(),
    );
    spec.u = "300 W/(m^2*K)";
    spec.coolant = "60 degC".to_string();
    spec.failure = "{ dosing: stops, horizon: 10000 h }";
    spec.mtt = "250 degC".to_string();
    spec
}

/// MTSR(t) = Tp + X_ac(t) dTad,f m_f/m(t) (reference §1 [D], exact for uniform cp), i.e.
/// T + Q(n(t))/C(t) (model.md "Figures"). With nothing reacting during the feed, its maximum
/// is at the end of the feed: Tp + Q(n at feed end)/C(feed end); the accumulation there is 1,
/// and a failure at the end of the feed with the feed stopped reaches that MTSR.
#[test]
fn mtsr_of_an_unreacted_feed_is_its_adiabatic_rise_on_the_mass_present() {
    let spec = dilution_semibatch();
    let a = spec.assess();
    let (plant, f) = (&a.plant, &a.figures);
    let tp = 60.0 + ZERO_C;
    let t_dos = 3600.0;
    let c_at = |fed: f64| 1100.0 * 2000.0 + fed * 2000.0;
    let q_of = |state: &[f64]| 100e3 * amount(plant, state, "A").min(amount(plant, state, "B"));
    // At a quarter of the feed: the reference's check value.
    let (phase, quarter) = a.normal_run.state_at(0.25 * t_dos);
    let mtsr_quarter = quarter[Layout::TEMPERATURE] + q_of(&quarter) / c_at(100.0);
    let snapshot = plant.snapshot(&phase, 0.25 * t_dos, &quarter);
    assert!(
        (snapshot.mass - 1200.0).abs() < 1e-9
            && (snapshot.heat_capacity - c_at(100.0)).abs() < 1e-6
    );
    assert!((amount(plant, &quarter, "B") / 900.0 - 1.0).abs() < 1e-4);
    let reference_form = tp + 0.25 * 120.0 * 1500.0 / 1200.0;
    assert!((reference_form - (97.5 + ZERO_C)).abs() < 1e-9);
    // At the end of the feed.
    let (_, end) = a.normal_run.state_at(t_dos);
    let model_form = end[Layout::TEMPERATURE] + q_of(&end) / c_at(400.0);
    let unreacted = tp + 100e3 * 3600.0 / c_at(400.0);
    let accumulation_end = q_of(&end) / 3.6e8;
    println!(
        "dilution: MTSR(t_dos/4) = {:.5} degC (reference 97.5, final-mass basis 90.0); \
         MTSR reported {:.6} degC, T + Q(n)/C at feed end {:.6} degC, Tp + dT_ad(dosed) {:.6} degC; \
         max accumulation {:.7} (at feed end {:.7}, at {:.1} s); simulated MTSR {:.6} degC \
         at t_f = {:.1} s ({} runs); MTSR - (T + Q/C) = {:.2e} K, simulated - MTSR = {:.2e} K",
        mtsr_quarter - ZERO_C,
        f.mtsr - ZERO_C,
        model_form - ZERO_C,
        unreacted - ZERO_C,
        f.max_accumulation,
        accumulation_end,
        f.max_accumulation_time,
        f.worst.max_temperature - ZERO_C,
        f.worst.failure_time,
        f.worst.runs,
        f.mtsr - model_form,
        f.worst.max_temperature - f.mtsr
    );
    // The model's MTSR(t) against the reference's form, and not the final-mass basis.
    assert!((mtsr_quarter - reference_form).abs() < 0.01);
    assert!((mtsr_quarter - (90.0 + ZERO_C)).abs() > 7.0);
    // The reported MTSR is the value at the feed end, which is Tp + dT_ad of the dosed part
    // up to the B that reacted during the feed (2e-5 of 120 K).
    assert!((f.mtsr - model_form).abs() < 1e-6);
    assert!((f.mtsr - unreacted).abs() < 0.01);
    assert!((f.max_accumulation - accumulation_end).abs() < 1e-9);
    assert!(
        f.max_accumulation > 0.9999,
        "accumulation {}",
        f.max_accumulation
    );
    assert!((f.max_accumulation_time - t_dos).abs() < 1.0);
    // Feed stopped at the failure: the adiabatic run reaches MTSR.
    assert!((f.worst.max_temperature - f.mtsr).abs() < 0.05);
    // Truly nothing reacting (k = 1e-30 L/(mol s)): accumulation exactly 1, MTSR = Tp + 120 K.
    let mut inert = dilution_semibatch();
    inert.reactions = reaction(
        "A + B -> P",
        "-100 kJ/mol",
        "1.0e-30 L/(mol*s)",
        "60 degC",
        "150 kJ/mol",
    );
    let g = inert.assess().figures;
    println!(
        "dilution, inert: max accumulation 1 - {:.2e}, MTSR - (Tp + 120 K) = {:.2e} K",
        1.0 - g.max_accumulation,
        g.mtsr - (tp + 120.0)
    );
    assert!((g.max_accumulation - 1.0).abs() < 1e-12);
    assert!((g.mtsr - (tp + 120.0)).abs() < 1e-9);
}

// ---------------------------------------------------------------------------------------------
// 5. Feed-controlled limit
// ---------------------------------------------------------------------------------------------

/// A fast A + B -> P (k = 0.3 L/(mol s), k c_A t_dos from 6500 at the start to 720 at the end)
/// with B fed over 1 h into a 20 % excess of A: quasi-steady B holds n_B ~ ndot_B/(k c_A).
/// With X_ac = n_B/n_B,total ~ 1/(k c_A t_dos) the accumulation is ~1.4e-3 at the end of the
/// feed, and the reaction power is the feed rate times -dH: Stoessel's dosing-controlled
/// limit (reference §1 "Conversion and accumulation" [M], the limit of X_ac(t) = t/t_dos - X_th
/// with X_th = t/t_dos). A large U (2000 W/(m^2 K)) with the coolant 3 K below Tp lets the
/// jacket hold T.
#[test]
fn fast_reaction_is_feed_controlled() {
    let mut spec = Spec::new(
        "{ A: 6.0 kmol }",
        reaction(
            "A + B -> P",
            "-20 kJ/mol",
            "0.3 L/(mol*s)",
            "60 degC",
            "50 kJ/mol",
        ),
    );
    spec.feed = Some(
        "{ mass: 500 kg, specific_heat: 2 kJ/(kg*K), density: 1000 kg/m^3, temperature: 60 degC, amounts: { B: 5.0 kmol }, start: 0 h, duration: 1 h }"
            .to_string(),
    );
    spec.u = "2000 W/(m^2*K)";
    spec.coolant = "57 degC".to_string();
    let a = spec.assess();
    let f = &a.figures;
    let tp = 60.0 + ZERO_C;
    let feed_power = 20e3 * 5000.0 / 3600.0;
    let temperature_band = a
        .normal_run
        .samples()
        .map(|s| (s.state[Layout::TEMPERATURE] - tp).abs())
        .fold(0.0, f64::max);
    println!(
        "feed-controlled: max accumulation {:.3e} (quasi-steady 1/(k c_A t_dos) = {:.3e}); peak reaction power {:.4} kW vs ndot_B (-dH) \
         {:.4} kW (ratio {:.6}) at {:.1} s; cooling at peak {:.4} kW; max |T - Tp| \
         {temperature_band:.3} K",
        f.max_accumulation,
        1.0 / (0.3e-3 * (1000.0 / 1.5) * 3600.0),
        f.normal.peak_reaction_power / 1e3,
        feed_power / 1e3,
        f.normal.peak_reaction_power / feed_power,
        f.normal.peak_time,
        f.normal.cooling_at_peak / 1e3,
    );
    assert!(f.max_accumulation < 0.01);
    // Quasi-steady B at the end of the feed: X_ac = 1/(k c_A t_dos), c_A = 1 kmol/1.5 m^3, at Tp
    // (T is within 1 K of Tp, which moves k by under 3 % at 50 kJ/mol).
    let quasi_steady = 1.0 / (0.3e-3 * (1000.0 / 1.5) * 3600.0);
    assert!((f.max_accumulation / quasi_steady - 1.0).abs() < 0.05);
    assert!((f.normal.peak_reaction_power / feed_power - 1.0).abs() < 0.01);
    // The jacket holds T within 1 K of Tp over the whole run (the peak comes early, at the
    // smallest fill, where the jacket takes about 90 % of it and the rest warms the contents).
    assert!(
        temperature_band < 1.0,
        "T strays {temperature_band} K from Tp"
    );
    assert!(f.normal.cooling_at_peak > 0.85 * f.normal.peak_reaction_power);
}

// ---------------------------------------------------------------------------------------------
// 6. Second-order semibatch accumulation (reference §5 [D])
// ---------------------------------------------------------------------------------------------

/// The dimensionless semibatch of the reference: a' = -Da a b, b' = 1 - Da a b on theta in
/// [0, 1], a(0) = 1, b(0) = 0; X_ac,max = b(1). Classical RK4, n steps.
fn dimensionless_accumulation(da: f64, steps: usize) -> f64 {
    let f = |a: f64, b: f64| (-da * a * b, 1.0 - da * a * b);
    let h = 1.0 / steps as f64;
    let (mut a, mut b) = (1.0, 0.0);
    for _ in 0..steps {
        let k1 = f(a, b);
        let k2 = f(a + 0.5 * h * k1.0, b + 0.5 * h * k1.1);
        let k3 = f(a + 0.5 * h * k2.0, b + 0.5 * h * k2.1);
        let k4 = f(a + h * k3.0, b + h * k3.1);
        a += h / 6.0 * (k1.0 + 2.0 * k2.0 + 2.0 * k3.0 + k4.0);
        b += h / 6.0 * (k1.1 + 2.0 * k2.1 + 2.0 * k3.1 + k4.1);
    }
    b
}

/// Constant volume: the 1 kmol of B comes in 10 g of a 10 000 kg/m^3 feed, 1e-6 m^3 on a
/// 1 m^3 charge, so V changes by 1e-6 (relative) and Da by as much. Constant T: U = 0, the
/// feed at Tp and an enthalpy of -1 J/mol (dT_ad = 5e-7 K, so that the thermal accumulation
/// Q_acc/Q_total is defined and equal to min(n_A, n_B)/n_B,total). Da = k c_A0 t_dos with
/// c_A0 = 1000 mol/m^3 and t_dos = 1 h.
#[test]
fn second_order_semibatch_accumulation_matches_the_dimensionless_solution() {
    for (da, tabled) in [(1.0, 0.684), (3.0, 0.452), (10.0, 0.252), (30.0, 0.146)] {
        let k_l_per_mol_s = da / (1000.0 * 3600.0) * 1e3;
        let mut spec = Spec::new(
            "{ A: 1.0 kmol }",
            reaction(
                "A + B -> P",
                "-1 J/mol",
                &format!("{k_l_per_mol_s:e} L/(mol*s)"),
                "60 degC",
                "50 kJ/mol",
            ),
        );
        spec.feed = Some(
            "{ mass: 10 g, specific_heat: 2 kJ/(kg*K), density: 10000 kg/m^3, temperature: 60 degC, amounts: { B: 1.0 kmol }, start: 0 h, duration: 1 h }"
                .to_string(),
        );
        spec.duration = "2 h";
        let a = spec.assess();
        let f = &a.figures;
        let rk4 = dimensionless_accumulation(da, 20_000);
        let rk4_half = dimensionless_accumulation(da, 10_000);
        println!(
            "semibatch Da {da}: model X_ac,max {:.7} at {:.1} s, RK4 {rk4:.7} (step-halving diff \
             {:.1e}), reference {tabled}",
            f.max_accumulation,
            f.max_accumulation_time,
            (rk4 - rk4_half).abs()
        );
        assert!((rk4 - rk4_half).abs() < 1e-10);
        assert!((rk4 - tabled).abs() <= 5e-4, "RK4 {rk4} vs tabled {tabled}");
        assert!((f.max_accumulation - rk4).abs() < 1e-5);
        assert!((f.max_accumulation_time - 3600.0).abs() < 1.0);
    }
}

// ---------------------------------------------------------------------------------------------
// 7. Criticality classes (model.md "Figures"; reference §1 table)
// ---------------------------------------------------------------------------------------------

/// A batch A -> P of dT_ad = 40 K (0.8 kmol at -100 kJ/mol in 2e6 J/K) at Tp = 60 degC, so
/// MTSR = 100 degC (at t = 0 nothing has reacted). A zero-order decomposition (Ea 100 kJ/mol)
/// whose q_ref at T_ref is cp R T_ref^2/(Ea 24 h), so TD24 = T_ref by the TMRad formula.
fn class_case(td24_c: f64, mtt_c: f64) -> Spec {
    let ea = 100e3;
    let t_ref = td24_c + ZERO_C;
    let q_ref = 2000.0 * R * t_ref * t_ref / (ea * 86_400.0);
    let mut spec = Spec::new(
        "{ A: 0.8 kmol }",
        reaction(
            "A -> P",
            "-100 kJ/mol",
            "1.0e-4 1/s",
            "60 degC",
            "60 kJ/mol",
        ),
    );
    spec.u = "300 W/(m^2*K)";
    spec.coolant = "50 degC".to_string();
    spec.duration = "2 h";
    spec.mtt = format!("{mtt_c} degC");
    spec.decomposition = Some(format!(
        "{{ energy: 500 kJ/kg, heat_release_rate: {q_ref:e} W/kg, reference_temperature: {td24_c} degC, activation_energy: 100 kJ/mol, order: 0 }}"
    ));
    spec
}

/// Stoessel's classes as model.md defines them: 1 MTSR < MTT < TD24; 2 MTSR < TD24 <= MTT;
/// 3 MTT <= MTSR < TD24; 4 MTT < TD24 <= MTSR; 5 TD24 <= MTSR and TD24 <= MTT (both
/// orderings of class 5, reference §1 table).
#[test]
fn the_five_orderings_give_the_five_classes() {
    let mtsr = 100.0 + ZERO_C;
    for (td24_c, mtt_c, class) in [
        (140.0, 120.0, 1), // MTSR 100 < MTT 120 < TD24 140
        (120.0, 140.0, 2), // MTSR 100 < TD24 120 < MTT 140
        (120.0, 90.0, 3),  // MTT 90 < MTSR 100 < TD24 120
        (95.0, 90.0, 4),   // MTT 90 < TD24 95 < MTSR 100
        (80.0, 120.0, 5),  // TD24 80 < MTSR 100 < MTT 120
        (80.0, 90.0, 5),   // TD24 80 < MTT 90 < MTSR 100
    ] {
        let a = class_case(td24_c, mtt_c).assess();
        let f = &a.figures;
        let td = f.td24.expect("TD24");
        println!(
            "class case TD24 {td24_c} MTT {mtt_c}: MTSR {:.6} degC, TD24 {:.6} degC, class {:?}",
            f.mtsr - ZERO_C,
            td - ZERO_C,
            f.class
        );
        assert!((f.mtsr - mtsr).abs() < 1e-6, "MTSR {}", f.mtsr);
        assert!((td - (td24_c + ZERO_C)).abs() < 1e-6, "TD24 {td}");
        let law = a.plant.decomposition.expect("decomposition data");
        assert!((td24(&law, 2000.0).unwrap() - td).abs() < 1e-9);
        assert_eq!(f.class, Some(class), "TD24 {td24_c}, MTT {mtt_c}");
    }
}

// ---------------------------------------------------------------------------------------------
// TD24 over the whole plausible range of activation energies
// ---------------------------------------------------------------------------------------------

/// TD24 solves cp R T^2/(q(T) Ea) = 24 h (reference §2 "TD24" [M definition]; model.md
/// "Figures"). Independent solution: bisection on ln TMRad(T) - ln(24 h), written with the
/// Arrhenius exponent kept in the logarithm so that nothing underflows, below the turning point
/// Ea/(2R) where TMRad is monotone. Data: q_ref = 10 W/kg at 150 degC, cp = 1.8 kJ/(kg K) (the
/// reference's §2 table), Ea from 50 to 400 kJ/mol (the validator's plausible range is 20 to
/// 400 kJ/mol, case-format.md).
#[test]
fn td24_exists_over_the_plausible_activation_range() {
    use exoscreen::model::plant::DecompositionLaw;
    let (cp, q_ref, t_ref): (f64, f64, f64) = (1800.0, 10.0, 150.0 + ZERO_C);
    let mut missing = Vec::new();
    for step in 0..=14 {
        let ea = 50e3 + 25e3 * step as f64;
        let ln_tmr =
            |t: f64| (cp * R * t * t / ea).ln() - q_ref.ln() + (ea / R) * (1.0 / t - 1.0 / t_ref);
        let gap = |t: f64| ln_tmr(t) - 86_400.0_f64.ln();
        let (mut lo, mut hi) = (200.0, (ea / (2.0 * R)).min(2000.0));
        assert!(gap(lo) > 0.0 && gap(hi) < 0.0);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if gap(mid) > 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let expected = 0.5 * (lo + hi);
        let law = DecompositionLaw {
            energy: 1e6,
            q_ref,
            reference_temperature: t_ref,
            activation_energy: ea,
            order: 0.0,
        };
        match td24(&law, cp) {
            Some(t) => assert!(
                (t - expected).abs() < 1e-6,
                "Ea {} kJ/mol: TD24 {t} K, expected {expected} K",
                ea / 1e3
            ),
            None => missing.push(format!(
                "{} kJ/mol (TD24 {:.2} degC)",
                ea / 1e3,
                expected - ZERO_C
            )),
        }
    }
    assert!(
        missing.is_empty(),
        "no TD24 returned at Ea = {}",
        missing.join(", ")
    );
}
