//! wearout: maintenance-interval and spares planning for fleets, by shared
//! Monte Carlo trials.
//!
//! The modules follow the data's path; see ARCHITECTURE.md for the map.

pub mod dist;
pub mod model;
pub mod stream;
