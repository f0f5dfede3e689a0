//! Checking `scale_up`: the nominal volumes of the similar vessels the case asks for (each a
//! positive volume with its unit, one to `MAX_VOLUMES`) and the impeller's speed rule.

use super::{Checker, Kind, VOLUME, quoted};
use crate::case::ScaleUp;
use crate::case::schema::RawScaleUp;
use crate::model::film::SpeedRule;
use uom::si::{f64::Volume, volume::cubic_meter};

const BASE: &str = "scale_up";

/// At most this many scales (each is a full screening computation on its own thread).
pub const MAX_VOLUMES: usize = 12;

const SCALE_VOLUME: Kind = Kind {
    example: "100 L",
    ..VOLUME
};

const VOLUMES_EXAMPLE: &str = "[1 L, 100 L, 1 m^3, 4 m^3, 16 m^3]";

/// The words of `speed_rule` (a hyphen is read as an underscore, as the command line writes it).
const SPEED_RULES: [(&str, SpeedRule); 2] = [
    ("power_per_volume", SpeedRule::PowerPerVolume),
    ("tip_speed", SpeedRule::TipSpeed),
];

impl Checker<'_> {
    /// The keys of `scale_up` are reported unknown by `all_unknown_keys`.
    pub(super) fn scale_up(&mut self, raw: &RawScaleUp) -> Option<ScaleUp> {
        let volumes = self.scale_volumes(raw.volumes.as_deref());
        let speed_rule = self.speed_rule(raw);
        Some(ScaleUp {
            volumes: volumes?,
            speed_rule: speed_rule?,
        })
    }

    fn scale_volumes(&mut self, raw: Option<&[super::Scalar]>) -> Option<Vec<Volume>> {
        let path = format!("{BASE}.volumes");
        let raw = self.required(&path, raw, VOLUMES_EXAMPLE)?;
        if raw.is_empty() || raw.len() > MAX_VOLUMES {
            let found = if raw.is_empty() {
                "the list of volumes is empty".to_string()
            } else {
                format!("{} volumes are given, more than {MAX_VOLUMES}", raw.len())
            };
            self.error(
                &path,
                found,
                format!("1 to {MAX_VOLUMES} volumes with units, e.g. {VOLUMES_EXAMPLE}"),
            );
            return None;
        }
        let mut volumes = Vec::new();
        let mut ok = true;
        for (index, scalar) in raw.iter().enumerate() {
            match self.parse(&format!("{path}[{index}]"), scalar, SCALE_VOLUME) {
                Some(v) => volumes.push(Volume::new::<cubic_meter>(v)),
                None => ok = false,
            }
        }
        ok.then_some(volumes)
    }

    fn speed_rule(&mut self, raw: &RawScaleUp) -> Option<SpeedRule> {
        let path = format!("{BASE}.speed_rule");
        let Some(scalar) = raw.speed_rule.as_ref() else {
            return Some(SpeedRule::PowerPerVolume);
        };
        let text = self
            .single(&path, scalar, SPEED_RULES[0].0)?
            .trim()
            .replace('-', "_");
        let found = SPEED_RULES
            .iter()
            .find(|(word, _)| *word == text)
            .map(|(_, rule)| *rule);
        if found.is_none() {
            self.error(
                &path,
                format!("{} is not a choice here", quoted(&scalar.0)),
                "one of power_per_volume (the default), tip_speed",
            );
        }
        found
    }
}
