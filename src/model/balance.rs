//! The heat and mass balance of the stirred contents: state layout, the right-hand side of
//! the ODE system, and the derived quantities (volume, area, powers) at any state.

use super::plant::{Jacket, Plant};

/// Time over which the held jacket brings T back to Tp, s (with an ideal jacket).
const HOLD_CORRECTION_TIME: f64 = 60.0;

/// What is switched on over one stretch of time between discontinuities.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Phase {
    pub feed_on: bool,
    pub cooling_on: bool,
    pub decomposition_on: bool,
    /// Start of the stretch, s, and the mass fed by then, kg.
    pub t_start: f64,
    pub fed_at_start: f64,
    /// The dosing interlock holds the feed (T went above its set point).
    pub feed_interlocked: bool,
    /// Time the feed has been held by the interlock before this stretch, s (it moves the
    /// planned end of the feed later by as much).
    pub feed_delay: f64,
    /// The contents boil at the solvent's boiling point: T stays, the excess heat evaporates.
    pub boiling: bool,
    /// The decomposition has run to completion and is switched off (its burnt-out tail is
    /// stiff): fresh feed then decomposes as it enters, at the temperature reached.
    pub decomposition_spent: bool,
}

impl Phase {
    /// The phase at the start of a run: feed as given, cooling on, decomposition as given.
    pub fn at_start(t_start: f64, feed_on: bool, decomposition_on: bool) -> Phase {
        Phase {
            feed_on,
            cooling_on: true,
            decomposition_on,
            t_start,
            fed_at_start: 0.0,
            feed_interlocked: false,
            feed_delay: 0.0,
            boiling: false,
            decomposition_spent: false,
        }
    }
}

/// Positions in the state vector: T, the species (gas species: moles formed so far),
/// decomposition conversion, cumulative reaction heat and decomposition heat (J).
#[derive(Debug, Clone, Copy)]
pub struct Layout {
    pub species: usize,
}

impl Layout {
    pub const TEMPERATURE: usize = 0;
    pub fn amount(&self, i: usize) -> usize {
        1 + i
    }
    pub fn alpha(&self) -> usize {
        1 + self.species
    }
    pub fn reaction_heat(&self) -> usize {
        2 + self.species
    }
    pub fn decomposition_heat(&self) -> usize {
        3 + self.species
    }
    /// Jacket temperature (a state of its own when it follows its set value with a lag).
    pub fn jacket(&self) -> usize {
        4 + self.species
    }
    pub fn state_len(&self) -> usize {
        5 + self.species
    }
}

/// Everything that follows from a state at a time in a phase.
#[derive(Debug, Clone, Default)]
pub struct Snapshot {
    pub time: f64,
    pub temperature: f64,
    pub fed_mass: f64,
    pub volume: f64,
    pub level: f64,
    pub cooled_area: f64,
    pub mass: f64,
    pub heat_capacity: f64,
    pub gas_mass: f64,
    /// W
    pub reaction_power: f64,
    pub decomposition_power: f64,
    pub cooling_power: f64,
    /// Heat lost to the surroundings in normal operation, W (zero without `ambient`).
    pub ambient_power: f64,
    /// The jacket temperature, K.
    pub coolant_temperature: f64,
    pub feed_sensible_power: f64,
    /// While boiling: the heat that goes into evaporation, W, and the vapour rate, mol/s.
    pub evaporation_power: f64,
    pub vapour_rate: f64,
    /// kg/s of all gas species leaving
    pub off_gas_rate: f64,
    pub alpha: f64,
}

impl Plant {
    pub fn layout(&self) -> Layout {
        Layout {
            species: self.network.species_count(),
        }
    }

    /// The state at t = 0: Tp, the charge, nothing decomposed, nothing released.
    pub fn initial_state(&self) -> Vec<f64> {
        let layout = self.layout();
        let mut x = vec![0.0; layout.state_len()];
        x[Layout::TEMPERATURE] = self.process_temperature;
        for (i, n) in self.charge.amounts.iter().enumerate() {
            x[layout.amount(i)] = *n;
        }
        x[layout.jacket()] = self.initial_jacket_temperature(&x);
        x
    }

    /// The phase at t = 0 of normal operation.
    pub fn initial_phase(&self) -> Phase {
        let feed_on = self.feed.as_ref().is_some_and(|f| f.is_on_at(0.0));
        Phase::at_start(0.0, feed_on, self.decomposition.is_some())
    }

    fn initial_jacket_temperature(&self, x: &[f64]) -> f64 {
        match self.jacket {
            Jacket::Constant(t) => t,
            Jacket::Hold { initial, .. } if initial.is_finite() => initial,
            Jacket::Hold { .. } => {
                let mut rates = vec![0.0; self.network.reactions.len()];
                let s = self.snapshot_with(&self.initial_phase(), 0.0, x, &mut rates, true);
                self.jacket_set_value(&s)
            }
        }
    }

