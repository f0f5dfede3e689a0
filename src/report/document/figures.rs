//! The figures section: each figure with its value and unit, its formula as model.md defines
//! it, its inputs with units, and the source of its method; and the figures of the full model
//! after the worst cooling failure.

use super::{Block, Section, Table, fixed};
use crate::assess::Assessment;
use crate::model::plant::Jacket;
use crate::report::celsius;
use crate::report::table::condenser_text;

const HOUR: f64 = 3600.0;
/// J/(mol K), as model.md fixes it.
const GAS_CONSTANT: &str = "R = 8.314462618 J/(mol K)";

/// The figure table's header; `markdown` tests parse the first three columns.
pub const FIGURE_HEADER: [&str; 6] = [
    "figure",
    "value",
    "unit",
    "formula",
    "inputs",
    "method source",
];

/// Short citations in the table; `REFERENCES` gives them in full.
pub const STOESSEL_BOOK: &str = "[1] Stoessel 2008";
pub const STOESSEL_CLASSES: &str = "[2] Stoessel 1993";
pub const TOWNSEND_TOU: &str = "[3] Townsend and Tou 1980";
pub const OWN_INTEGRATION: &str = "[4] this tool";

pub const REFERENCES: [&str; 4] = [
    "F. Stoessel, Thermal Safety of Chemical Processes, Wiley-VCH (2008): adiabatic temperature rise, thermal accumulation, MTSR, MTT, TD24.",
    "F. Stoessel, Chem. Eng. Prog. 89(10) (1993) 68–75: the criticality classes from the order of MTSR, MTT and TD24.",
    "D. I. Townsend, J. C. Tou, Thermochim. Acta 37 (1980) 1–30: the time to maximum rate under adiabatic conditions, zero-order approximation.",
    "exoscreen's integration of the heat balance of its model contract: adaptive Dormand–Prince 5(4) at a relative tolerance of 1e-9, a stiff method where the reactions become very fast; maxima refined on the dense output; the worst failure time by a sweep refined by golden-section search.",
];

struct Row<'a> {
    figure: &'a str,
    value: String,
    unit: &'a str,
    formula: &'a str,
    inputs: String,
    source: &'a str,
}

impl Row<'_> {
    fn cells(self) -> Vec<String> {
        vec![
            self.figure.to_string(),
            self.value,
            self.unit.to_string(),
            self.formula.to_string(),
            self.inputs,
            self.source.to_string(),
        ]
    }
}

pub fn section(a: &Assessment) -> Section {
    let rows: Vec<Vec<String>> = rows(a).into_iter().map(Row::cells).collect();
    Section {
        id: "figures",
        heading: "Figures".to_string(),
        new_page: true,
        blocks: vec![
            Block::Paragraph(format!(
                "Every figure as defined in the model contract of this tool, with what it is computed from. Temperatures in °C, temperature differences in K, times in h from the start of the process unless said otherwise; {GAS_CONSTANT}."
            )),
            Block::Table(Table {
                header: FIGURE_HEADER.iter().map(|s| s.to_string()).collect(),
                rows,
                numeric: vec![1],
            }),
            Block::Subheading("Sources of the methods".to_string()),
            Block::References(REFERENCES.iter().map(|r| r.to_string()).collect()),
        ],
    }
}

