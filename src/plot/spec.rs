//! The plot description: [`PlotSpec`] (JSON on the page) with its kind,
//! series, lines and bar groups, and the [`Frame`] of each panel a drawing
//! returns for the page's pointer mapping.
//!
//! Not here: resolving series against the sets (`data.rs`), drawing.

use crate::error::{Error, Result};

/// What to draw.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum PlotKind {
    /// Magnitude (dB or linear) above phase, against frequency.
    #[default]
    Bode,
    /// Magnitude only.
    Magnitude,
    /// Real part above imaginary part, against frequency.
    ReIm,
    /// Imaginary against real part.
    Nyquist,
    /// Plain numeric lines (e.g. condition number against frequency).
    Lines,
    /// Grouped bars (e.g. band levels per transfer path).
    Bars,
    /// The level difference in dB of each series against the baseline
    /// series at the same place (`baseline`): the change between two runs.
    Difference,
    /// A speed sweep's line levels as colour: frequency across, speed up
    /// (`sweep`, from a run report).
    SpeedMap,
}

/// Which of a plot's switches change a drawing of this kind (the page
/// disables the others rather than offer a switch that does nothing).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct Controls {
    /// `db`: levels in dB or linear magnitudes.
    pub db: bool,
    /// `x_log`: a logarithmic frequency axis.
    pub x_log: bool,
}

impl PlotKind {
    /// The switches a drawing of this kind reads.
    pub fn controls(self) -> Controls {
        match self {
            PlotKind::Bode | PlotKind::Magnitude => Controls {
                db: true,
                x_log: true,
            },
            // real and imaginary parts are linear; Nyquist has no frequency axis
            PlotKind::ReIm | PlotKind::Lines => Controls {
                db: false,
                x_log: true,
            },
            PlotKind::Nyquist => Controls {
                db: false,
                x_log: false,
            },
            // a level difference is in dB by its nature
            PlotKind::Difference => Controls {
                db: false,
                x_log: true,
            },
            // path bars are levels in dB over categories
            PlotKind::Bars => Controls {
                db: false,
                x_log: false,
            },
            // colour is a level in dB; the frequency axis may be log
            PlotKind::SpeedMap => Controls {
                db: false,
                x_log: true,
            },
        }
    }
}

/// One curve: entry (out, in) of a set held by the caller.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SeriesRef {
    /// Identifier of the set in the caller's store.
    pub set: String,
    #[serde(default)]
    pub out: usize,
    #[serde(default, rename = "in")]
    pub inp: usize,
    #[serde(default)]
    pub label: Option<String>,
}

/// A numeric line for [`PlotKind::Lines`].
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LineData {
    pub label: String,
    #[serde(default)]
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    /// Take x from this set's frequencies instead (e.g. a per-line report
    /// value such as the interface condition number).
    #[serde(default)]
    pub x_from: Option<String>,
}

/// One cell of a speed map: an order's line at one speed.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct MapCell {
    /// The line's frequency, order × speed (Hz).
    pub freq: f64,
    /// The speed (rev/s).
    pub speed: f64,
    /// The line's level at the target (dB, the sweep's weighting).
    pub level: f64,
}

/// One group of bars for [`PlotKind::Bars`], one value per category.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BarGroup {
    pub label: String,
    pub values: Vec<f64>,
}

fn yes() -> bool {
    true
}
fn default_width() -> u32 {
    960
}
fn default_height() -> u32 {
    540
}

