//! wearout: maintenance-interval and spares planning for fleets, by shared
//! Monte Carlo trials.
//!
//! The modules follow the data's path; see ARCHITECTURE.md for the map.

pub mod analytic;
pub mod dist;
pub mod echelon;
pub mod estimate;
pub mod files;
pub mod fit;
pub mod frontier;
pub mod mean_life;
pub mod model;
pub mod outcome;
pub mod recost;
pub mod report;
pub mod result;
pub mod run;
pub mod scenario;
pub mod shard;
pub mod sim;
pub mod stream;
pub mod summary;
pub mod text;
pub mod uncertainty;
