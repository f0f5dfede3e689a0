//! The reaction network in numbers: species, stoichiometry, rate laws, and the releasable
//! heat of a set of amounts (a small linear programme; closed form for one reaction).

use crate::case::Case;
use microlp::{ComparisonOp, OptimizationDirection, Problem};
use uom::si::{
    molar_energy::joule_per_mole, molar_mass::kilogram_per_mole, thermodynamic_temperature::kelvin,
};

/// Molar gas constant, J/(mol K) (CODATA 2018, exact).
pub const GAS_CONSTANT: f64 = 8.314462618;

/// One reaction's rate law and heat, in SI.
#[derive(Debug, Clone)]
pub struct RateLaw {
    /// Net stoichiometric coefficient of every species (negative for reactants).
    pub nu: Vec<f64>,
    /// (species index, order) of each concentration in the rate.
    pub orders: Vec<(usize, f64)>,
    /// Heat released per mole of reaction as written, J/mol (-dH).
    pub heat_of_reaction: f64,
    /// Rate constant at the reference temperature, (m^3/mol)^(n-1)/s.
    pub k_ref: f64,
    pub reference_temperature: f64,
    pub activation_energy: f64,
}

impl RateLaw {
    /// Arrhenius rate constant at `temperature` (K), in reference-temperature form.
    pub fn rate_constant(&self, temperature: f64) -> f64 {
        arrhenius(
            self.k_ref,
            self.activation_energy,
            self.reference_temperature,
            temperature,
        )
    }
}

/// k_ref exp(-(Ea/R)(1/T - 1/T_ref)), with the exponent held below overflow.
pub fn arrhenius(
    k_ref: f64,
    activation_energy: f64,
    reference_temperature: f64,
    temperature: f64,
) -> f64 {
    let exponent =
        -(activation_energy / GAS_CONSTANT) * (1.0 / temperature - 1.0 / reference_temperature);
    k_ref * exponent.min(700.0).exp()
}

/// Species and reactions of a case, indexed for the model.
#[derive(Debug, Clone)]
pub struct Network {
    pub species: Vec<String>,
    /// Leaves the liquid as soon as it forms.
    pub gas: Vec<bool>,
    /// kg/mol; 0 where not given.
    pub molar_mass: Vec<f64>,
    pub reactions: Vec<RateLaw>,
}

impl Network {
    pub fn from_case(case: &Case) -> Network {
        let mut species: Vec<String> = Vec::new();
        let mut add = |name: &str| {
            if !species.iter().any(|s| s == name) {
                species.push(name.to_string());
            }
        };
        for reaction in &case.reactions {
            reaction.equation.species().into_iter().for_each(&mut add);
        }
        for name in case.charge.amounts.keys() {
            add(name);
        }
        if let Some(feed) = &case.feed {
            feed.amounts.keys().for_each(|n| add(n));
        }
        let data = |name: &String| case.species.get(name);
        let gas = species
            .iter()
            .map(|n| data(n).is_some_and(|d| d.gas))
            .collect();
        let molar_mass = species
            .iter()
            .map(|n| {
                data(n)
                    .and_then(|d| d.molar_mass)
                    .map_or(0.0, |m| m.get::<kilogram_per_mole>())
            })
            .collect();
        let index = |name: &str| species.iter().position(|s| s == name).unwrap_or(0);
        let reactions = case
            .reactions
            .iter()
            .map(|r| RateLaw {
                nu: species
                    .iter()
                    .map(|s| r.equation.net_coefficient(s))
                    .collect(),
                orders: r
                    .orders
                    .iter()
                    .map(|(name, order)| (index(name), *order))
                    .collect(),
                heat_of_reaction: -r.enthalpy.get::<joule_per_mole>(),
                k_ref: r.rate_constant.si_value,
                reference_temperature: r.reference_temperature.get::<kelvin>(),
                activation_energy: r.activation_energy.get::<joule_per_mole>(),
            })
            .collect();
        Network {
            species,
            gas,
            molar_mass,
            reactions,
        }
    }

    pub fn species_count(&self) -> usize {
        self.species.len()
    }

    pub fn index_of(&self, name: &str) -> Option<usize> {
        self.species.iter().position(|s| s == name)
    }

    /// Heat the amounts `n` (mol, by species) can still release, J.
    pub fn releasable_heat(&self, n: &[f64]) -> f64 {
        match self.reactions.as_slice() {
            [single] => single_reaction_heat(single, n, &self.gas),
            _ => network_heat(self, n).unwrap_or(f64::INFINITY),
        }
    }
}

/// max(0, -dH) times the extent the scarcest reactant allows.
fn single_reaction_heat(law: &RateLaw, n: &[f64], gas: &[bool]) -> f64 {
    if law.heat_of_reaction <= 0.0 {
        return 0.0;
    }
    let extent = law
        .nu
        .iter()
        .zip(n)
        .zip(gas)
        .filter(|((nu, _), is_gas)| **nu < 0.0 && !**is_gas)
        .map(|((nu, amount), _)| amount.max(0.0) / -nu)
        .fold(f64::INFINITY, f64::min);
    if extent.is_finite() {
        law.heat_of_reaction * extent
    } else {
        0.0
    }
}

