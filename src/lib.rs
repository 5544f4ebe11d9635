//! # mortise
//!
//! Frequency-response-function (FRF) synthesis, substructure coupling and
//! transfer-path prediction for noise-and-vibration engineers, as one library
//! shared by a command-line tool and an offline web page.
//!
//! ## Conventions (the one place they are defined)
//! * **Time convention e^{+iωt}.** A harmonic signal is Re{X e^{+iωt}}, so
//!   velocity is iω times displacement and acceleration is −ω² times
//!   displacement. Receptance H = x/F, mobility Y = iωH, accelerance
//!   A = −ω²H, dynamic stiffness Z = H⁻¹ (square, complete matrices only).
//! * **Passivity** with this convention: Re(driving-point mobility) ≥ 0,
//!   equivalently Im(driving-point receptance) ≤ 0.
//! * **SI inside.** Every value held in an [`frf::FrfSet`] is SI; units are
//!   converted when files are read and written ([`units`]).
//! * **Layout.** Frequency-major: one small dense row-major matrix per
//!   frequency line.
//!
//! ## Public API
//! Start from the re-exports at the top: [`FrfSet`] and [`Dof`] (the data),
//! [`load`], [`save`] and [`export`] (files), [`parse_recipe`] and
//! [`run_recipe`] (recipes, with [`DirSource`] or [`MapSource`] for their
//! files; the result's [`RunReport`] is typed), and [`Workspace`] (what the
//! page holds, and bundles).
//!
//! ## Example
//! ```
//! use mortise::frf::{Dof, Direction, FrfSet};
//! use mortise::units::Quantity;
//! use num_complex::Complex64;
//!
//! // A single-DOF oscillator, receptance 1/(k − ω²m + iωc).
//! let (m, k, c) = (1.0, 1.0e4, 2.0);
//! let d = Dof::new("demo", "1", Direction::Z);
//! let freqs: Vec<f64> = (1..=200).map(|i| i as f64).collect();
//! let mut h = FrfSet::zeros("sdof", freqs, vec![d.clone()], vec![d], Quantity::Displacement, Quantity::Force);
//! for l in 0..h.n_lines() {
//!     let w = h.omega(l);
//!     h.set(l, 0, 0, 1.0 / Complex64::new(k - w * w * m, w * c));
//! }
//! let y = h.to_kind("mobility").unwrap();
//! assert!(y.get(10, 0, 0).re >= 0.0); // passive driving point
//! ```

pub mod assemble;
pub mod audit;
#[cfg(not(target_arch = "wasm32"))]
pub mod cli;
pub mod demo;
pub mod demo_files;
pub mod error;
pub mod frf;
pub mod grid;
pub mod history;
pub mod identify;
pub mod io;
pub mod levels;
pub mod limits;
pub mod linalg;
pub mod listen;
pub mod mem;
pub mod peaks;
pub mod plot;
pub mod predict;
pub mod recipe;
pub mod signal;
pub mod summary;
pub mod synth;
pub mod uncertainty;
pub mod units;
pub mod vpt;
#[cfg(target_arch = "wasm32")]
pub mod wasm;
pub mod workspace;

// The surface a library user needs, at the top: data, files, recipes, the
// workspace (bundles). The modules stay reachable for the tests and the
// faces, but these are the names to start from.
pub use error::{Error, ErrorKind, Result};
pub use frf::{Direction, Dof, FrfKind, FrfSet};
pub use io::{export, load, save, ExportFormat, ImportOptions};
pub use recipe::{
    parse as parse_recipe, run as run_recipe, DirSource, MapSource, Recipe, RunReport, RunResult,
};
pub use units::Quantity;
pub use workspace::{BundleOptions, Workspace};

/// The version written into bundles and reports.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
