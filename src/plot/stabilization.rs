//! The stabilization chart of a modal identification
//! ([`crate::identify::StabilizationChart`]) as plain SVG: frequency (Hz,
//! linear, the fitted band) across, model order up, one mark per pole whose
//! shape says how stable it is, the chosen modes as vertical lines labelled
//! with their frequency, and behind them the sum of the FRF magnitudes
//! (receptance) in dB on a second axis at the right. A legend names every
//! class; the `<title>` and `<desc>` give a screen reader the summary.
//!
//! The classes are those the chart's table carries
//! ([`crate::identify::stability::ChartPole`]): a pole is compared with the
//! nearest pole of the order below in frequency, damping and (several
//! references) participation vector. Shapes, not only colours, tell them
//! apart (grey-scale print, colour-blind readers): an open circle for a
//! pole not stable in frequency, a plus for frequency only, an open square
//! for frequency and damping, an open diamond for frequency and vector, a
//! filled triangle for stable in every criterion. The pole a mode was taken
//! from is ringed.
//!
//! Every mark is an element with `data-class` (the class's key); a chosen
//! mode is a `<g data-kind="chosen">` holding its line and label; the axes
//! are `<g data-axis="x|order|db">` holding their tick lines and labels,
//! each label centred on its tick. Text sizes are estimated from character
//! counts (no font metrics in a worker), as in `diagram.rs`.

use super::diagram::{clean, esc, text_w, INK, LINE, MUTED};
use super::drawing::{summary_text, Drawing};
use super::layout::{tick_text, Axis};
use crate::error::{Error, Result};
use crate::identify::stability::ChartPole;
use crate::identify::StabilizationChart;
use std::fmt::Write as _;

/// The smallest and largest drawing accepted, pixels.
pub const MIN_SIZE: [f64; 2] = [360.0, 260.0];
pub const MAX_SIZE: [f64; 2] = [6000.0, 6000.0];

const FS: f64 = 12.0;
const FS_SMALL: f64 = 11.0;
const LABEL_ROW: f64 = 14.0;
const MAX_LABEL_ROWS: usize = 4;
const LEFT: f64 = 54.0;
const RIGHT: f64 = 62.0;
/// Half the size of a mark, pixels.
const MARK: f64 = 3.6;
/// Half the size of a mark's box for a pointer, pixels.
pub const HIT: f64 = 5.0;

// Mark colours: each at least 3:1 against white (WCAG 2.1 SC 1.4.11,
// non-text contrast); the shapes carry the meaning, the colours help.
const C_NEW: &str = "#6b7780";
const C_FREQ: &str = "#b4540a";
const C_FD: &str = "#007a5a";
const C_FV: &str = "#a6477f";
const C_STABLE: &str = "#0063a0";
const C_CURVE: &str = "#7d8d94";
const C_GRID: &str = "#e8ebec";

/// How stable a pole of the chart is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum PoleClass {
    /// Its frequency moved by more than the tolerance from the order below
    /// (or the first order: nothing to compare with).
    New,
    /// Stable in frequency, not in damping nor (several references) vector.
    Frequency,
    /// Stable in frequency and damping, not in vector.
    FrequencyDamping,
    /// Stable in frequency and vector, not in damping.
    FrequencyVector,
    /// Stable in every criterion that applies.
    Stable,
}

impl PoleClass {
    pub const ALL: [PoleClass; 5] = [
        PoleClass::New,
        PoleClass::Frequency,
        PoleClass::FrequencyDamping,
        PoleClass::FrequencyVector,
        PoleClass::Stable,
    ];

    /// The class of one pole of the table.
    pub fn of(p: &ChartPole) -> PoleClass {
        if !p.stable_freq {
            PoleClass::New
        } else if p.stable() {
            PoleClass::Stable
        } else if p.stable_damping {
            PoleClass::FrequencyDamping
        } else if p.stable_vector == Some(true) {
            PoleClass::FrequencyVector
        } else {
            PoleClass::Frequency
        }
    }

