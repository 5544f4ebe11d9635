//! A drawing the core finishes as SVG text (a stabilization chart, a
//! virtual-point geometry), with its size and the one paragraph a screen
//! reader gets (also the SVG's `<desc>`).

use serde::Serialize;

/// An SVG drawing and what it shows, in words.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Drawing {
    /// The SVG document.
    pub svg: String,
    /// Its size in pixels.
    pub width: f64,
    pub height: f64,
    /// What it shows (its accessible description).
    pub summary: String,
}