fn rows(a: &Assessment) -> Vec<Row<'static>> {
    let f = &a.figures;
    let p = &a.plant;
    let n = &f.normal;
    let cp_final = f.final_heat_capacity / f.final_mass;
    let decomposition = p.decomposition.as_ref().map_or(
        "no decomposition data in the case".to_string(),
        |d| {
            format!(
                "q_ref = {:.3} W/kg at {:.1} °C, Ea_d = {:.1} kJ/mol, cp_final = {:.3} kJ/(kg K)",
                d.q_ref,
                celsius(d.reference_temperature),
                d.activation_energy / 1e3,
                cp_final / 1e3
            )
        },
    );
    let td24_text = fixed(f.td24.map(celsius), 1);
    let dosing = match p.dosing_after_failure {
        crate::case::Dosing::Continues => "the feed continues after the failure",
        crate::case::Dosing::Stops => "the feed stops at the failure",
    };
    let mut rows = vec![
        Row {
            figure: "adiabatic temperature rise ΔT_ad",
            value: format!("{:.1}", f.adiabatic_rise),
            unit: "K",
            formula: "ΔT_ad = Q_total / C_final; Q_total = largest Σ_j (−ΔH_j) ξ_j over extents that leave no species negative",
            inputs: format!(
                "Q_total = {:.1} MJ; C_final = {:.1} kJ/K (m_final = {:.1} kg)",
                f.releasable_heat / 1e6,
                f.final_heat_capacity / 1e3,
                f.final_mass
            ),
            source: STOESSEL_BOOK,
        },
        Row {
            figure: "max thermal accumulation X_max",
            value: format!("{:.1}", 100.0 * f.max_accumulation),
            unit: "%",
            formula: "X(t) = Q_acc(t) / Q_total, Q_acc(t) = heat still releasable by the amounts in the vessel; its maximum",
            inputs: format!(
                "at t = {:.2} h; Q_total = {:.1} MJ",
                f.max_accumulation_time / HOUR,
                f.releasable_heat / 1e6
            ),
            source: STOESSEL_BOOK,
        },
        Row {
            figure: "MTSR",
            value: format!("{:.1}", celsius(f.mtsr)),
            unit: "°C",
            formula: "MTSR = max over normal operation of T(t) + Q_acc(t) / C(t)",
            inputs: format!(
                "at t = {:.2} h; Tp = {:.1} °C",
                f.mtsr_time / HOUR,
                celsius(p.process_temperature)
            ),
            source: STOESSEL_BOOK,
        },
        Row {
            figure: "simulated MTSR",
            value: format!("{:.1}", celsius(f.worst.max_temperature)),
            unit: "°C",
            formula: "max over failure times t_f in the feed window of the highest T after t_f, with U A = 0 and the decomposition off",
            inputs: format!(
                "worst t_f = {:.2} h; {dosing}; {} runs; followed {:.1} h",
                f.worst.failure_time / HOUR,
                f.worst.runs,
                p.failure_horizon / HOUR
            ),
            source: OWN_INTEGRATION,
        },
        Row {
            figure: "MTT",
            value: format!("{:.1}", celsius(f.mtt)),
            unit: "°C",
            formula: "given in the case: the boiling point at the operating pressure or the relief set point",
            inputs: "limits.mtt of the case file".to_string(),
            source: STOESSEL_BOOK,
        },
        Row {
            figure: "TD24",
            value: td24_text,
            unit: "°C",
            formula: "the temperature T at which TMRad(T) = 24 h",
            inputs: decomposition.clone(),
            source: TOWNSEND_TOU,
        },
        Row {
            figure: "TMRad at MTSR",
            value: fixed(f.tmr_ad_at_mtsr.map(|s| s / HOUR), 2),
            unit: "h",
            formula: "TMRad(T) = cp_final R T² / (q_d(T, α = 0) Ea_d), cp_final = C_final / m_final, at T = MTSR",
            inputs: format!("T = MTSR = {:.1} °C; {decomposition}", celsius(f.mtsr)),
            source: TOWNSEND_TOU,
        },
        Row {
            figure: "criticality class",
            value: f.class.map_or("—".to_string(), |c| c.to_string()),
            unit: "(-)",
            formula: "1: MTSR < MTT < TD24; 2: MTSR < TD24 ≤ MTT; 3: MTT ≤ MTSR < TD24; 4: MTT < TD24 ≤ MTSR; 5: TD24 ≤ MTSR and TD24 ≤ MTT",
            inputs: class_inputs(celsius(f.mtsr), a),
            source: STOESSEL_CLASSES,
        },
        Row {
            figure: "class with the simulated MTSR",
            value: f.class_simulated.map_or("—".to_string(), |c| c.to_string()),
            unit: "(-)",
            formula: "the same orderings with max(MTSR, simulated MTSR) in place of MTSR",
            inputs: class_inputs(celsius(f.mtsr.max(f.worst.max_temperature)), a),
            source: STOESSEL_CLASSES,
        },
        Row {
            figure: "final conversion",
            value: fixed(f.final_conversion.map(|x| 100.0 * x), 1),
            unit: "%",
            formula: "1 − n_i(end) / (n_i,charge + n_i,feed) of the first reaction's limiting reactant",
            inputs: format!(
                "reactant {}; end of normal operation at {:.2} h",
                f.conversion_species.as_deref().unwrap_or("—"),
                p.process_duration / HOUR
            ),
            source: OWN_INTEGRATION,
        },
        Row {
            figure: "max temperature, normal operation",
            value: format!("{:.1}", celsius(n.max_temperature)),
            unit: "°C",
            formula: "max over normal operation of T(t)",
            inputs: format!("at t = {:.2} h", n.max_temperature_time / HOUR),
            source: OWN_INTEGRATION,
        },
        Row {
            figure: "peak reaction power",
            value: format!("{:.1}", n.peak_reaction_power / 1e3),
            unit: "kW",
            formula: "max over normal operation of Σ_j (−ΔH_j) r_j V",
            inputs: format!("at t = {:.2} h", n.peak_time / HOUR),
            source: OWN_INTEGRATION,
        },
        Row {
            figure: "cooling at the peak",
            value: format!("{:.1}", n.cooling_at_peak / 1e3),
            unit: "kW",
            formula: "U A(h) (T − T_coolant) at the moment of the peak reaction power",
            inputs: format!("U = {:.0} W/(m² K); A(h) the jacketed wetted area", p.u),
            source: OWN_INTEGRATION,
        },
        Row {
            figure: "cooling capacity at Tp",
            value: format!("{:.1}", n.cooling_capacity_at_tp / 1e3),
            unit: "kW",
            formula: "U A(h) (Tp − T_cold) at the moment of the peak, T_cold the coldest the jacket can be",
            inputs: format!(
                "Tp = {:.1} °C; T_cold = {:.1} °C",
                celsius(p.process_temperature),
                celsius(p.coldest_coolant_temperature())
            ),
            source: OWN_INTEGRATION,
        },
    ];
    if matches!(p.jacket, Jacket::Hold { .. }) {
        rows.push(Row {
            figure: "coldest jacket, normal operation",
            value: format!("{:.1}", celsius(n.min_coolant_temperature)),
            unit: "°C",
            formula: "min over normal operation of the held jacket's temperature",
            inputs: "what holding Tp took".to_string(),
            source: OWN_INTEGRATION,
        });
    }
    rows
}