    /// The key written as `data-class`.
    pub fn key(self) -> &'static str {
        match self {
            PoleClass::New => "new",
            PoleClass::Frequency => "frequency",
            PoleClass::FrequencyDamping => "frequency-damping",
            PoleClass::FrequencyVector => "frequency-vector",
            PoleClass::Stable => "stable",
        }
    }

    /// The class in words; `vector` says whether the table compares
    /// participation vectors (several references).
    pub fn words(self, vector: bool) -> &'static str {
        match (self, vector) {
            (PoleClass::New, _) => "new or not stable in frequency",
            (PoleClass::Frequency, _) => "stable in frequency only",
            (PoleClass::FrequencyDamping, _) => "stable in frequency and damping",
            (PoleClass::FrequencyVector, _) => "stable in frequency and vector",
            (PoleClass::Stable, true) => "stable in frequency, damping and vector",
            (PoleClass::Stable, false) => {
                "stable in frequency and damping (one reference: no vector)"
            }
        }
    }

    /// The classes a table can hold: with one reference there is no vector
    /// criterion, so neither partial class with or without it.
    pub fn applicable(vector: bool) -> Vec<PoleClass> {
        PoleClass::ALL
            .into_iter()
            .filter(|c| {
                vector || !matches!(c, PoleClass::FrequencyDamping | PoleClass::FrequencyVector)
            })
            .collect()
    }

    fn colour(self) -> &'static str {
        match self {
            PoleClass::New => C_NEW,
            PoleClass::Frequency => C_FREQ,
            PoleClass::FrequencyDamping => C_FD,
            PoleClass::FrequencyVector => C_FV,
            PoleClass::Stable => C_STABLE,
        }
    }

    /// The mark centred at (x, y), carrying `attr` (e.g. `data-class="…"`).
    fn mark(self, x: f64, y: f64, attr: &str) -> String {
        let (s, c) = (MARK, self.colour());
        match self {
            PoleClass::New => format!(
                r#"<circle {attr} cx="{x:.1}" cy="{y:.1}" r="{:.1}" fill="none" stroke="{c}" stroke-width="1"/>"#,
                s * 0.8
            ),
            PoleClass::Frequency => format!(
                r#"<path {attr} d="M{:.1} {y:.1}H{:.1}M{x:.1} {:.1}V{:.1}" stroke="{c}" stroke-width="1.4" fill="none"/>"#,
                x - s,
                x + s,
                y - s,
                y + s
            ),
            PoleClass::FrequencyDamping => format!(
                r#"<rect {attr} x="{:.1}" y="{:.1}" width="{:.1}" height="{:.1}" fill="none" stroke="{c}" stroke-width="1.2"/>"#,
                x - s * 0.8,
                y - s * 0.8,
                s * 1.6,
                s * 1.6
            ),
            PoleClass::FrequencyVector => format!(
                r#"<path {attr} d="M{x:.1} {:.1}L{:.1} {y:.1}L{x:.1} {:.1}L{:.1} {y:.1}Z" fill="none" stroke="{c}" stroke-width="1.2"/>"#,
                y - s,
                x + s,
                y + s,
                x - s
            ),
            PoleClass::Stable => format!(
                r#"<path {attr} d="M{x:.1} {:.1}L{:.1} {:.1}L{:.1} {:.1}Z" fill="{c}" stroke="{c}" stroke-width="0.8"/>"#,
                y - s,
                x + s,
                y + s * 0.8,
                x - s,
                y + s * 0.8
            ),
        }
    }
}

/// One entry of the legend.
enum Entry {
    Class(PoleClass),
    Picked,
    Chosen,
    Sum,
}

/// A frequency to four significant digits (at least the unit).
pub fn hz_text(f: f64) -> String {
    let a = f.abs();
    let d = if a >= 1000.0 {
        0
    } else if a >= 100.0 {
        1
    } else if a >= 10.0 {
        2
    } else {
        3
    };
    format!("{f:.d$}")
}

/// A frequency as short as it is exact to four significant digits
/// (`20`, `400`, `12.5`).
fn short_hz(f: f64) -> String {
    let t = hz_text(f);
    if t.contains('.') {
        t.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        t
    }
}

/// Ticks of a linear axis from `lo` to `hi` (the plot modules' 1-2-5 rule).
fn ticks(lo: f64, hi: f64) -> Vec<f64> {
    Axis {
        min: lo,
        max: hi,
        log: false,
    }
    .ticks()
    .0
}

/// Integer ticks of the order axis: 1-2-5 steps of at least 1.
fn order_ticks(lo: usize, hi: usize) -> Vec<usize> {
    let span = (hi - lo).max(1) as f64;
    let raw = span / 6.0;
    let step = [1usize, 2, 5, 10, 20, 50, 100, 200, 500, 1000]
        .into_iter()
        .find(|&s| s as f64 >= raw)
        .unwrap_or(1000);
    (lo..=hi).filter(|o| o % step == 0 || *o == lo).collect()
}

