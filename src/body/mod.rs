//! Stage 3, the body model (docs/DESIGN.md 4, 5): trial labels become landmarks of our vocabulary,
//! joint centers are estimated where the trial does not give them, and the chosen table rows
//! become segments with two endpoints each.
//!
//! - [`vocabulary`]: the landmark names.
//! - [`joints`]: joint-center methods (hip regressions, midpoints, lateral-marker offsets,
//!   shoulder from the acromion, vertex from four head markers).
//! - [`frames`]: ISB segment coordinate systems, the 3-D segment CoM and the Dumas 2007 joint
//!   centers (cervical, lumbar, shoulder).
//! - [`geometric`]: the subject's own segments, integrated from measured perimeters and widths
//!   (stadium solids after Yeadon 1990).
//! - [`model`]: resolution of every point the segments need into a per-frame evaluation plan,
//!   with the "landmark not found" error raised before any computation.

pub mod frames;
pub mod geometric;
pub mod joints;
pub mod model;
/// The landmark names live on the ground floor (the tables use them too).
pub use crate::vocabulary;

pub use model::{BodyModel, LandmarkError, Segment, SegmentPoint};
pub use vocabulary::Side;
