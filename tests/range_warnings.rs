//! Range warnings: a report says where a model is used outside what it is valid for (issue 4).

use exoscreen::assess::assess;
use exoscreen::case::load::load_case_text;

const DEMO: &str = include_str!("../cases/bromination-semibatch.yaml");

fn codes(text: &str) -> Vec<String> {
    let case = load_case_text(text, "variant.yaml").expect("variant loads");
    let assessment = assess(case).expect("variant computes");
    assessment.warnings.into_iter().map(|w| w.code).collect()
}

/// Townsend and Tou's zero-order TMRad needs a large B = Ea dT_ad,d / (R T0^2); the
/// consumption correction n/B (methods-and-check-values.md §2, derived there) passes 10 % below
/// B = 10. 30 kJ/kg of decomposition energy gives dT_ad,d of about 20 K, B of about 12 at
/// Ea = 100 kJ/mol and T0 = 374 K; 10 kJ/kg gives B of about 4.
#[test]
fn a_small_decomposition_energy_flags_the_zero_order_tmrad() {
    let small = DEMO.replace("energy: 650 kJ/kg", "energy: 10 kJ/kg");
    assert!(codes(&small).contains(&"tmrad-low-b".to_string()));
    assert!(!codes(DEMO).contains(&"tmrad-low-b".to_string()));
}

#[test]
fn a_zero_order_decomposition_is_flagged_as_possibly_autocatalytic() {
    let zero = DEMO.replace("  order: 1\n", "  order: 0\n");
    assert!(codes(&zero).contains(&"decomposition-zero-order".to_string()));
}

/// Power-law rates of overall order above 3 are outside what elementary steps give.
#[test]
fn an_order_above_three_is_flagged() {
    let high = DEMO.replace(
        "    activation_energy: 75 kJ/mol\n",
        "    activation_energy: 75 kJ/mol\n    orders: { A: 2, B: 2 }\n",
    );
    let high = high.replace(
        "rate_constant: 6.0e-4 L/(mol*s)",
        "rate_constant: 1.0e-9 L^3/(mol^3*s)",
    );
    assert!(codes(&high).contains(&"reaction-order-high".to_string()));
}

/// HBr of 80.91 g/mol from 9 kmol of A is 728 kg of 4000 kg (18 %); a molar mass two and a half times
/// larger makes the off-gas over 30 % of the contents.
#[test]
fn a_large_share_of_mass_leaving_as_gas_is_flagged() {
    assert!(!codes(DEMO).contains(&"off-gas-share-high".to_string()));
    let heavy = DEMO.replace("molar_mass: 80.91 g/mol", "molar_mass: 200 g/mol");
    assert!(codes(&heavy).contains(&"off-gas-share-high".to_string()));
}
