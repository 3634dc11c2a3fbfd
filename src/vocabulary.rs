//! The landmark vocabulary of gravline (docs/DESIGN.md 4): anatomical landmarks named by ISB and
//! anthropometric terms, and the joint centers and derived points the body model computes.
//!
//! Sided names carry an `l_` / `r_` prefix; tables name sided endpoints by their stem
//! (`hip_jc`), and the body model adds the prefix of the side it builds.

/// Whether a landmark exists once per side or once per body.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Sidedness {
    /// `l_<stem>` and `r_<stem>`.
    Sided,
    /// One point, named by its stem.
    Single,
}

/// How the body model obtains a point when the trial does not give it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Origin {
    /// Measured by a marker (or defined in `[virtual]`).
    Marker,
    /// Computed by a joint-center method or as a midpoint; a marker of the same name overrides.
    Derived,
}

/// One entry of the vocabulary.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LandmarkInfo {
    pub stem: &'static str,
    pub sidedness: Sidedness,
    pub origin: Origin,
    pub description: &'static str,
}

const fn sided(stem: &'static str, description: &'static str) -> LandmarkInfo {
    LandmarkInfo {
        stem,
        sidedness: Sidedness::Sided,
        origin: Origin::Marker,
        description,
    }
}
const fn single(stem: &'static str, description: &'static str) -> LandmarkInfo {
    LandmarkInfo {
        stem,
        sidedness: Sidedness::Single,
        origin: Origin::Marker,
        description,
    }
}
const fn derived(
    stem: &'static str,
    sidedness: Sidedness,
    description: &'static str,
) -> LandmarkInfo {
    LandmarkInfo {
        stem,
        sidedness,
        origin: Origin::Derived,
        description,
    }
}

/// Every landmark and derived point gravline knows, in the order `gravline landmarks` prints them.
pub const VOCABULARY: &[LandmarkInfo] = &[
    sided("asis", "anterior superior iliac spine"),
    sided("psis", "posterior superior iliac spine"),
    single("sacrum", "one sacral marker (instead of the two PSIS)"),
    sided("knee_lat", "lateral femoral epicondyle"),
    sided("knee_med", "medial femoral epicondyle"),
    sided("ankle_lat", "lateral malleolus"),
    sided("ankle_med", "medial malleolus"),
    sided("heel", "calcaneus, posterior (pternion)"),
    sided("toe", "tip of the longest toe (acropodion)"),
    sided("mt1", "1st metatarsal head"),
    sided("mt2", "2nd metatarsal head"),
    sided("mt5", "5th metatarsal head"),
    single("c7", "C7 spinous process (cervicale)"),
    single("t8", "T8 spinous process"),
    single("jugular", "jugular notch (suprasternale)"),
    single("xiphoid", "xiphoid process (xiphion)"),
    single("omphalion", "center of the navel"),
    single("head_top", "vertex, top of the head"),
    single(
        "mid_gonion",
        "midpoint of the two gonia (angles of the jaw)",
    ),
    sided("head_front", "front head marker (temple)"),
    sided("head_back", "back head marker"),
    sided("acromion", "acromion"),
    sided("elbow_lat", "lateral humeral epicondyle"),
    sided("elbow_med", "medial humeral epicondyle"),
    sided("wrist_rad", "radial styloid (stylion)"),
    sided("wrist_uln", "ulnar styloid"),
    sided(
        "wrist",
        "one dorsal wrist marker (instead of the two styloids)",
    ),
    sided("hand", "head of the 3rd metacarpal (metacarpale III)"),
    sided("finger_tip", "tip of the middle finger (dactylion III)"),
    derived(
        "hip_jc",
        Sidedness::Sided,
        "hip joint center (regression in the pelvis frame)",
    ),
    derived(
        "knee_jc",
        Sidedness::Sided,
        "knee joint center (epicondyle midpoint)",
    ),
    derived(
        "ankle_jc",
        Sidedness::Sided,
        "ankle joint center (malleolus midpoint)",
    ),
    derived(
        "shoulder_jc",
        Sidedness::Sided,
        "shoulder (glenohumeral) joint center",
    ),
    derived(
        "elbow_jc",
        Sidedness::Sided,
        "elbow joint center (epicondyle midpoint)",
    ),
    derived(
        "wrist_jc",
        Sidedness::Sided,
        "wrist joint center (styloid midpoint)",
    ),
    derived(
        "mid_hip",
        Sidedness::Single,
        "midpoint of the two hip joint centers",
    ),
    derived(
        "mid_shoulder",
        Sidedness::Single,
        "midpoint of the two shoulder joint centers",
    ),
    derived(
        "cervical_jc",
        Sidedness::Single,
        "cervical joint center, C7/T1 (from C7 and the jugular notch; Dumas 2007)",
    ),
    derived(
        "lumbar_jc",
        Sidedness::Single,
        "lumbar joint center, L5/S1 (in the pelvis frame; Dumas 2007)",
    ),
    derived(
        "mid_metatarsal",
        Sidedness::Sided,
        "midpoint of the 1st and 5th metatarsal heads",
    ),
];

/// The vocabulary entry of a stem (`hip_jc`, `c7`), if known.
pub fn info(stem: &str) -> Option<&'static LandmarkInfo> {
    VOCABULARY.iter().find(|l| l.stem == stem)
}

/// Splits a full landmark name into its side prefix and stem: `l_heel` -> (Some(Left), "heel").
pub fn split_side(name: &str) -> (Option<Side>, &str) {
    if let Some(stem) = name.strip_prefix("l_") {
        (Some(Side::Left), stem)
    } else if let Some(stem) = name.strip_prefix("r_") {
        (Some(Side::Right), stem)
    } else {
        (None, name)
    }
}

/// Body side.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Side {
    Left,
    Right,
}

impl Side {
    pub const BOTH: [Side; 2] = [Side::Left, Side::Right];

    /// `l_` or `r_`.
    pub fn prefix(self) -> &'static str {
        match self {
            Side::Left => "l_",
            Side::Right => "r_",
        }
    }

    /// `left` or `right`.
    pub fn word(self) -> &'static str {
        match self {
            Side::Left => "left",
            Side::Right => "right",
        }
    }

    /// The full landmark name of a stem on this side: `Side::Left.name("heel") == "l_heel"`.
    pub fn name(self, stem: &str) -> String {
        format!("{}{}", self.prefix(), stem)
    }
}

/// Every full landmark name of the vocabulary (`l_asis`, `r_asis`, `sacrum`, ...).
pub fn all_names() -> Vec<String> {
    let mut names = Vec::new();
    for l in VOCABULARY {
        match l.sidedness {
            Sidedness::Sided => {
                for side in Side::BOTH {
                    names.push(side.name(l.stem));
                }
            }
            Sidedness::Single => names.push(l.stem.to_string()),
        }
    }
    names
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stems_are_unique() {
        for (i, a) in VOCABULARY.iter().enumerate() {
            for b in &VOCABULARY[i + 1..] {
                assert_ne!(a.stem, b.stem);
            }
        }
    }

    #[test]
    fn side_prefixes_round_trip() {
        assert_eq!(split_side("l_heel"), (Some(Side::Left), "heel"));
        assert_eq!(split_side("r_hip_jc"), (Some(Side::Right), "hip_jc"));
        assert_eq!(split_side("c7"), (None, "c7"));
        assert_eq!(Side::Right.name("mt2"), "r_mt2");
    }
}
