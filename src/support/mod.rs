//! Stage 5, base of support (BoS) and margins (docs/DESIGN.md 7): which feet are on the floor, the BoS
//! polygon they span, how far the CoM and the XCoM lie inside it, and the gait events.
//!
//! Inputs: floor-plane points (`[f64; 2]`, metres) and per-frame foot heights (m), speeds (m/s)
//! and heel/toe positions relative to the sacrum (m), with the frame rate in Hz. Outputs:
//! contact flags, hulls, margins in metres, times in seconds, event frame indices. Pure
//! functions: no I/O, no printing.
//!
//! Submodules, one algorithm each:
//! - [`hull`]: 2D convex hull, Andrew's monotone chain (Andrew 1979).
//! - [`margin`]: signed distance to the hull, directional (AP / ML) margins and the temporal
//!   margin τ, for the MoS of Hof et al. 2005.
//! - [`contact`]: per-frame contact from height and speed thresholds (Ghoussayni 2004 speed
//!   threshold), per foot region, contact runs.
//! - [`floor`]: the floor surface fitted to the feet's stance samples (robust plane and cells).
//! - [`foot`]: the closed set of foot points and regions.
//! - [`sole`]: sole outlines from the foot markers and the subject; [`bos`]: the BoS of a frame
//!   from the sole parts in contact, and its margins.
//! - [`progression`], [`steps`]: direction of progression; gait events and per-step figures.
//! - [`events`]: heel strikes and toe-offs by the coordinate method of Zeni et al. 2008.

pub mod bos;
pub mod contact;
pub mod events;
pub mod floor;
pub mod foot;
pub mod hull;
pub mod margin;
pub mod progression;
pub mod sole;
pub mod steps;

pub use contact::{detect_contact, floor_level, percentile, transitions, ContactThresholds};
pub use events::{
    refine_events, zeni_events, zeni_events_with, GaitEvents, RefineOptions, ZeniOptions,
};
pub use hull::{convex_hull, Hull};
pub use margin::{directional_margin, signed_distance, time_to_boundary_s, DirectionalMargin};
pub mod lift;
pub mod stage;

pub use stage::{analyse, floor_m, FootFrames, Step, SupportSeries};