/// The linear programme: maximise sum (-dH_j) xi_j, xi >= 0, n_i + sum_j nu_ij xi_j >= 0.
/// Extents are solved in units of `scale` moles to keep the coefficients near one.
fn network_heat(network: &Network, n: &[f64]) -> Result<f64, microlp::Error> {
    let scale = n.iter().fold(0.0_f64, |a, b| a.max(b.abs())).max(1e-300);
    let heat_scale = network
        .reactions
        .iter()
        .fold(0.0_f64, |a, r| a.max(r.heat_of_reaction.abs()))
        .max(1e-300);
    let mut problem = Problem::new(OptimizationDirection::Maximize);
    let extents: Vec<_> = network
        .reactions
        .iter()
        .map(|r| problem.add_var(r.heat_of_reaction / heat_scale, (0.0, f64::INFINITY)))
        .collect();
    for (i, amount) in n.iter().enumerate() {
        if network.gas[i] {
            continue;
        }
        let row: Vec<_> = network
            .reactions
            .iter()
            .zip(&extents)
            .filter(|(r, _)| r.nu[i] != 0.0)
            .map(|(r, x)| (*x, -r.nu[i]))
            .collect();
        if !row.is_empty() {
            problem.add_constraint(&row, ComparisonOp::Le, amount.max(0.0) / scale);
        }
    }
    let objective = match problem.solve()?.into_solution() {
        Ok(solution) => solution.objective(),
        // No limit is set, so an interrupted solve does not happen; count it as no heat found
        // only after the caller's closed-form checks (a single reaction never gets here).
        Err(_) => {
            return Err(microlp::Error::InternalError(
                "interrupted solve".to_string(),
            ));
        }
    };
    Ok((objective * heat_scale * scale).max(0.0))
}

/// False when some set of extents releases heat without limit (a cycle of exothermic reactions).
pub fn releasable_heat_is_bounded(network: &Network) -> bool {
    if network.reactions.len() < 2 {
        return true;
    }
    let unit = vec![1.0; network.species_count()];
    !matches!(network_heat(network, &unit), Err(microlp::Error::Unbounded))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn law(nu: Vec<f64>, heat: f64) -> RateLaw {
        RateLaw {
            nu,
            orders: vec![],
            heat_of_reaction: heat,
            k_ref: 1.0,
            reference_temperature: 300.0,
            activation_energy: 0.0,
        }
    }

    fn network(reactions: Vec<RateLaw>, species: usize) -> Network {
        Network {
            species: (0..species).map(|i| format!("S{i}")).collect(),
            gas: vec![false; species],
            molar_mass: vec![0.0; species],
            reactions,
        }
    }

    #[test]
    fn single_reaction_closed_form_takes_the_scarcest_reactant() {
        // 2 A + B -> P, -dH 100 kJ/mol: 10 mol A and 8 mol B allow 5 mol of reaction (model.md).
        let net = network(vec![law(vec![-2.0, -1.0, 1.0], 1e5)], 3);
        assert!((net.releasable_heat(&[10.0, 8.0, 0.0]) - 5e5).abs() < 1e-6);
        let endo = network(vec![law(vec![-1.0, 1.0], -1e5)], 2);
        assert_eq!(endo.releasable_heat(&[1.0, 0.0]), 0.0);
    }

    #[test]
    fn consecutive_reactions_count_both_steps() {
        // A + B -> P (100 kJ/mol), P + B -> P2 (50 kJ/mol); 1 mol A, 2 mol B: both steps, 150 kJ.
        let net = network(
            vec![
                law(vec![-1.0, -1.0, 1.0, 0.0], 1e5),
                law(vec![0.0, -1.0, -1.0, 1.0], 5e4),
            ],
            4,
        );
        let q = net.releasable_heat(&[1.0, 2.0, 0.0, 0.0]);
        assert!((q - 1.5e5).abs() < 1e-3 * 1.5e5, "{q}");
        // With only 1 mol B the first step is worth more.
        let q = net.releasable_heat(&[1.0, 1.0, 0.0, 0.0]);
        assert!((q - 1e5).abs() < 1e-3 * 1e5, "{q}");
    }

    #[test]
    fn an_exothermic_cycle_is_unbounded() {
        let cycle = network(
            vec![law(vec![-1.0, 1.0], 1e5), law(vec![1.0, -1.0], 1e5)],
            2,
        );
        assert!(!releasable_heat_is_bounded(&cycle));
        let fine = network(
            vec![law(vec![-1.0, 1.0], 1e5), law(vec![1.0, -1.0], -1e5)],
            2,
        );
        assert!(releasable_heat_is_bounded(&fine));
    }
}
