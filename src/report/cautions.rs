//! The cautions every report carries (SAFETY.md states them in full).

pub const CAUTIONS: [&str; 5] = [
    "Screening only: these figures come from a simplified model of a well-stirred vessel and the data in the case file; they are not a safety assessment on their own.",
    "Confirm every input and figure by calorimetry (reaction calorimetry, DSC/ARC) on the real reaction mass before any decision.",
    "The results must be reviewed by competent people licensed or qualified for process-safety work in your jurisdiction.",
    "Local codes, regulations and company standards prevail over anything this tool prints.",
    "See SAFETY.md for what the models assume and leave out (no vapour pressure, no mixing limits, no autocatalysis beyond the given kinetics).",
];
