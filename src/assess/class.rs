//! Criticality class (Stoessel) from the order of MTSR, MTT and TD24, with its meaning.

/// Class 1..=5 by the orderings of model.md:
/// 1 MTSR < MTT < TD24; 2 MTSR < TD24 <= MTT; 3 MTT <= MTSR < TD24; 4 MTT < TD24 <= MTSR;
/// 5 TD24 <= MTSR and TD24 <= MTT.
pub fn criticality_class(mtsr: f64, mtt: f64, td24: f64) -> u8 {
    if td24 <= mtsr && td24 <= mtt {
        5
    } else if mtsr < mtt {
        if mtt < td24 { 1 } else { 2 }
    } else if mtsr < td24 {
        3
    } else {
        4
    }
}

/// What a class means for the plant, in plain words (common interpretation of the scale).
pub fn class_meaning(class: u8) -> &'static str {
    match class {
        1 => {
            "A cooling failure reaches neither the maximum technical temperature nor the decomposition; no special measures beyond good practice. Avoid long hold times under heat accumulation, which could still take the mass to the MTT."
        }
        2 => {
            "A cooling failure does not reach the MTT or trigger the decomposition, but TD24 lies below the MTT: if the mass is held long at MTSR, the decomposition can start and nothing stops it before the MTT. Acceptable if long holds under heat accumulation are avoided."
        }
        3 => {
            "A cooling failure reaches the MTT (boiling or relief) before the decomposition can start. Safety rests on evaporative cooling or relief: the condenser and vapour line, or the relief system, must be sized for the vapour rate at the MTT."
        }
        4 => {
            "A cooling failure reaches the MTT, and beyond it TD24 lies below MTSR: if evaporative cooling or relief fails, the decomposition follows. Technical measures at the MTT are mandatory and must be proven adequate."
        }
        5 => {
            "The decomposition is triggered before the MTT can act as a barrier. The most critical class: change the process (less accumulation or concentration) or provide emergency measures (quench, dump)."
        }
        _ => "no class",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The five orderings of Stoessel's scale, as tabled in
    /// shared/reference/methods-and-check-values.md §1 (decision logic derived there).
    #[test]
    fn each_ordering_gives_its_class() {
        assert_eq!(criticality_class(100.0, 110.0, 130.0), 1); // MTSR < MTT < TD24
        assert_eq!(criticality_class(100.0, 130.0, 110.0), 2); // MTSR < TD24 < MTT
        assert_eq!(criticality_class(120.0, 110.0, 130.0), 3); // MTT < MTSR < TD24
        assert_eq!(criticality_class(140.0, 110.0, 130.0), 4); // MTT < TD24 < MTSR
        assert_eq!(criticality_class(120.0, 130.0, 110.0), 5); // TD24 < MTSR < MTT
        assert_eq!(criticality_class(140.0, 130.0, 110.0), 5); // TD24 < MTT < MTSR
    }

    #[test]
    fn ties_fall_as_the_contract_writes_them() {
        assert_eq!(criticality_class(100.0, 110.0, 110.0), 2); // TD24 <= MTT
        assert_eq!(criticality_class(110.0, 110.0, 130.0), 3); // MTT <= MTSR
        assert_eq!(criticality_class(130.0, 110.0, 130.0), 4); // TD24 <= MTSR
    }

    /// The self-made check case of the reference (§11): MTSR 97.5, MTT 110.6, TD24 72.5 -> 5;
    /// TD24 101.0 -> 2.
    #[test]
    fn reference_check_case() {
        assert_eq!(criticality_class(97.5, 110.6, 72.5), 5);
        assert_eq!(criticality_class(97.5, 110.6, 101.0), 2);
    }
}