/// Rows for labels of width `w` centred at `x` (in order of x): each label
/// takes the first row where it does not touch the previous one; beyond
/// [`MAX_LABEL_ROWS`] rows the row whose last label ends first.
fn label_rows(items: &[(f64, f64)]) -> (Vec<usize>, usize) {
    let mut ends: Vec<f64> = Vec::new();
    let mut rows = Vec::with_capacity(items.len());
    for &(x, w) in items {
        let left = x - w / 2.0;
        let r = match ends.iter().position(|&e| e + 4.0 <= left) {
            Some(r) => r,
            None if ends.len() < MAX_LABEL_ROWS => {
                ends.push(f64::NEG_INFINITY);
                ends.len() - 1
            }
            None => (0..ends.len())
                .min_by(|&a, &b| ends[a].total_cmp(&ends[b]))
                .unwrap_or(0),
        };
        ends[r] = x + w / 2.0;
        rows.push(r);
    }
    (rows, ends.len().max(1))
}

/// Centres for labels of width `w` wanted at `x` (in order of x) on one
/// row between `lo` and `hi`, pushed apart as little as a sweep each way
/// does; `None` when they do not fit side by side.
fn spread_labels(items: &[(f64, f64)], lo: f64, hi: f64) -> Option<Vec<f64>> {
    const GAP: f64 = 6.0;
    let mut c: Vec<f64> = items.iter().map(|i| i.0).collect();
    for k in 0..c.len() {
        let min = if k == 0 {
            lo + items[0].1 / 2.0
        } else {
            c[k - 1] + (items[k - 1].1 + items[k].1) / 2.0 + GAP
        };
        c[k] = c[k].max(min);
    }
    for k in (0..c.len()).rev() {
        let max = if k + 1 == c.len() {
            hi - items[k].1 / 2.0
        } else {
            c[k + 1] - (items[k].1 + items[k + 1].1) / 2.0 - GAP
        };
        c[k] = c[k].min(max);
    }
    match (c.first(), items.first()) {
        (Some(&c0), Some(i0)) if c0 - i0.1 / 2.0 < lo - 1e-9 => None,
        _ => Some(c),
    }
}

/// Draw a stabilization chart `width` × `height` pixels.
///
/// Refused: a chart without any pole (nothing identified to draw), a band
/// that is not two increasing finite frequencies, a size outside
/// [`MIN_SIZE`]..[`MAX_SIZE`].
pub fn stabilization_svg(chart: &StabilizationChart, width: f64, height: f64) -> Result<Drawing> {
    Ok(stabilization_drawing(chart, width, height)?.drawing)
}

/// One pole drawn on the chart and the box around its mark, in SVG
/// pixels, for a page to know which mark a click is on.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PoleMark {
    /// The model order and the pole's index among that order's poles (as
    /// the chart's table holds them).
    pub order: usize,
    pub index: usize,
    /// Frequency (Hz) and damping ratio.
    pub freq: f64,
    pub zeta: f64,
    /// The class's key (`data-class`) and the class in words.
    pub class: &'static str,
    pub words: &'static str,
    /// The pole a mode was taken from.
    pub picked: bool,
    pub x: f64,
    pub y: f64,
    pub w: f64,
    pub h: f64,
}

/// The chart with the box of every pole's mark.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ChartDrawing {
    #[serde(flatten)]
    pub drawing: Drawing,
    /// Every pole drawn, in drawing order (orders up, each order's poles in
    /// the table's order).
    pub poles: Vec<PoleMark>,
}