/// A plot description.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PlotSpec {
    #[serde(default)]
    pub kind: PlotKind,
    #[serde(default)]
    pub series: Vec<SeriesRef>,
    /// For [`PlotKind::Difference`]: the curve each series is compared
    /// with, one per series (refused with other kinds).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub baseline: Vec<SeriesRef>,
    /// Magnitude in dB (true) or linear.
    #[serde(default = "yes")]
    pub db: bool,
    /// Logarithmic frequency axis.
    #[serde(default = "yes")]
    pub x_log: bool,
    /// Logarithmic y axis (lines only).
    #[serde(default)]
    pub y_log: bool,
    /// Visible x range (zoom); None = all data.
    #[serde(default)]
    pub x_range: Option<[f64; 2]>,
    /// Visible y range of the first panel; None = automatic.
    #[serde(default)]
    pub y_range: Option<[f64; 2]>,
    #[serde(default = "default_width")]
    pub width: u32,
    #[serde(default = "default_height")]
    pub height: u32,
    #[serde(default)]
    pub title: String,
    #[serde(default)]
    pub lines: Vec<LineData>,
    #[serde(default)]
    pub categories: Vec<String>,
    #[serde(default)]
    pub groups: Vec<BarGroup>,
    #[serde(default)]
    pub x_label: String,
    #[serde(default)]
    pub y_label: String,
    /// Bars from a set: one bar per input column of output `out`, each the
    /// energetic sum of that entry's lines inside the x range (all lines when
    /// no range is set), in dB. For a path-contribution set this ranks paths.
    #[serde(default)]
    pub ranking: Option<SeriesRef>,
    /// Bars from a run report's path ranking at one target: one group per
    /// path, one bar per band (bands with no path level are left out).
    #[serde(default)]
    /// Kept as JSON: a report writes NaN and −∞ levels as null.
    pub path_ranking: Option<serde_json::Value>,
    /// For [`PlotKind::SpeedMap`]: a run report's `sweep` (a speed sweep),
    /// kept as JSON (null levels are orders left out), and which of its
    /// targets (`map_column`, 0 the first).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sweep: Option<serde_json::Value>,
    #[serde(default)]
    pub map_column: usize,
    /// The speed map's cells, resolved from `sweep`.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub cells: Vec<MapCell>,
    /// The colour scale's title (resolved).
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub z_label: String,
    /// The speed of the highest overall level (resolved), marked on the map.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub worst_speed: Option<f64>,
}

impl PlotSpec {
    pub fn from_json(text: &str) -> Result<PlotSpec> {
        let spec: PlotSpec = serde_json::from_str(text)
            .map_err(|e| Error::usage(format!("plot description: {e}")).field("plot"))?;
        spec.checked()
    }

    /// The spec when its parts fit together (a baseline only with the
    /// difference view), else the error naming the part.
    pub fn checked(self) -> Result<PlotSpec> {
        let spec = self;
        if spec.kind != PlotKind::SpeedMap && (spec.sweep.is_some() || spec.map_column != 0) {
            return Err(Error::usage(
                "a sweep is read by the speed map only; leave it out or choose that view",
            )
            .field(if spec.sweep.is_some() {
                "sweep"
            } else {
                "map_column"
            }));
        }
        if spec.kind != PlotKind::Difference && !spec.baseline.is_empty() {
            return Err(Error::usage(
                "a baseline is read by the difference view only; leave it out or choose that view",
            )
            .field("baseline"));
        }
        Ok(spec)
    }
}

/// One panel's pixel rectangle and axes, for pointer mapping on the page.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Frame {
    pub x0: i32,
    pub y0: i32,
    pub x1: i32,
    pub y1: i32,
    pub x_min: f64,
    pub x_max: f64,
    pub x_log: bool,
    pub y_min: f64,
    pub y_max: f64,
    pub y_log: bool,
    /// What the x axis is ("frequency" or "real part", "category").
    pub x_is: String,
}

/// One entry of a plot's legend as drawn: its label, colour (`#rrggbb`,
/// from [`PALETTE`](super::PALETTE)), dash pattern (dash and gap in px, 0 for
/// a solid line, from [`DASHES`](super::DASHES)) and, for bars, whether its
/// patch is hatched.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LegendEntry {
    pub label: String,
    pub colour: String,
    pub dash: [u32; 2],
    pub hatched: bool,
    /// Named inside the plot (false: too many; the page lists them).
    pub inside: bool,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_kind_names_the_switches_it_reads() {
        assert_eq!(
            PlotKind::Bode.controls(),
            Controls {
                db: true,
                x_log: true
            }
        );
        assert_eq!(
            PlotKind::ReIm.controls(),
            Controls {
                db: false,
                x_log: true
            }
        );
        assert_eq!(
            PlotKind::Nyquist.controls(),
            Controls {
                db: false,
                x_log: false
            }
        );
    }
}
