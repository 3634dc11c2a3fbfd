//! The points of a foot, closed: which foot point a series is, which part of the foot
//! (rearfoot, forefoot) it belongs to, and the per-frame series of one trial ([`FootPoint`],
//! [`Region`]). Sides are [`crate::body::vocabulary::Side`].
//!
//! Regions follow the usual division of the foot for contact phases (heel strike on the
//! rearfoot, foot flat on both, heel rise and toe-off on the forefoot; Perry & Burnfield 2010,
//! Gait Analysis: Normal and Pathological Function, 2nd ed., ch. 2, from memory): the heel and
//! lateral malleolus mark the rearfoot, the metatarsal heads and the toe the forefoot.

use crate::body::vocabulary::Side;

/// A foot point of the landmark vocabulary that the support stage reads.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum FootPoint {
    Heel,
    Toe,
    Mt1,
    Mt2,
    Mt5,
    AnkleLat,
}

impl FootPoint {
    /// Every foot point, in the order of the per-side series of a trial.
    pub const ALL: [FootPoint; 6] = [
        FootPoint::Heel,
        FootPoint::Toe,
        FootPoint::Mt1,
        FootPoint::Mt2,
        FootPoint::Mt5,
        FootPoint::AnkleLat,
    ];

    /// The landmark stem (`heel`, `toe`, `mt1`, ...).
    pub fn stem(self) -> &'static str {
        match self {
            FootPoint::Heel => "heel",
            FootPoint::Toe => "toe",
            FootPoint::Mt1 => "mt1",
            FootPoint::Mt2 => "mt2",
            FootPoint::Mt5 => "mt5",
            FootPoint::AnkleLat => "ankle_lat",
        }
    }

    /// Position in [`FootPoint::ALL`].
    pub fn index(self) -> usize {
        self as usize
    }

    /// The part of the foot the point marks.
    pub fn region(self) -> Region {
        match self {
            FootPoint::Heel | FootPoint::AnkleLat => Region::Rearfoot,
            FootPoint::Toe | FootPoint::Mt1 | FootPoint::Mt2 | FootPoint::Mt5 => Region::Forefoot,
        }
    }
}

/// A part of the foot that is in contact on its own.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Region {
    Rearfoot,
    Forefoot,
}

impl Region {
    pub const BOTH: [Region; 2] = [Region::Rearfoot, Region::Forefoot];

    /// Position in [`Region::BOTH`].
    pub fn index(self) -> usize {
        self as usize
    }
}

/// Position of a side in the per-side arrays of the support stage (left first).
pub fn side_index(side: Side) -> usize {
    match side {
        Side::Left => 0,
        Side::Right => 1,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn indices_follow_the_order_of_all() {
        for (i, p) in FootPoint::ALL.iter().enumerate() {
            assert_eq!(p.index(), i);
        }
        assert_eq!(FootPoint::AnkleLat.region(), Region::Rearfoot);
        assert_eq!(FootPoint::Mt5.region(), Region::Forefoot);
    }
}
