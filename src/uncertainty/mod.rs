//! Uncertainty of FRFs and of what is computed from them.
//!
//! * [`model`]: the standard uncertainty of each value of a set
//!   ([`FrfUncertainty`], circular complex errors, independent values) and
//!   how it is obtained: coherence and averages (H1 random error), repeated
//!   measurements, a relative uncertainty with a floor below each FRF's peak.
//! * [`first_order`]: linearized propagation through LM-FBS coupling and
//!   decoupling (δY_c = L δY R), with the cancellation of each value.
//! * [`interface_noise`]: a truncation threshold referenced to the input
//!   noise, per line of a coupling.
//! * [`monte_carlo`]: seeded Monte Carlo through any operation on sets
//!   ([`draws`]: the counter-based normal draws, reproducible anywhere).
//! * [`reliability`]: per value flags (below the noise, cancellation,
//!   ill-conditioned interface), unreliable ranges and statements in words,
//!   95 % level intervals.
//! * [`chain`]: first order through cascade, sum of paths and response.
//! * [`blocked`]: first order through the blocked-force inverse, to the
//!   forces and the responses predicted from them.
//! * [`level`]: the 95 % interval of an overall level.
//! * [`csv`]: a result's uncertainty and flags as text.
//! * [`spec`]: the recipe's per-component `"uncertainty"` key.
//!
//! An uncertainty is kept beside its set, never inside it: operations that
//! copy and transform a set would otherwise carry a stale uncertainty.

pub mod blocked;
pub mod chain;
pub mod csv;
pub mod draws;
pub mod first_order;
pub mod interface_noise;
pub mod level;
pub mod model;
pub mod monte_carlo;
pub mod reliability;
pub mod spec;

pub use chain::{
    cascade_first_order, convert_first_order, respond_first_order, select_uncertainty,
    sum_first_order,
};
pub use first_order::{couple_first_order, decouple_first_order, FirstOrder};
pub use level::level_interval;
pub use model::{
    from_coherence, from_repeats, h1_normalized_random_error, relative_with_floor, FrfUncertainty,
};
pub use monte_carlo::{
    couple_monte_carlo, decouple_monte_carlo, monte_carlo_with, McOptions, McResult,
};
pub use reliability::{
    assess, interval_db, level_interval_db, Evidence, Reliability, ReliabilityOptions,
};
pub use spec::UncertaintySpec;
