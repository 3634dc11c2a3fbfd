//! gravline: whole-body center of mass (CoM) from 3D marker trajectories, its velocity, and its
//! margin to the base of support (BoS).

pub mod anthropometry;
pub mod batch;
pub mod body;
pub mod com;
pub mod config;
pub mod pipeline;
pub mod report;
pub mod signal;
pub mod support;
pub mod synth;
pub mod trial;
pub mod warning;