    /// The jacket temperature that holds Tp: feed-forward of the heat released and taken by
    /// the feed, plus a proportional correction that brings T back to Tp over
    /// `HOLD_CORRECTION_TIME` (or twice the jacket lag, if longer); clipped to the range.
    fn jacket_set_value(&self, s: &Snapshot) -> f64 {
        let Jacket::Hold {
            minimum,
            maximum,
            lag,
            ..
        } = self.jacket
        else {
            return s.coolant_temperature;
        };
        let ua = self.u * s.cooled_area;
        if ua <= 0.0 {
            return minimum;
        }
        let correction_time = HOLD_CORRECTION_TIME.max(2.0 * lag);
        let heat_in = s.reaction_power + s.decomposition_power + s.feed_sensible_power;
        let correction =
            s.heat_capacity * (s.temperature - self.process_temperature) / correction_time;
        (s.temperature - (heat_in + correction) / ua).clamp(minimum, maximum)
    }

    pub fn fed_mass(&self, phase: &Phase, t: f64) -> f64 {
        match (&self.feed, phase.feed_on) {
            (Some(feed), true) => {
                phase.fed_at_start + feed.mass_rate() * (t - phase.t_start).max(0.0)
            }
            _ => phase.fed_at_start,
        }
    }

    pub fn gas_mass(&self, x: &[f64]) -> f64 {
        let layout = self.layout();
        let net = &self.network;
        (0..net.species_count())
            .filter(|i| net.gas[*i])
            .map(|i| x[layout.amount(i)] * net.molar_mass[i])
            .sum()
    }

    /// Reaction rates r_j, mol/(m^3 s), at temperature T and volume V.
    pub fn reaction_rates(&self, temperature: f64, volume: f64, x: &[f64], rates: &mut [f64]) {
        let layout = self.layout();
        for (rate, law) in rates.iter_mut().zip(&self.network.reactions) {
            let mut r = law.rate_constant(temperature);
            for &(i, order) in &law.orders {
                let concentration = if self.network.gas[i] {
                    0.0
                } else {
                    x[layout.amount(i)].max(0.0) / volume
                };
                r *= concentration_power(concentration, order);
            }
            *rate = r;
        }
    }

    /// Volume, mass, heat capacity and the powers at state x.
    pub fn snapshot(&self, phase: &Phase, t: f64, x: &[f64]) -> Snapshot {
        let mut rates = vec![0.0; self.network.reactions.len()];
        let mut s = self.snapshot_with(phase, t, x, &mut rates, true);
        s.level = self.geometry.level(s.volume);
        s
    }

    /// The snapshot; `with_area` false skips the wetted area where no cooling needs it (the
    /// right-hand side after a cooling failure).
    fn snapshot_with(
        &self,
        phase: &Phase,
        t: f64,
        x: &[f64],
        rates: &mut [f64],
        with_area: bool,
    ) -> Snapshot {
        let layout = self.layout();
        let temperature = x[Layout::TEMPERATURE];
        let fed_mass = self.fed_mass(phase, t);
        let (feed_cp, feed_rho, feed_t, feed_rate) = match &self.feed {
            Some(f) => (
                f.stream.specific_heat,
                f.stream.density,
                f.temperature,
                if phase.feed_on { f.mass_rate() } else { 0.0 },
            ),
            None => (0.0, 1.0, 0.0, 0.0),
        };
        let volume = self.charge.mass / self.charge.density + fed_mass / feed_rho;
        let gas_mass = self.gas_mass(x);
        let mass = self.charge.mass + fed_mass - gas_mass;
        let heat_capacity = self.charge.mass * self.charge.specific_heat + fed_mass * feed_cp
            - gas_mass * self.charge.specific_heat
            + self.vessel_heat_capacity;
        self.reaction_rates(temperature, volume, x, rates);
        let reaction_power: f64 = rates
            .iter()
            .zip(&self.network.reactions)
            .map(|(r, law)| law.heat_of_reaction * r * volume)
            .sum();
        let off_gas_rate = self.off_gas_rate(rates, volume);
        let alpha = x[layout.alpha()];
        let decomposition_power = match (&self.decomposition, phase.decomposition_on) {
            (Some(d), true) => mass * d.rate(temperature, alpha),
            (Some(d), false) if phase.decomposition_spent => feed_rate * d.energy,
            _ => 0.0,
        };
        let cooled_area = if with_area || phase.cooling_on {
            self.geometry.jacketed_area(volume, self.jacket_height)
        } else {
            0.0
        };
        let mut s = Snapshot {
            time: t,
            temperature,
            fed_mass,
            volume,
            level: f64::NAN,
            cooled_area,
            mass,
            heat_capacity,
            gas_mass,
            reaction_power,
            decomposition_power,
            cooling_power: 0.0,
            ambient_power: 0.0,
            coolant_temperature: f64::NAN,
            feed_sensible_power: feed_rate * feed_cp * (feed_t - temperature),
            evaporation_power: 0.0,
            vapour_rate: 0.0,
            off_gas_rate,
            alpha,
        };
        s.coolant_temperature = match self.jacket {
            Jacket::Constant(t) => t,
            Jacket::Hold { lag, .. } if lag > 0.0 => x[layout.jacket()],
            Jacket::Hold { .. } => self.jacket_set_value(&s),
        };
        if phase.cooling_on {
            s.cooling_power = self.u * cooled_area * (temperature - s.coolant_temperature);
            if let Some(ambient) = &self.ambient {
                s.ambient_power = ambient.conductance * (temperature - ambient.temperature);
            }
        }
        if let (Some(barrier), true) = (&self.boiling, phase.boiling) {
            s.evaporation_power = s.net_heat_without_evaporation();
            s.vapour_rate = s.evaporation_power / barrier.heat_of_vaporisation;
        }
        s
    }

