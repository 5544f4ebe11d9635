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

/// The longest summary, in characters (a screen reader reads it whole).
pub const MAX_SUMMARY: usize = 2000;

/// `s` as a summary: control characters and runs of white space made one
/// space, cut with "…" at [`MAX_SUMMARY`] characters.
pub(super) fn summary_text(s: &str) -> String {
    let s = super::diagram::clean(s);
    if s.chars().count() <= MAX_SUMMARY {
        return s;
    }
    let mut t: String = s.chars().take(MAX_SUMMARY - 1).collect();
    t.push('…');
    t
}