/// [`stabilization_svg`] with the box of every pole's mark (each mark's
/// centre ± [`HIT`] pixels).
pub fn stabilization_drawing(
    chart: &StabilizationChart,
    width: f64,
    height: f64,
) -> Result<ChartDrawing> {
    for (v, lo, hi, name) in [
        (width, MIN_SIZE[0], MAX_SIZE[0], "width"),
        (height, MIN_SIZE[1], MAX_SIZE[1], "height"),
    ] {
        if !(v.is_finite() && (lo..=hi).contains(&v)) {
            return Err(Error::usage(format!(
                "the chart's {name} is {v} px; expected {lo} to {hi}"
            ))
            .field(name));
        }
    }
    let [f0, f1] = chart.band;
    if !(f0.is_finite() && f1.is_finite() && f0 < f1) {
        return Err(Error::numeric(format!(
            "the stabilization chart's band [{f0}, {f1}] Hz is not two increasing frequencies"
        ))
        .field("band"));
    }
    let n_poles: usize = chart.orders.iter().map(|o| o.poles.len()).sum();
    if chart.orders.is_empty() || n_poles == 0 {
        return Err(Error::numeric(format!(
            "the stabilization chart has no pole in {}–{} Hz at any of its {} model orders: nothing to draw (widen the band or raise max_order)",
            short_hz(f0),
            short_hz(f1),
            chart.orders.len()
        ))
        .field("orders"));
    }
    let vector = chart
        .orders
        .iter()
        .flat_map(|o| &o.poles)
        .any(|p| p.stable_vector.is_some());
    let classes = PoleClass::applicable(vector);
    let o_lo = chart.orders.iter().map(|o| o.order).min().unwrap_or(1);
    let o_hi = chart.orders.iter().map(|o| o.order).max().unwrap_or(1);

    // ---- the chosen modes' labels above the plot
    let mut chosen: Vec<[f64; 2]> = chart
        .chosen
        .iter()
        .copied()
        .filter(|c| c[0].is_finite())
        .collect();
    chosen.sort_by(|a, b| a[0].total_cmp(&b[0]));
    let x0 = LEFT;
    let x1 = width - RIGHT;
    let sx = |f: f64| x0 + (f - f0) / (f1 - f0) * (x1 - x0);
    let labels: Vec<String> = chosen
        .iter()
        .map(|c| format!("{} Hz", hz_text(c[0])))
        .collect();
    let spans: Vec<(f64, f64)> = chosen
        .iter()
        .zip(&labels)
        .map(|(c, l)| (sx(c[0]), text_w(l, FS_SMALL, false)))
        .collect();
    // one row, labels pushed apart and led to their lines; rows when they
    // do not fit
    let (rows, centres, n_rows) = match spread_labels(&spans, 4.0, width - 4.0) {
        Some(c) => (vec![0; spans.len()], c, 1),
        None => {
            let (r, n) = label_rows(&spans);
            (r, spans.iter().map(|s| s.0).collect(), n)
        }
    };

    // ---- the legend below the plot, in rows
    let mut legend: Vec<(String, Entry)> = classes
        .iter()
        .map(|&c| {
            let n = chart
                .orders
                .iter()
                .flat_map(|o| &o.poles)
                .filter(|p| PoleClass::of(p) == c)
                .count();
            (format!("{} ({n})", c.words(vector)), Entry::Class(c))
        })
        .collect();
    legend.push(("pole a mode was taken from".into(), Entry::Picked));
    legend.push((format!("chosen mode ({})", chosen.len()), Entry::Chosen));
    legend.push(("Σ|H|, right axis".into(), Entry::Sum));
    let entry_w = |t: &str| 18.0 + text_w(t, FS_SMALL, false) + 16.0;
    let mut legend_rows: Vec<Vec<usize>> = vec![Vec::new()];
    let mut used = 0.0;
    for (i, (t, _)) in legend.iter().enumerate() {
        let w = entry_w(t);
        if used + w > width - 2.0 * 12.0 && !legend_rows[legend_rows.len() - 1].is_empty() {
            legend_rows.push(Vec::new());
            used = 0.0;
        }
        let last = legend_rows.len() - 1;
        legend_rows[last].push(i);
        used += w;
    }

    let y0 = 24.0 + n_rows as f64 * LABEL_ROW + 12.0;
    let bottom = 18.0 + 18.0 + 8.0 + legend_rows.len() as f64 * 17.0 + 6.0;
    let y1 = height - bottom;
    if y1 - y0 < 60.0 || x1 - x0 < 120.0 {
        return Err(Error::usage(format!(
            "a chart {width} × {height} px leaves {:.0} × {:.0} px for the plot; make it larger (at least 120 × 60 px of plot)",
            (x1 - x0).max(0.0),
            (y1 - y0).max(0.0)
        ))
        .field("height"));
    }
    let row_h = (y1 - y0) / (o_hi - o_lo + 1) as f64;
    let sy = |o: usize| y1 - ((o - o_lo) as f64 + 0.5) * row_h;

    let mut s = String::new();
    // ---- summary
    let count_of = |c: PoleClass| {
        chart
            .orders
            .iter()
            .flat_map(|o| &o.poles)
            .filter(|p| PoleClass::of(p) == c)
            .count()
    };
    let class_words: Vec<String> = classes
        .iter()
        .map(|&c| format!("{} {}", count_of(c), c.words(vector)))
        .collect();
    let modes_words: Vec<String> = chosen
        .iter()
        .map(|c| format!("{} Hz (ζ = {:.2} %)", hz_text(c[0]), c[1] * 100.0))
        .collect();
    let title = format!(
        "Stabilization chart, {}–{} Hz, model orders {o_lo}–{o_hi}",
        short_hz(f0),
        short_hz(f1)
    );
    let summary = summary_text(&format!(
        "{title}: {n_poles} poles ({}). {} chosen mode(s){}{}. Behind the poles, the sum of the FRF magnitudes (receptance) in dB re 1 m/N on the right axis.",
        class_words.join("; "),
        chosen.len(),
        if chosen.is_empty() { "" } else { ": " },
        modes_words.join(", ")
    ));
    let _ = write!(
        s,
        r##"<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" viewBox="0 0 {width} {height}" role="img" font-family="system-ui, 'Segoe UI', sans-serif" font-size="{FS}"><title>{}</title><desc>{}</desc><rect width="{width}" height="{height}" fill="#ffffff"/>"##,
        esc(&title),
        esc(&summary)
    );
    let _ = write!(
        s,
        r#"<text x="{x0:.1}" y="16" font-size="13" font-weight="700" fill="{INK}">{}</text>"#,
        esc(&title)
    );

    // ---- the dB axis and curve (behind everything else)
    let levels: Vec<(f64, f64)> = chart
        .curve
        .iter()
        .filter(|p| p[0] >= f0 && p[0] <= f1)
        .map(|p| (p[0], 20.0 * p[1].log10()))
        .collect();
    let finite: Vec<f64> = levels
        .iter()
        .map(|p| p.1)
        .filter(|v| v.is_finite())
        .collect();
    let db = if finite.is_empty() {
        None
    } else {
        let lo = finite.iter().cloned().fold(f64::INFINITY, f64::min);
        let hi = finite.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
        let lo = (lo / 10.0).floor() * 10.0;
        let mut hi = (hi / 10.0).ceil() * 10.0;
        if hi <= lo {
            hi = lo + 10.0;
        }
        Some((lo, hi))
    };
    // frame and grid
    let _ = write!(
        s,
        r#"<rect x="{x0:.1}" y="{y0:.1}" width="{:.1}" height="{:.1}" fill="none" stroke="{LINE}"/>"#,
        x1 - x0,
        y1 - y0
    );
    let fticks = ticks(f0, f1);
    for &f in &fticks {
        let _ = write!(
            s,
            r#"<line x1="{x:.1}" y1="{y0:.1}" x2="{x:.1}" y2="{y1:.1}" stroke="{C_GRID}"/>"#,
            x = sx(f)
        );
    }
    if let Some((lo, hi)) = db {
        let sdb = |v: f64| y1 - (v - lo) / (hi - lo) * (y1 - y0);
        let step = if hi - lo > 120.0 {
            40.0
        } else if hi - lo > 60.0 {
            20.0
        } else {
            10.0
        };
        s.push_str(r#"<g data-axis="db">"#);
        let mut v = lo;
        while v <= hi + 1e-9 {
            let y = sdb(v);
            let _ = write!(
                s,
                r#"<line x1="{x1:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{MUTED}"/><text x="{:.1}" y="{:.1}" font-size="{FS_SMALL}" fill="{MUTED}">{}</text>"#,
                x1 + 4.0,
                x1 + 6.0,
                y + 4.0,
                tick_text(v)
            );
            v += step;
        }
        let cx = width - 10.0;
        let cy = (y0 + y1) / 2.0;
        let _ = write!(
            s,
            r#"<text x="{cx:.1}" y="{cy:.1}" font-size="{FS_SMALL}" fill="{MUTED}" text-anchor="middle" transform="rotate(-90 {cx:.1} {cy:.1})">Σ|H|, dB re 1 m/N</text></g>"#
        );
        // the curve, broken where a level is not finite
        let mut runs: Vec<Vec<String>> = vec![Vec::new()];
        for &(f, v) in &levels {
            if v.is_finite() {
                let last = runs.len() - 1;
                runs[last].push(format!("{:.1},{:.1}", sx(f), sdb(v)));
            } else if !runs[runs.len() - 1].is_empty() {
                runs.push(Vec::new());
            }
        }
        for r in runs.iter().filter(|r| r.len() > 1) {
            let _ = write!(
                s,
                r#"<polyline data-kind="sum" points="{}" fill="none" stroke="{C_CURVE}" stroke-width="1.2"/>"#,
                r.join(" ")
            );
        }
    }

    // ---- frequency axis
    s.push_str(r#"<g data-axis="x">"#);
    for &f in &fticks {
        let x = sx(f);
        let _ = write!(
            s,
            r#"<line x1="{x:.1}" y1="{y1:.1}" x2="{x:.1}" y2="{:.1}" stroke="{MUTED}"/><text x="{x:.1}" y="{:.1}" font-size="{FS_SMALL}" fill="{INK}" text-anchor="middle">{}</text>"#,
            y1 + 4.0,
            y1 + 16.0,
            tick_text(f)
        );
    }
    let _ = write!(
        s,
        r#"<text x="{:.1}" y="{:.1}" font-size="{FS_SMALL}" fill="{INK}" text-anchor="middle">frequency, Hz</text></g>"#,
        (x0 + x1) / 2.0,
        y1 + 32.0
    );
    // ---- order axis
    s.push_str(r#"<g data-axis="order">"#);
    for o in order_ticks(o_lo, o_hi) {
        let y = sy(o);
        let _ = write!(
            s,
            r#"<line x1="{:.1}" y1="{y:.1}" x2="{x0:.1}" y2="{y:.1}" stroke="{MUTED}"/><text x="{:.1}" y="{:.1}" font-size="{FS_SMALL}" fill="{INK}" text-anchor="end">{o}</text>"#,
            x0 - 4.0,
            x0 - 6.0,
            y + 4.0
        );
    }
    let (cx, cy) = (14.0, (y0 + y1) / 2.0);
    let _ = write!(
        s,
        r#"<text x="{cx:.1}" y="{cy:.1}" font-size="{FS_SMALL}" fill="{INK}" text-anchor="middle" transform="rotate(-90 {cx:.1} {cy:.1})">model order</text></g>"#
    );

    // ---- the chosen modes
    for (k, c) in chosen.iter().enumerate() {
        let x = sx(c[0]);
        let ly = 24.0 + (rows[k] as f64 + 1.0) * LABEL_ROW - 3.0;
        let lx = centres[k];
        let _ = write!(
            s,
            r#"<g data-kind="chosen"><title>mode {}: {} Hz, ζ = {:.2} %</title><line x1="{x:.1}" y1="{y0:.1}" x2="{x:.1}" y2="{y1:.1}" stroke="{INK}" stroke-width="1" stroke-dasharray="5 3"/><path d="M{lx:.1} {:.1}L{x:.1} {y0:.1}" fill="none" stroke="{INK}" stroke-width="1"/><text x="{lx:.1}" y="{ly:.1}" font-size="{FS_SMALL}" fill="{INK}" text-anchor="middle">{}</text></g>"#,
            k + 1,
            hz_text(c[0]),
            c[1] * 100.0,
            ly + 3.0,
            esc(&labels[k])
        );
    }

    // ---- the poles
    let mut marks = Vec::new();
    for o in &chart.orders {
        let y = sy(o.order);
        for (index, p) in o.poles.iter().enumerate() {
            if !(p.freq.is_finite() && p.freq >= f0 && p.freq <= f1) {
                continue;
            }
            let c = PoleClass::of(p);
            let x = sx(p.freq);
            marks.push(PoleMark {
                order: o.order,
                index,
                freq: p.freq,
                zeta: p.zeta,
                class: c.key(),
                words: c.words(vector),
                picked: p.picked,
                x: x - HIT,
                y: y - HIT,
                w: 2.0 * HIT,
                h: 2.0 * HIT,
            });
            s.push_str(&c.mark(x, y, &format!(r#"data-class="{}""#, c.key())));
            if p.picked {
                let _ = write!(
                    s,
                    r#"<circle data-kind="picked" cx="{x:.1}" cy="{y:.1}" r="{:.1}" fill="none" stroke="{INK}" stroke-width="1"/>"#,
                    MARK * 1.9
                );
            }
        }
    }

    // ---- legend
    let mut ly = y1 + 44.0 + 12.0;
    for row in &legend_rows {
        let mut lx = 12.0;
        for &i in row {
            let (t, class) = &legend[i];
            let (mx, my) = (lx + 7.0, ly - 4.0);
            match class {
                Entry::Class(c) => s.push_str(&c.mark(mx, my, r#"data-legend="mark""#)),
                Entry::Picked => {
                    let _ = write!(
                        s,
                        r#"<circle data-legend="picked" cx="{mx:.1}" cy="{my:.1}" r="{:.1}" fill="none" stroke="{INK}"/>"#,
                        MARK * 1.9
                    );
                }
                Entry::Chosen => {
                    let _ = write!(
                        s,
                        r#"<line data-legend="chosen" x1="{mx:.1}" y1="{:.1}" x2="{mx:.1}" y2="{:.1}" stroke="{INK}" stroke-dasharray="5 3"/>"#,
                        my - 7.0,
                        my + 7.0
                    );
                }
                Entry::Sum => {
                    let _ = write!(
                        s,
                        r#"<line data-legend="sum" x1="{:.1}" y1="{my:.1}" x2="{:.1}" y2="{my:.1}" stroke="{C_CURVE}" stroke-width="1.2"/>"#,
                        mx - 7.0,
                        mx + 7.0
                    );
                }
            }
            let _ = write!(
                s,
                r#"<text x="{:.1}" y="{ly:.1}" font-size="{FS_SMALL}" fill="{INK}">{}</text>"#,
                lx + 18.0,
                esc(&clean(t))
            );
            lx += entry_w(t);
        }
        ly += 17.0;
    }
    s.push_str("</svg>");
    Ok(ChartDrawing {
        drawing: Drawing {
            svg: s,
            width,
            height,
            summary,
        },
        poles: marks,
    })
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::{contrast, well_formed};
    use super::*;
    use crate::identify::stability::ChartOrder;

    fn pole(freq: f64, sf: bool, sd: bool, sv: Option<bool>) -> ChartPole {
        ChartPole {
            freq,
            zeta: 0.01,
            stable_freq: sf,
            stable_damping: sd,
            stable_vector: sv,
            mac_previous: None,
            picked: false,
            participation: Vec::new(),
        }
    }

    /// Orders 1..=12 with a pole of every class of a multi-reference table.
    fn chart() -> StabilizationChart {
        let mut orders = Vec::new();
        for o in 1..=12usize {
            let mut poles = vec![
                pole(40.0 + o as f64 * 0.01, o > 1, o > 1, Some(o > 1)),
                pole(120.0, o > 2, false, Some(false)),
                pole(180.0, true, true, Some(false)),
                pole(250.0, true, false, Some(true)),
                pole(300.0 + o as f64 * 7.0, false, false, Some(false)),
            ];
            if o == 12 {
                poles[0].picked = true;
            }
            orders.push(ChartOrder {
                order: o,
                poles,
                note: None,
            });
        }
        StabilizationChart {
            band: [20.0, 400.0],
            orders,
            chosen: vec![[40.1, 0.012], [181.0, 0.02]],
            curve: (0..=380)
                .map(|i| {
                    let f = 20.0 + i as f64;
                    [f, 1e-6 / (1.0 + ((f - 40.0) / 2.0).powi(2)).sqrt() + 1e-8]
                })
                .collect(),
        }
    }

    fn count(svg: &str, class: &str) -> usize {
        svg.matches(&format!(r#"data-class="{class}""#)).count()
    }

    #[test]
    fn one_mark_per_pole_of_each_class() {
        let c = chart();
        let d = stabilization_svg(&c, 900.0, 560.0).unwrap();
        well_formed(&d.svg);
        let mut total = 0;
        for class in PoleClass::ALL {
            let want = c
                .orders
                .iter()
                .flat_map(|o| &o.poles)
                .filter(|p| PoleClass::of(p) == class)
                .count();
            assert!(want > 0, "{class:?} appears in the fixture");
            assert_eq!(count(&d.svg, class.key()), want, "{class:?}");
            total += want;
        }
        assert_eq!(total, 60);
        assert_eq!(d.svg.matches(r#"data-kind="picked""#).count(), 1);
        // every class named in the legend, with its count
        for class in PoleClass::ALL {
            assert!(d.svg.contains(class.words(true)), "{class:?}");
        }
        assert_eq!(d.svg.matches(r#"data-legend="mark""#).count(), 5);
        // the screen reader's summary counts them too
        assert!(d.summary.contains("60 poles"), "{}", d.summary);
        assert!(d
            .svg
            .contains("<title>Stabilization chart, 20–400 Hz, model orders 1–12</title>"));
    }

    #[test]
    fn shapes_differ_by_class() {
        // the mark of each class is another element or path: told apart
        // without colour
        let shapes: Vec<String> = PoleClass::ALL
            .iter()
            .map(|c| {
                let m = c.mark(0.0, 0.0, "");
                // strip colours: what is left is the shape
                let mut t = m.clone();
                for col in [C_NEW, C_FREQ, C_FD, C_FV, C_STABLE] {
                    t = t.replace(col, "");
                }
                t
            })
            .collect();
        for i in 0..shapes.len() {
            for j in 0..i {
                assert_ne!(shapes[i], shapes[j]);
            }
        }
    }

    #[test]
    fn chosen_lines_are_drawn_at_their_frequencies() {
        let c = chart();
        let d = stabilization_svg(&c, 900.0, 560.0).unwrap();
        assert_eq!(d.svg.matches(r#"<g data-kind="chosen">"#).count(), 2);
        assert!(d.svg.contains(">40.10 Hz</text>"));
        assert!(d.svg.contains(">181.0 Hz</text>"));
        // plot from x = 54 to 900 − 62 = 838 over 20–400 Hz
        let x = 54.0 + (181.0 - 20.0) / 380.0 * (838.0 - 54.0);
        assert!(
            d.svg.contains(&format!(r#"<line x1="{x:.1}""#)),
            "line at {x:.1}"
        );
    }

    #[test]
    fn every_drawn_pole_has_its_box_around_its_mark() {
        let c = chart();
        let d = stabilization_drawing(&c, 900.0, 560.0).unwrap();
        let drawn: usize = c.orders.iter().map(|o| o.poles.len()).sum();
        assert_eq!(d.poles.len(), drawn);
        assert_eq!(d.poles.iter().filter(|m| m.picked).count(), 1);
        // plot from x = 54 to 838 over 20–400 Hz; the box centred on the mark
        for m in &d.poles {
            let x = 54.0 + (m.freq - 20.0) / 380.0 * (838.0 - 54.0);
            assert!((m.x + m.w / 2.0 - x).abs() < 1e-9, "{m:?}");
            assert_eq!(m.w, 2.0 * HIT);
        }
        // higher orders higher up
        let y = |o: usize| d.poles.iter().find(|m| m.order == o).unwrap().y;
        assert!(y(12) < y(1));
        // the 250 Hz pole: frequency and vector
        let m = d
            .poles
            .iter()
            .find(|m| m.freq == 250.0 && m.order == 5)
            .unwrap();
        assert_eq!(m.class, "frequency-vector");
    }

    #[test]
    fn one_reference_tables_have_three_classes() {
        let mut c = chart();
        for o in &mut c.orders {
            for p in &mut o.poles {
                p.stable_vector = None;
            }
        }
        let d = stabilization_svg(&c, 700.0, 420.0).unwrap();
        assert_eq!(d.svg.matches(r#"data-legend="mark""#).count(), 3);
        assert!(d.svg.contains("one reference: no vector"));
        assert_eq!(count(&d.svg, "frequency-vector"), 0);
        // 180 Hz (frequency and damping) is now stable in every criterion
        assert_eq!(count(&d.svg, "stable"), 11 + 12);
    }

    #[test]
    fn an_empty_chart_or_a_bad_size_is_refused() {
        let mut c = chart();
        for o in &mut c.orders {
            o.poles.clear();
        }
        let e = stabilization_svg(&c, 900.0, 560.0).unwrap_err();
        assert!(e.message.contains("no pole in 20–400 Hz"), "{e}");
        assert!(e.message.contains("12 model orders"), "{e}");
        c.orders.clear();
        assert!(stabilization_svg(&c, 900.0, 560.0).is_err());
        let e = stabilization_svg(&chart(), 100.0, 560.0).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("width"), "{e}");
        let e = stabilization_svg(&chart(), 900.0, f64::NAN).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("height"), "{e}");
        let mut c = chart();
        c.band = [400.0, 20.0];
        assert!(stabilization_svg(&c, 900.0, 560.0).is_err());
    }

    #[test]
    fn colours_keep_their_contrast_on_white() {
        // WCAG 2.1: text 4.5:1 (SC 1.4.3), graphical objects 3:1 (SC 1.4.11)
        for t in [INK, MUTED] {
            assert!(contrast(t, "#ffffff") >= 4.5, "{t}");
        }
        for m in [C_NEW, C_FREQ, C_FD, C_FV, C_STABLE, C_CURVE] {
            let r = contrast(m, "#ffffff");
            assert!(r >= 3.0, "{m}: {r:.2}");
        }
    }

    #[test]
    fn close_labels_are_pushed_apart_on_one_row() {
        let c = spread_labels(&[(100.0, 50.0), (110.0, 50.0), (300.0, 50.0)], 0.0, 400.0).unwrap();
        assert!((c[1] - c[0] - 56.0).abs() < 1e-9, "{c:?}");
        assert_eq!(c[2], 300.0);
        // against the right edge: moved left, still apart
        let c = spread_labels(&[(380.0, 50.0), (390.0, 50.0)], 0.0, 400.0).unwrap();
        assert_eq!(c, vec![319.0, 375.0]);
        assert!(spread_labels(&[(100.0, 250.0), (110.0, 250.0)], 0.0, 400.0).is_none());
    }

    #[test]
    fn close_modes_get_labels_on_separate_rows() {
        let (rows, n) = label_rows(&[(100.0, 50.0), (110.0, 50.0), (120.0, 50.0), (300.0, 50.0)]);
        assert_eq!(rows, vec![0, 1, 2, 0]);
        assert_eq!(n, 3);
    }
}