    /// Formation rate of each gas species (index, mol/s) from the reaction rates.
    fn gas_formation<'a>(
        &'a self,
        rates: &'a [f64],
        volume: f64,
    ) -> impl Iterator<Item = (usize, f64)> + 'a {
        let net = &self.network;
        (0..net.species_count())
            .filter(|i| net.gas[*i])
            .map(move |i| {
                let formed: f64 = rates
                    .iter()
                    .zip(&net.reactions)
                    .map(|(r, law)| law.nu[i] * r)
                    .sum();
                (i, formed * volume)
            })
    }

    fn off_gas_rate(&self, rates: &[f64], volume: f64) -> f64 {
        self.gas_formation(rates, volume)
            .map(|(i, n)| n * self.network.molar_mass[i])
            .sum()
    }

    /// Formation rate of each gas species at state x, mol/s (index into the species list).
    pub fn gas_formation_rates(&self, phase: &Phase, t: f64, x: &[f64]) -> Vec<(usize, f64)> {
        let volume = self.snapshot(phase, t, x).volume;
        let mut rates = vec![0.0; self.network.reactions.len()];
        self.reaction_rates(x[Layout::TEMPERATURE], volume, x, &mut rates);
        self.gas_formation(&rates, volume).collect()
    }

    /// dT/dt at state x, K/s: the net heat flow over the heat capacity.
    pub fn temperature_rate(&self, phase: &Phase, t: f64, x: &[f64]) -> f64 {
        let s = self.snapshot(phase, t, x);
        s.net_heat() / s.heat_capacity
    }

    /// dx/dt of the balance (model.md): species, energy, decomposition conversion.
    pub fn derivatives(&self, phase: &Phase, t: f64, x: &[f64], dx: &mut [f64], rates: &mut [f64]) {
        let layout = self.layout();
        let s = self.snapshot_with(phase, t, x, rates, false);
        let feed = self.feed.as_ref().filter(|_| phase.feed_on);
        for i in 0..self.network.species_count() {
            let reacted: f64 = rates
                .iter()
                .zip(&self.network.reactions)
                .map(|(r, law)| law.nu[i] * r)
                .sum::<f64>()
                * s.volume;
            let fed = feed.map_or(0.0, |f| f.stream.amounts[i] / f.duration);
            dx[layout.amount(i)] = reacted + fed;
        }
        dx[Layout::TEMPERATURE] = s.net_heat() / s.heat_capacity;
        dx[layout.jacket()] = match self.jacket {
            Jacket::Hold { lag, .. } if lag > 0.0 && phase.cooling_on => {
                (self.jacket_set_value(&s) - s.coolant_temperature) / lag
            }
            _ => 0.0,
        };
        let feed_rate = feed.map_or(0.0, |f| f.mass_rate());
        dx[layout.alpha()] = match (&self.decomposition, phase.decomposition_on) {
            (Some(d), true) => {
                s.decomposition_power / s.mass / d.energy - s.alpha * feed_rate / s.mass
            }
            (Some(_), false) if phase.decomposition_spent => 0.0,
            _ => -s.alpha * feed_rate / s.mass,
        };
        dx[layout.reaction_heat()] = s.reaction_power;
        dx[layout.decomposition_heat()] = s.decomposition_power;
    }
}

impl Snapshot {
    /// Heat into the contents before any evaporation, W.
    pub fn net_heat_without_evaporation(&self) -> f64 {
        let net = self.reaction_power + self.decomposition_power - self.cooling_power
            + self.feed_sensible_power;
        // Subtracted only where there is a loss, so that without one nothing changes.
        if self.ambient_power != 0.0 {
            net - self.ambient_power
        } else {
            net
        }
    }

    /// Heat that changes the contents' temperature, W: none while boiling.
    pub fn net_heat(&self) -> f64 {
        self.net_heat_without_evaporation() - self.evaporation_power
    }
}

/// c^order with c^0 = 1 (also for c = 0).
fn concentration_power(concentration: f64, order: f64) -> f64 {
    if order == 0.0 {
        1.0
    } else if order == 1.0 {
        concentration
    } else if order == 2.0 {
        concentration * concentration
    } else {
        concentration.powf(order)
    }
}
