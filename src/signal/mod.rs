//! Time data to spectra and FRFs.
//!
//! - `window.rs`: windows with coherent gain, ENBW and corrections;
//! - `welch.rs`: Welch averaging of several channels, streamed in blocks
//!   (auto and cross spectra against reference channels), as scipy does it;
//! - `spectra.rs`: the averages as spectrum sets (autopower, PSD, RMS and
//!   peak linear spectra, cross spectra), the scaling kept in `signal`;
//! - `frf_estimate.rs`: H1, H2, Hv with ordinary and multiple coherence;
//! - `analyse.rs`: one analysis for the CLI and recipes (channels picked and
//!   calibrated, a WAV file streamed, spectra or FRFs made);
//! - `impact.rs`: triggered impact records (pre-trigger, double hits,
//!   overloads) and FRFs averaged over the accepted ones;
//! - `orders.rs`: order tracks from a speed profile or a tachometer channel
//!   (resampling to constant angle increments);
//! - `recording.rs`: channels in SI from a UFF file's time histories, a WAV
//!   file or a CSV time column, with each channel's DOF and quantity.

pub mod analyse;
pub mod frf_estimate;
pub mod impact;
pub mod orders;
pub mod recording;
pub mod spectra;
pub mod welch;
pub mod window;

pub use frf_estimate::{estimate, Estimator};
pub use recording::Recording;
pub use spectra::spectrum_sets;
pub use welch::{average, Averaged, Detrend, Welch, WelchSettings};
pub use window::{Window, WindowProperties};

use crate::frf::Dof;
use crate::units::Quantity;

/// What one channel measures: where, and which quantity (its samples in SI).
#[derive(Debug, Clone, PartialEq)]
pub struct Channel {
    pub dof: Dof,
    pub quantity: Quantity,
}