fn class_inputs(mtsr_c: f64, a: &Assessment) -> String {
    let f = &a.figures;
    match f.td24 {
        Some(td24) => format!(
            "MTSR = {mtsr_c:.1} °C, MTT = {:.1} °C, TD24 = {:.1} °C",
            celsius(f.mtt),
            celsius(td24)
        ),
        None => "no TD24 (no decomposition data): no class".to_string(),
    }
}

/// The full model from the worst failure time (decomposition on), and the off-gas.
pub fn after_failure_section(a: &Assessment) -> Option<Section> {
    let mut blocks = Vec::new();
    if let Some(r) = &a.runaway {
        blocks.push(Block::Paragraph(format!(
            "The full model (decomposition on, the case's dosing rule, interlock and boiling barrier) from the worst cooling failure at {:.2} h, followed for {:.1} h ({OWN_INTEGRATION}).",
            r.failure_time / HOUR,
            a.plant.failure_horizon / HOUR
        )));
        let mut rows = vec![
            vec![
                "maximum temperature".to_string(),
                format!("{:.1}", celsius(r.max_temperature)),
                "°C".to_string(),
                "highest T after the failure".to_string(),
            ],
            vec![
                "time to maximum rate".to_string(),
                format!("{:.2}", r.time_to_max_rate / HOUR),
                "h".to_string(),
                "from the failure to the fastest rise of T".to_string(),
            ],
            vec![
                "maximum rate of temperature rise".to_string(),
                rate_text(r.max_rate * 60.0),
                "K/min".to_string(),
                "largest dT/dt after the failure".to_string(),
            ],
            vec![
                "decomposition conversion".to_string(),
                format!("{:.1}", 100.0 * r.decomposition_conversion),
                "%".to_string(),
                "α at the end of the run".to_string(),
            ],
        ];
        if let Some(b) = &r.boiling {
            rows.push(vec![
                "boiling starts".to_string(),
                fixed(b.starts_after.map(|s| s / HOUR), 2),
                "h".to_string(),
                format!(
                    "after the failure, at {:.1} °C (— : does not boil)",
                    celsius(b.boiling_point)
                ),
            ]);
            rows.push(vec![
                "peak vapour rate".to_string(),
                format!("{:.0}", b.peak_vapour_rate_kg_h),
                "kg/h".to_string(),
                format!("{:.2} mol/s", b.peak_vapour_rate_mol_s),
            ]);
            let condenser = condenser_text(b);
            rows.push(vec![
                "peak heat to condense".to_string(),
                format!("{:.0}", b.peak_heat / 1e3),
                "kW".to_string(),
                condenser,
            ]);
        }
        blocks.push(Block::Table(Table {
            header: ["figure", "value", "unit", "basis"]
                .map(String::from)
                .to_vec(),
            rows,
            numeric: vec![1],
        }));
        if r.max_temperature > a.plant.mtt {
            blocks.push(Block::Paragraph(format!(
                "This run passes the MTT ({:.1} °C): above it the temperatures are what the heat would do if nothing took it out; once the vessel would boil, vent or burst they have no physical meaning (SAFETY.md).",
                celsius(a.plant.mtt)
            )));
        }
    }
    if !a.normal_off_gas.is_empty() {
        blocks.push(Block::Subheading("Off-gas, peak rates".to_string()));
        let rows = a
            .normal_off_gas
            .iter()
            .map(|normal| {
                let failure = a
                    .runaway
                    .as_ref()
                    .and_then(|r| r.off_gas.iter().find(|p| p.species == normal.species));
                vec![
                    normal.species.clone(),
                    format!(
                        "{:.1} kg/h ({:.3} mol/s)",
                        normal.peak_kg_h, normal.peak_mol_s
                    ),
                    failure.map_or("—".to_string(), |p| {
                        format!("{:.1} kg/h ({:.3} mol/s)", p.peak_kg_h, p.peak_mol_s)
                    }),
                ]
            })
            .collect();
        blocks.push(Block::Table(Table {
            header: ["species", "normal operation", "after the worst failure"]
                .map(String::from)
                .to_vec(),
            rows,
            numeric: vec![],
        }));
    }
    (!blocks.is_empty()).then(|| Section {
        id: "after-failure",
        heading: "After the worst cooling failure".to_string(),
        new_page: false,
        blocks,
    })
}

/// A rate of temperature rise, K/min, with about three significant digits.
fn rate_text(k_per_min: f64) -> String {
    match k_per_min.abs() {
        r if r >= 100.0 => format!("{k_per_min:.0}"),
        r if r >= 1.0 => format!("{k_per_min:.2}"),
        _ => format!("{k_per_min:.3}"),
    }
}
