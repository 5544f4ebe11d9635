//! Drawing of FRF plots, generic over a plotters [`DrawingBackend`].
//!
//! The same code draws the page's plots (SVG text rendered in the page's
//! worker) and the exported SVG files. Axes, ticks and legends are laid out
//! here in pixels, so no font metrics from the backend are needed (a Web
//! Worker has no DOM to measure text with).
//!
//! A plot is described by a [`PlotSpec`] (JSON on the page). The drawing
//! returns one [`Frame`] per panel: its pixel rectangle and axis ranges, so
//! the page can map a pointer position to a frequency (cursor readout, zoom,
//! pan) and ask [`probe`] for the values there.

use crate::error::{Error, Result};
use crate::frf::{FrfSet, SignalKind};
use crate::units::Quantity;
use num_complex::Complex64;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::FontTransform;
use plotters_backend::DrawingErrorKind;
use std::collections::BTreeMap;

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
}

impl PlotSpec {
    pub fn from_json(text: &str) -> Result<PlotSpec> {
        serde_json::from_str(text)
            .map_err(|e| Error::usage(format!("plot description: {e}")).field("plot"))
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

/// The colour-blind-safe line colours (after the Okabe–Ito set, reordered,
/// yellow dropped for contrast on white).
pub const PALETTE: [(u8, u8, u8); 7] = [
    (0x00, 0x72, 0xB2),
    (0xD5, 0x5E, 0x00),
    (0x00, 0x9E, 0x73),
    (0xCC, 0x79, 0xA7),
    (0xE6, 0x9F, 0x00),
    (0x56, 0xB4, 0xE9),
    (0x33, 0x33, 0x33),
];

/// Dash patterns (dash, gap in px; 0 = solid), combined with the colours so
/// that curves stay apart in grey-scale print.
pub const DASHES: [(u32, u32); 4] = [(0, 0), (9, 4), (2, 3), (14, 4)];

fn colour(i: usize) -> RGBColor {
    let (r, g, b) = PALETTE[i % PALETTE.len()];
    RGBColor(r, g, b)
}
fn dash(i: usize) -> (u32, u32) {
    DASHES[i % DASHES.len()]
}

/// dB reference of a plotted spectrum quantity: the ISO 1683 values from
/// [`crate::levels::reference`] (an SI unit, marked as such, where the
/// standard gives none). FRFs are plotted in dB re 1 SI unit of the ratio
/// (common practice; ISO 1683 defines no FRF references).
pub fn db_reference(q: Quantity, rotational: bool) -> (f64, String) {
    let r = crate::levels::reference(q, rotational);
    let text = if r.standardised {
        r.text
    } else {
        format!("{}, no standard reference", r.text)
    };
    (r.value, text)
}

/// A resolved curve.
#[derive(Debug, Clone)]
struct Curve {
    label: String,
    freqs: Vec<f64>,
    values: Vec<Complex64>,
    /// dB level of each value and the axis text of the reference.
    level: Vec<f64>,
    db_label: String,
    unit: String,
    /// A line spectrum with empty lines (harmonics): drawn as stems.
    stems: bool,
}

fn ratio_unit(set: &FrfSet, i: usize, j: usize) -> String {
    let ro = set.outputs.get(i).is_some_and(|d| d.dir.is_rotational());
    let ri = set.inputs.get(j).is_some_and(|d| d.dir.is_rotational());
    let o = set.out_qty.si_unit(ro);
    if set.signal.is_some() || set.in_qty == Quantity::Dimensionless {
        return o.to_string();
    }
    format!("({o})/({})", set.in_qty.si_unit(ri))
}

fn resolve(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>) -> Result<Vec<Curve>> {
    let mut out = Vec::new();
    for s in &spec.series {
        let set = sets.get(&s.set).ok_or_else(|| {
            Error::missing(format!("no data set '{}' is loaded", s.set)).field("plot series")
        })?;
        if s.out >= set.n_out() || s.inp >= set.n_in() {
            return Err(Error::usage(format!(
                "entry ({}, {}) is outside set '{}' of {}×{}",
                s.out,
                s.inp,
                s.set,
                set.n_out(),
                set.n_in()
            ))
            .field("plot series"));
        }
        let values = set.column(s.out, s.inp);
        let ro = set.outputs[s.out].dir.is_rotational();
        let (level, db_label) = match set.signal {
            Some(kind) => {
                let (r, name) = db_reference(set.out_qty, ro);
                let lv: Vec<f64> = values
                    .iter()
                    .map(|v| match kind {
                        // Peak amplitude to RMS for the level.
                        SignalKind::Peak => 20.0 * (v.norm() / 2f64.sqrt() / r).log10(),
                        SignalKind::Rms => 20.0 * (v.norm() / r).log10(),
                        // Mean-square quantities: 10 log10(P / ref²).
                        SignalKind::Autopower | SignalKind::Psd => {
                            10.0 * (v.re.abs() / (r * r)).log10()
                        }
                    })
                    .collect();
                let per_hz = if kind == SignalKind::Psd { "²/Hz" } else { "" };
                (lv, format!("dB re ({name}){per_hz}"))
            }
            None => {
                let lv = values.iter().map(|v| 20.0 * v.norm().log10()).collect();
                (lv, format!("dB re 1 {}", ratio_unit(set, s.out, s.inp)))
            }
        };
        let label = s.label.clone().unwrap_or_else(|| {
            format!(
                "{}: {} / {}",
                set.name, set.outputs[s.out], set.inputs[s.inp]
            )
        });
        let stems = set.signal.is_some() && values.iter().any(|v| v.norm() == 0.0);
        out.push(Curve {
            stems,
            label,
            freqs: set.freqs.clone(),
            values,
            level,
            db_label,
            unit: ratio_unit(set, s.out, s.inp),
        });
    }
    Ok(out)
}

#[derive(Debug, Clone, Copy)]
struct Axis {
    min: f64,
    max: f64,
    log: bool,
}

impl Axis {
    fn t(&self, v: f64) -> f64 {
        if self.log {
            (v.log10() - self.min.log10()) / (self.max.log10() - self.min.log10())
        } else {
            (v - self.min) / (self.max - self.min)
        }
    }
    fn ticks(&self) -> (Vec<f64>, Vec<f64>) {
        if self.log {
            log_ticks(self.min, self.max)
        } else {
            (lin_ticks(self.min, self.max), Vec::new())
        }
    }
}

/// Ticks at 1-2-5 steps covering [a, b].
fn lin_ticks(a: f64, b: f64) -> Vec<f64> {
    let span = b - a;
    if span.is_nan() || span <= 0.0 || !span.is_finite() {
        return vec![a];
    }
    let raw = span / 6.0;
    let p = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * p)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * p);
    let mut v = (a / step).ceil() * step;
    let mut out = Vec::new();
    while v <= b + step * 1e-9 && out.len() < 50 {
        out.push(if v.abs() < step * 1e-9 { 0.0 } else { v });
        v += step;
    }
    out
}

/// Major ticks (labelled) and minor ticks on a log axis.
fn log_ticks(a: f64, b: f64) -> (Vec<f64>, Vec<f64>) {
    let (mut major, mut minor) = (Vec::new(), Vec::new());
    let decades = (b / a).log10();
    let labelled: &[f64] = if decades <= 1.2 {
        &[1.0, 2.0, 3.0, 5.0, 7.0]
    } else if decades <= 3.5 {
        &[1.0, 2.0, 5.0]
    } else {
        &[1.0]
    };
    let e0 = a.log10().floor() as i32;
    let e1 = b.log10().ceil() as i32;
    for e in e0..=e1 {
        let p = 10f64.powi(e);
        for m in 1..10 {
            let v = m as f64 * p;
            if v < a * (1.0 - 1e-9) || v > b * (1.0 + 1e-9) {
                continue;
            }
            if labelled.contains(&(m as f64)) {
                major.push(v);
            } else {
                minor.push(v);
            }
        }
    }
    (major, minor)
}

/// Short tick text: 1.5k for 1500, 0.2 for 0.2, 1e-05 for tiny values.
pub fn tick_text(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 {
        return "0".into();
    }
    if !(1e-3..1e6).contains(&a) {
        return format!("{v:.0e}");
    }
    if a >= 1e3 {
        return format!("{}k", trim(v / 1e3));
    }
    trim(v)
}

fn trim(v: f64) -> String {
    let s = format!("{v:.3}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.to_string()
    }
}

struct Panel {
    x0: i32,
    y0: i32,
    x1: i32,
    y1: i32,
    x: Axis,
    y: Axis,
}

impl Panel {
    fn px(&self, x: f64, y: f64) -> (f64, f64) {
        (
            self.x0 as f64 + self.x.t(x) * (self.x1 - self.x0) as f64,
            self.y1 as f64 - self.y.t(y) * (self.y1 - self.y0) as f64,
        )
    }
    fn frame(&self, x_is: &str) -> Frame {
        Frame {
            x0: self.x0,
            y0: self.y0,
            x1: self.x1,
            y1: self.y1,
            x_min: self.x.min,
            x_max: self.x.max,
            x_log: self.x.log,
            y_min: self.y.min,
            y_max: self.y.max,
            y_log: self.y.log,
            x_is: x_is.into(),
        }
    }
}

fn derr<E: std::error::Error + Send + Sync>(e: DrawingErrorKind<E>) -> Error {
    Error::io(format!("drawing failed: {e}"))
}

const INK: RGBColor = RGBColor(0x22, 0x2a, 0x30);
const GRID: RGBColor = RGBColor(0xdd, 0xe2, 0xe5);
const GRID_MINOR: RGBColor = RGBColor(0xee, 0xf1, 0xf2);
const FONT: &str = "sans-serif";

fn text<DB: DrawingBackend>(
    b: &mut DB,
    s: &str,
    (x, y): (i32, i32),
    size: f64,
    pos: Pos,
    rotate: bool,
) -> Result<()> {
    // The SVG backend writes font-size = size / 1.24; give it the pixel size we mean.
    let mut st = TextStyle::from((FONT, size * 1.24).into_font())
        .color(&INK)
        .pos(pos);
    if rotate {
        st = st.transform(FontTransform::Rotate270);
    }
    b.draw_text(s, &st, (x, y)).map_err(derr)
}

/// Clip segment p–q to the rectangle (Liang–Barsky); None when outside.
fn clip(p: (f64, f64), q: (f64, f64), r: (f64, f64, f64, f64)) -> Option<((f64, f64), (f64, f64))> {
    let (dx, dy) = (q.0 - p.0, q.1 - p.1);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (pk, qk) in [
        (-dx, p.0 - r.0),
        (dx, r.2 - p.0),
        (-dy, p.1 - r.1),
        (dy, r.3 - p.1),
    ] {
        if pk == 0.0 {
            if qk < 0.0 {
                return None;
            }
        } else {
            let t = qk / pk;
            if pk < 0.0 {
                t0 = t0.max(t);
            } else {
                t1 = t1.min(t);
            }
        }
    }
    if t0 > t1 {
        return None;
    }
    Some((
        (p.0 + t0 * dx, p.1 + t0 * dy),
        (p.0 + t1 * dx, p.1 + t1 * dy),
    ))
}

/// Polylines of the visible part of a curve, in pixels.
fn visible(panel: &Panel, pts: &[(f64, f64)]) -> Vec<Vec<(f64, f64)>> {
    let r = (
        panel.x0 as f64,
        panel.y0 as f64,
        panel.x1 as f64,
        panel.y1 as f64,
    );
    let ok = |(x, y): (f64, f64)| {
        x.is_finite() && y.is_finite() && (!panel.x.log || x > 0.0) && (!panel.y.log || y > 0.0)
    };
    let mut lines: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut cur: Vec<(f64, f64)> = Vec::new();
    for w in pts.windows(2) {
        if !ok(w[0]) || !ok(w[1]) {
            if cur.len() > 1 {
                lines.push(std::mem::take(&mut cur));
            }
            cur.clear();
            continue;
        }
        let a = panel.px(w[0].0, w[0].1);
        let b = panel.px(w[1].0, w[1].1);
        match clip(a, b, r) {
            Some((c, d)) => {
                let joined = cur
                    .last()
                    .is_some_and(|l| (l.0 - c.0).abs() < 1e-6 && (l.1 - c.1).abs() < 1e-6);
                if !joined {
                    if cur.len() > 1 {
                        lines.push(std::mem::take(&mut cur));
                    }
                    cur.clear();
                    cur.push(c);
                }
                cur.push(d);
            }
            None => {
                if cur.len() > 1 {
                    lines.push(std::mem::take(&mut cur));
                }
                cur.clear();
            }
        }
    }
    if cur.len() > 1 {
        lines.push(cur);
    }
    lines
}

/// Stroke a pixel polyline with a dash pattern.
fn stroke<DB: DrawingBackend>(
    b: &mut DB,
    line: &[(f64, f64)],
    c: RGBColor,
    (on, off): (u32, u32),
) -> Result<()> {
    let style = ShapeStyle::from(&c).stroke_width(2);
    let ip = |p: (f64, f64)| (p.0.round() as i32, p.1.round() as i32);
    if on == 0 {
        return b
            .draw_path(line.iter().map(|p| ip(*p)), &style)
            .map_err(derr);
    }
    let (on, off) = (on as f64, off as f64);
    let mut drawing = true;
    let mut left = on;
    let mut seg: Vec<(f64, f64)> = vec![line[0]];
    for w in line.windows(2) {
        let (mut a, b2) = (w[0], w[1]);
        let mut len = ((b2.0 - a.0).powi(2) + (b2.1 - a.1).powi(2)).sqrt();
        while len > left {
            let t = left / len;
            let m = (a.0 + t * (b2.0 - a.0), a.1 + t * (b2.1 - a.1));
            if drawing {
                seg.push(m);
                b.draw_path(seg.iter().map(|p| ip(*p)), &style)
                    .map_err(derr)?;
                seg.clear();
            } else {
                seg = vec![m];
            }
            drawing = !drawing;
            len -= left;
            left = if drawing { on } else { off };
            a = m;
        }
        left -= len;
        if drawing {
            seg.push(b2);
        }
    }
    if drawing && seg.len() > 1 {
        b.draw_path(seg.iter().map(|p| ip(*p)), &style)
            .map_err(derr)?;
    }
    Ok(())
}

/// Grid, ticks, tick labels and axis titles of a panel.
fn axes<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    x_title: Option<&str>,
    y_title: &str,
    y_fixed_ticks: Option<&[f64]>,
    x_grid: bool,
) -> Result<()> {
    let (xmaj, xmin) = if x_grid {
        p.x.ticks()
    } else {
        (Vec::new(), Vec::new())
    };
    let (ymaj, ymin) = match y_fixed_ticks {
        Some(t) => (t.to_vec(), Vec::new()),
        None => p.y.ticks(),
    };
    b.draw_rect((p.x0, p.y0), (p.x1, p.y1), &WHITE, true)
        .map_err(derr)?;
    for (vals, c) in [(&xmin, GRID_MINOR), (&xmaj, GRID)] {
        for v in vals.iter() {
            let (x, _) = p.px(*v, p.y.min.max(f64::MIN_POSITIVE));
            let x = x.round() as i32;
            b.draw_line((x, p.y0), (x, p.y1), &c).map_err(derr)?;
        }
    }
    for (vals, c) in [(&ymin, GRID_MINOR), (&ymaj, GRID)] {
        for v in vals.iter() {
            let (_, y) = p.px(p.x.min, *v);
            let y = y.round() as i32;
            b.draw_line((p.x0, y), (p.x1, y), &c).map_err(derr)?;
        }
    }
    b.draw_rect((p.x0, p.y0), (p.x1, p.y1), &INK, false)
        .map_err(derr)?;
    if x_title.is_some() {
        for v in &xmaj {
            let (x, _) = p.px(*v, p.y.min.max(f64::MIN_POSITIVE));
            let x = x.round() as i32;
            b.draw_line((x, p.y1), (x, p.y1 + 4), &INK).map_err(derr)?;
            text(
                b,
                &tick_text(*v),
                (x, p.y1 + 6),
                12.0,
                Pos::new(HPos::Center, VPos::Top),
                false,
            )?;
        }
    }
    for v in &ymaj {
        let (_, y) = p.px(p.x.min, *v);
        let y = y.round() as i32;
        b.draw_line((p.x0 - 4, y), (p.x0, y), &INK).map_err(derr)?;
        text(
            b,
            &tick_text(*v),
            (p.x0 - 6, y),
            12.0,
            Pos::new(HPos::Right, VPos::Center),
            false,
        )?;
    }
    if let Some(t) = x_title {
        text(
            b,
            t,
            ((p.x0 + p.x1) / 2, p.y1 + 24),
            13.0,
            Pos::new(HPos::Center, VPos::Top),
            false,
        )?;
    }
    text(
        b,
        y_title,
        (p.x0 - 52, (p.y0 + p.y1) / 2),
        13.0,
        Pos::new(HPos::Center, VPos::Center),
        true,
    )?;
    Ok(())
}

fn legend<DB: DrawingBackend>(b: &mut DB, p: &Panel, labels: &[String]) -> Result<()> {
    legend_with(b, p, labels, false)
}

fn legend_with<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    labels: &[String],
    patches: bool,
) -> Result<()> {
    if labels.is_empty() {
        return Ok(());
    }
    let shown: Vec<String> = labels
        .iter()
        .map(|l| {
            if l.chars().count() > 72 {
                format!("{}…", l.chars().take(71).collect::<String>())
            } else {
                l.clone()
            }
        })
        .collect();
    let w = shown.iter().map(|l| l.chars().count()).max().unwrap_or(0) as i32 * 7 + 44;
    let h = shown.len() as i32 * 18 + 8;
    let (x0, y0) = (p.x1 - w - 8, p.y0 + 8);
    b.draw_rect(
        (x0, y0),
        (x0 + w, y0 + h),
        &RGBColor(0xfb, 0xfc, 0xfc),
        true,
    )
    .map_err(derr)?;
    b.draw_rect((x0, y0), (x0 + w, y0 + h), &GRID, false)
        .map_err(derr)?;
    for (i, l) in shown.iter().enumerate() {
        let y = y0 + 13 + i as i32 * 18;
        if patches {
            b.draw_rect((x0 + 10, y - 6), (x0 + 30, y + 6), &colour(i), true)
                .map_err(derr)?;
            if i % 2 == 1 {
                for k in 0..4 {
                    let xx = x0 + 12 + 5 * k;
                    b.draw_line((xx, y + 6), (xx + 4, y - 6), &WHITE)
                        .map_err(derr)?;
                }
            }
        } else {
            stroke(
                b,
                &[((x0 + 6) as f64, y as f64), ((x0 + 34) as f64, y as f64)],
                colour(i),
                dash(i),
            )?;
        }
        text(
            b,
            l,
            (x0 + 40, y),
            12.0,
            Pos::new(HPos::Left, VPos::Center),
            false,
        )?;
    }
    Ok(())
}

fn finite_range(vals: impl Iterator<Item = f64>, positive: bool) -> Option<(f64, f64)> {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for v in vals {
        if v.is_finite() && (!positive || v > 0.0) {
            lo = lo.min(v);
            hi = hi.max(v);
        }
    }
    (lo <= hi).then_some((lo, hi))
}

fn pad(lo: f64, hi: f64, log: bool) -> (f64, f64) {
    if log {
        if hi <= lo {
            return (lo / 2.0, hi * 2.0);
        }
        return (lo / (hi / lo).powf(0.04), hi * (hi / lo).powf(0.04));
    }
    if hi <= lo {
        let d = if lo == 0.0 { 1.0 } else { lo.abs() * 0.1 };
        return (lo - d, hi + d);
    }
    let d = (hi - lo) * 0.05;
    (lo - d, hi + d)
}

fn x_axis(spec: &PlotSpec, curves: &[Curve]) -> Result<Axis> {
    let log = spec.x_log;
    let (lo, hi) = match spec.x_range {
        Some([a, b]) if a < b && (!log || a > 0.0) => (a, b),
        Some(_) => {
            return Err(
                Error::usage("the x range must be increasing (and positive on a log axis)")
                    .field("x_range"),
            )
        }
        None => finite_range(curves.iter().flat_map(|c| c.freqs.iter().copied()), log)
            .ok_or_else(|| Error::missing("nothing to plot: no frequencies"))?,
    };
    let (lo, hi) = if lo == hi { pad(lo, hi, log) } else { (lo, hi) };
    Ok(Axis {
        min: lo,
        max: hi,
        log,
    })
}

fn in_x(ax: &Axis, f: f64) -> bool {
    f >= ax.min && f <= ax.max
}

fn y_axis(spec_range: Option<[f64; 2]>, vals: Vec<f64>, log: bool, db: bool) -> Axis {
    if let Some([a, b]) = spec_range {
        if a < b && (!log || a > 0.0) {
            return Axis {
                min: a,
                max: b,
                log,
            };
        }
    }
    let (lo, hi) = finite_range(vals.into_iter(), log).unwrap_or((1.0, 10.0));
    let (mut lo, mut hi) = pad(lo, hi, log);
    if db {
        lo = (lo / 10.0).floor() * 10.0;
        hi = (hi / 10.0).ceil() * 10.0;
    }
    Axis {
        min: lo,
        max: hi,
        log,
    }
}

fn draw_curves<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    curves: &[Vec<(f64, f64)>],
) -> Result<()> {
    draw_curves_stems(b, p, curves, &[], false)
}

/// Lines, or for line spectra (`stems[i]`) a marker at each line, with a
/// stem down to the axis when `stem_lines`.
fn draw_curves_stems<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    curves: &[Vec<(f64, f64)>],
    stems: &[bool],
    stem_lines: bool,
) -> Result<()> {
    for (i, pts) in curves.iter().enumerate() {
        if stems.get(i).copied().unwrap_or(false) {
            let c = colour(i);
            for &(x, y) in pts {
                let ok = x.is_finite() && y.is_finite() && (!p.x.log || x > 0.0);
                if !ok || x < p.x.min || x > p.x.max || y < p.y.min || y > p.y.max {
                    continue;
                }
                let (px, py) = p.px(x, y);
                let (px, py) = (px.round() as i32, py.round() as i32);
                if stem_lines {
                    b.draw_line((px, p.y1), (px, py), &c).map_err(derr)?;
                }
                b.draw_circle((px, py), 3, &c, i % 2 == 0).map_err(derr)?;
            }
            continue;
        }
        for line in visible(p, pts) {
            stroke(b, &line, colour(i), dash(i))?;
        }
    }
    Ok(())
}

fn wrap_phase(v: Complex64) -> f64 {
    v.arg().to_degrees()
}

/// Draw `spec` on a backend. Returns the panels' frames.
pub fn draw<DB: DrawingBackend>(
    b: &mut DB,
    spec: &PlotSpec,
    sets: &BTreeMap<String, FrfSet>,
) -> Result<Vec<Frame>> {
    let (w, h) = b.get_size();
    let (w, h) = (w as i32, h as i32);
    b.draw_rect((0, 0), (w, h), &WHITE, true).map_err(derr)?;
    let resolved = match spec.kind {
        PlotKind::Lines => lines_with_x(spec, sets)?,
        PlotKind::Bars => bars_from_set(spec, sets)?,
        _ => spec.clone(),
    };
    let spec = &resolved;
    let top = if spec.title.is_empty() { 14 } else { 34 };
    if !spec.title.is_empty() {
        text(
            b,
            &spec.title,
            (w / 2, 8),
            15.0,
            Pos::new(HPos::Center, VPos::Top),
            false,
        )?;
    }
    let (left, right, bottom) = (84, w - 18, h - 52);
    let frames = match spec.kind {
        PlotKind::Lines => draw_lines(b, spec, (left, top, right, bottom))?,
        PlotKind::Bars => draw_bars(b, spec, (left, top, right, bottom))?,
        kind => {
            let curves = resolve(spec, sets)?;
            if curves.is_empty() {
                return Err(Error::missing("nothing to plot: no curve chosen"));
            }
            draw_frf(b, spec, kind, &curves, (left, top, right, bottom))?
        }
    };
    b.present().map_err(derr)?;
    Ok(frames)
}

fn draw_frf<DB: DrawingBackend>(
    b: &mut DB,
    spec: &PlotSpec,
    kind: PlotKind,
    curves: &[Curve],
    (left, top, right, bottom): (i32, i32, i32, i32),
) -> Result<Vec<Frame>> {
    // Curves of different quantities share one axis only with their own
    // reference or unit named in the legend.
    let mixed_db = curves.iter().any(|c| c.db_label != curves[0].db_label);
    let mixed_unit = curves.iter().any(|c| c.unit != curves[0].unit);
    let level_db_mixed = spec.db && kind != PlotKind::ReIm && kind != PlotKind::Nyquist;
    let labels: Vec<String> = curves
        .iter()
        .map(|c| {
            if level_db_mixed && mixed_db {
                format!("{} [{}]", c.label, c.db_label)
            } else if !level_db_mixed && mixed_unit {
                format!("{} [{}]", c.label, c.unit)
            } else {
                c.label.clone()
            }
        })
        .collect();
    let unit_text = if mixed_unit {
        "units in the legend".to_string()
    } else {
        curves[0].unit.clone()
    };
    let db_text = if mixed_db {
        "dB, reference in the legend".to_string()
    } else {
        curves[0].db_label.clone()
    };
    let fx =
        |c: &Curve, ys: Vec<f64>| -> Vec<(f64, f64)> { c.freqs.iter().copied().zip(ys).collect() };
    let freq_title = "frequency (Hz)";
    match kind {
        PlotKind::Nyquist => {
            let pts: Vec<Vec<(f64, f64)>> = curves
                .iter()
                .map(|c| c.values.iter().map(|v| (v.re, v.im)).collect())
                .collect();
            let xr = finite_range(pts.iter().flatten().map(|p| p.0), false).unwrap_or((-1.0, 1.0));
            let (xa, xb) = pad(xr.0, xr.1, false);
            let mut x = Axis {
                min: xa,
                max: xb,
                log: false,
            };
            if let Some([a, bb]) = spec.x_range {
                if a < bb {
                    x = Axis {
                        min: a,
                        max: bb,
                        log: false,
                    };
                }
            }
            let y = y_axis(
                spec.y_range,
                pts.iter().flatten().map(|p| p.1).collect(),
                false,
                false,
            );
            let p = Panel {
                x0: left,
                y0: top,
                x1: right,
                y1: bottom,
                x,
                y,
            };
            let u = &unit_text;
            axes(
                b,
                &p,
                Some(&format!("real part ({u})")),
                &format!("imaginary part ({u})"),
                None,
                true,
            )?;
            draw_curves(b, &p, &pts)?;
            legend(b, &p, &labels)?;
            Ok(vec![p.frame("real")])
        }
        PlotKind::Bode | PlotKind::Magnitude | PlotKind::ReIm => {
            let x = x_axis(spec, curves)?;
            let two = kind != PlotKind::Magnitude;
            let split = if kind == PlotKind::Bode {
                top + ((bottom - top) as f64 * 0.64) as i32
            } else {
                top + (bottom - top) / 2
            };
            let (y1a, y0b) = if two {
                (split - 14, split + 14)
            } else {
                (bottom, bottom)
            };
            let visible_vals = |f: &dyn Fn(&Curve, usize) -> f64| -> Vec<f64> {
                curves
                    .iter()
                    .flat_map(|c| {
                        (0..c.freqs.len())
                            .filter(|k| in_x(&x, c.freqs[*k]))
                            .map(|k| f(c, k))
                            .collect::<Vec<_>>()
                    })
                    .collect()
            };
            let (top_pts, top_axis, top_title): (Vec<Vec<(f64, f64)>>, Axis, String) =
                if kind == PlotKind::ReIm {
                    let v = visible_vals(&|c, k| c.values[k].re);
                    (
                        curves
                            .iter()
                            .map(|c| fx(c, c.values.iter().map(|v| v.re).collect()))
                            .collect(),
                        y_axis(spec.y_range, v, false, false),
                        format!("real part ({unit_text})"),
                    )
                } else if spec.db {
                    let v = visible_vals(&|c, k| c.level[k]);
                    (
                        curves.iter().map(|c| fx(c, c.level.clone())).collect(),
                        y_axis(spec.y_range, v, false, true),
                        format!("level ({db_text})"),
                    )
                } else {
                    let v = visible_vals(&|c, k| c.values[k].norm());
                    (
                        curves
                            .iter()
                            .map(|c| fx(c, c.values.iter().map(|v| v.norm()).collect()))
                            .collect(),
                        y_axis(spec.y_range, v, false, false),
                        format!("magnitude ({unit_text})"),
                    )
                };
            let p1 = Panel {
                x0: left,
                y0: top,
                x1: right,
                y1: y1a,
                x,
                y: top_axis,
            };
            axes(
                b,
                &p1,
                if two { None } else { Some(freq_title) },
                &top_title,
                None,
                true,
            )?;
            let stems: Vec<bool> = curves.iter().map(|c| c.stems).collect();
            draw_curves_stems(b, &p1, &top_pts, &stems, kind != PlotKind::ReIm)?;
            let mut frames = vec![p1.frame("frequency")];
            if two {
                let (pts, axis, title, fixed): (_, Axis, String, Option<Vec<f64>>) =
                    if kind == PlotKind::ReIm {
                        let v = visible_vals(&|c, k| c.values[k].im);
                        (
                            curves
                                .iter()
                                .map(|c| fx(c, c.values.iter().map(|v| v.im).collect()))
                                .collect::<Vec<_>>(),
                            y_axis(None, v, false, false),
                            format!("imaginary part ({unit_text})"),
                            None,
                        )
                    } else {
                        (
                            curves
                                .iter()
                                .map(|c| {
                                    // An empty line of a line spectrum has no phase.
                                    let ph = c.values.iter().map(|v| {
                                        if c.stems && v.norm() == 0.0 {
                                            f64::NAN
                                        } else {
                                            wrap_phase(*v)
                                        }
                                    });
                                    fx(c, ph.collect())
                                })
                                .collect::<Vec<_>>(),
                            Axis {
                                min: -180.0,
                                max: 180.0,
                                log: false,
                            },
                            "phase (°)".to_string(),
                            Some(vec![-180.0, -90.0, 0.0, 90.0, 180.0]),
                        )
                    };
                let p2 = Panel {
                    x0: left,
                    y0: y0b,
                    x1: right,
                    y1: bottom,
                    x,
                    y: axis,
                };
                axes(b, &p2, Some(freq_title), &title, fixed.as_deref(), true)?;
                // Phase wraps at ±180°: break the line there instead of drawing a vertical jump.
                let pts: Vec<Vec<(f64, f64)>> = if kind == PlotKind::Bode {
                    pts.into_iter()
                        .map(|c: Vec<(f64, f64)>| {
                            let mut o = Vec::with_capacity(c.len());
                            for (i, q) in c.iter().enumerate() {
                                if i > 0 && (q.1 - c[i - 1].1).abs() > 180.0 {
                                    o.push((f64::NAN, f64::NAN));
                                }
                                o.push(*q);
                            }
                            o
                        })
                        .collect()
                } else {
                    pts
                };
                draw_curves_stems(b, &p2, &pts, &stems, false)?;
                frames.push(p2.frame("frequency"));
            }
            legend(b, &p1, &labels)?;
            Ok(frames)
        }
        PlotKind::Lines | PlotKind::Bars => Err(Error::usage("not an FRF plot")),
    }
}

fn lines_with_x(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>) -> Result<PlotSpec> {
    let mut spec = spec.clone();
    for l in &mut spec.lines {
        if let Some(id) = &l.x_from {
            let set = sets.get(id).ok_or_else(|| {
                Error::missing(format!("no data set '{id}' is loaded")).field("lines x_from")
            })?;
            l.x = set.freqs.clone();
        }
    }
    Ok(spec)
}

/// Band level of each input column of one output: 10·log10(Σ|v|²/ref²) over
/// the lines inside the x range (energetic sum of lines, common practice).
/// Bars from a report's `TargetRanking` (see `crate::predict::paths`), read
/// from JSON where null stands for a level without value.
fn bars_from_ranking(spec: &PlotSpec, t: &serde_json::Value) -> Result<PlotSpec> {
    let num = |v: &serde_json::Value| v.as_f64().unwrap_or(f64::NAN);
    let text = |v: &serde_json::Value| v.as_str().unwrap_or("?").to_string();
    let bad = || {
        Error::usage("path ranking: expected a target ranking from a run report")
            .field("path_ranking")
    };
    let bands = t["bands"].as_array().ok_or_else(bad)?;
    let mut names: Vec<String> = Vec::new();
    for list in std::iter::once(&t["overall"]).chain(bands.iter().map(|b| &b["paths"])) {
        for p in list.as_array().into_iter().flatten() {
            let n = text(&p["path"]);
            if !names.contains(&n) {
                names.push(n);
            }
        }
    }
    let shown: Vec<&serde_json::Value> = bands
        .iter()
        .filter(|b| {
            let any = b["paths"]
                .as_array()
                .is_some_and(|ps| ps.iter().any(|p| num(&p["level_db"]).is_finite()));
            let (lo, hi) = (num(&b["band"]["lower"]), num(&b["band"]["upper"]));
            any && spec.x_range.map_or(true, |[a, z]| hi >= a && lo <= z)
        })
        .collect();
    let mut out = spec.clone();
    out.categories = shown.iter().map(|b| text(&b["band"]["label"])).collect();
    out.groups = names
        .iter()
        .map(|n| BarGroup {
            label: n.clone(),
            values: shown
                .iter()
                .map(|b| {
                    b["paths"]
                        .as_array()
                        .into_iter()
                        .flatten()
                        .find(|p| p["path"].as_str() == Some(n))
                        .map_or(f64::NAN, |p| num(&p["level_db"]))
                })
                .collect(),
        })
        .collect();
    let (w, w_short) = match t["weighting"].as_str() {
        Some("a") => (", A-weighted", "(A)"),
        Some("c") => (", C-weighted", "(C)"),
        _ => ("", ""),
    };
    if out.y_label.is_empty() {
        out.y_label = format!("path contribution ({}{w})", text(&t["unit"]));
    }
    if out.x_label.is_empty() {
        out.x_label = "one-third-octave band (Hz)".into();
    }
    if out.title.is_empty() {
        out.title = format!(
            "paths at {}: total {:.1} dB{w_short}, energetic sum of paths {:.1} dB{w_short}",
            text(&t["target"]),
            num(&t["total_db"]),
            num(&t["sum_of_paths_db"])
        );
    }
    Ok(out)
}

fn bars_from_set(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>) -> Result<PlotSpec> {
    if let Some(t) = &spec.path_ranking {
        return bars_from_ranking(spec, t);
    }
    let Some(r) = &spec.ranking else {
        return Ok(spec.clone());
    };
    let set = sets.get(&r.set).ok_or_else(|| {
        Error::missing(format!("no data set '{}' is loaded", r.set)).field("ranking")
    })?;
    if r.out >= set.n_out() {
        return Err(Error::usage(format!(
            "output {} is outside set '{}' with {} outputs",
            r.out,
            r.set,
            set.n_out()
        ))
        .field("ranking"));
    }
    let (lo, hi) = match spec.x_range {
        Some([a, b]) => (a, b),
        None => (f64::NEG_INFINITY, f64::INFINITY),
    };
    let ro = set.outputs[r.out].dir.is_rotational();
    let (reference, ref_text) = match set.signal {
        Some(_) => {
            let (v, t) = db_reference(set.out_qty, ro);
            (v, format!("dB re {t}"))
        }
        None => (1.0, format!("dB re 1 {}", ratio_unit(set, r.out, 0))),
    };
    let mut values = Vec::new();
    for j in 0..set.n_in() {
        let col = set.column(r.out, j);
        // Mean square per line: spectra as crate::levels defines it (peak |X|²/2,
        // RMS |X|², autopower, PSD × line width); FRFs |H|².
        let ms: Vec<f64> = match set.signal {
            Some(kind) => crate::levels::mean_squares(&col, &set.freqs, kind)?,
            None => col.iter().map(|v| v.norm_sqr()).collect(),
        };
        let e: f64 = set
            .freqs
            .iter()
            .zip(&ms)
            .filter(|(f, m)| **f >= lo && **f <= hi && m.is_finite())
            .map(|(_, m)| *m)
            .sum();
        values.push(10.0 * (e / (reference * reference)).log10());
    }
    let mut out = spec.clone();
    out.categories = set.inputs.iter().map(|d| d.to_string()).collect();
    out.groups = vec![BarGroup {
        label: format!("{} at {}", set.name, set.outputs[r.out]),
        values,
    }];
    if out.y_label.is_empty() {
        out.y_label = format!("band level ({ref_text})");
    }
    if out.x_label.is_empty() {
        out.x_label = match spec.x_range {
            Some([a, b]) => format!(
                "inputs (paths), lines from {} to {} Hz",
                tick_text(a),
                tick_text(b)
            ),
            None => "inputs (paths), all lines".into(),
        };
    }
    Ok(out)
}

fn draw_lines<DB: DrawingBackend>(
    b: &mut DB,
    spec: &PlotSpec,
    (left, top, right, bottom): (i32, i32, i32, i32),
) -> Result<Vec<Frame>> {
    if spec.lines.is_empty() {
        return Err(Error::missing("nothing to plot: no lines given"));
    }
    for l in &spec.lines {
        if l.x.len() != l.y.len() {
            return Err(Error::usage(format!(
                "line '{}' has {} x values and {} y values",
                l.label,
                l.x.len(),
                l.y.len()
            ))
            .field("lines"));
        }
    }
    let (lo, hi) = match spec.x_range {
        Some([a, c]) if a < c => (a, c),
        _ => finite_range(
            spec.lines.iter().flat_map(|l| l.x.iter().copied()),
            spec.x_log,
        )
        .ok_or_else(|| Error::missing("nothing to plot: no x values"))?,
    };
    let x = Axis {
        min: lo,
        max: if hi > lo { hi } else { lo + 1.0 },
        log: spec.x_log,
    };
    let vals: Vec<f64> = spec
        .lines
        .iter()
        .flat_map(|l| {
            l.x.iter()
                .zip(&l.y)
                .filter(|(xv, _)| in_x(&x, **xv))
                .map(|(_, y)| *y)
                .collect::<Vec<_>>()
        })
        .collect();
    let y = y_axis(spec.y_range, vals, spec.y_log, false);
    let p = Panel {
        x0: left,
        y0: top,
        x1: right,
        y1: bottom,
        x,
        y,
    };
    let xt = if spec.x_label.is_empty() {
        "frequency (Hz)"
    } else {
        &spec.x_label
    };
    axes(b, &p, Some(xt), &spec.y_label, None, true)?;
    let pts: Vec<Vec<(f64, f64)>> = spec
        .lines
        .iter()
        .map(|l| l.x.iter().copied().zip(l.y.iter().copied()).collect())
        .collect();
    draw_curves(b, &p, &pts)?;
    legend(
        b,
        &p,
        &spec
            .lines
            .iter()
            .map(|l| l.label.clone())
            .collect::<Vec<_>>(),
    )?;
    Ok(vec![p.frame("x")])
}

fn draw_bars<DB: DrawingBackend>(
    b: &mut DB,
    spec: &PlotSpec,
    (left, top, right, bottom): (i32, i32, i32, i32),
) -> Result<Vec<Frame>> {
    let n = spec.categories.len();
    if n == 0 || spec.groups.is_empty() {
        return Err(Error::missing("nothing to plot: no bars given"));
    }
    for g in &spec.groups {
        if g.values.len() != n {
            return Err(Error::usage(format!(
                "bar group '{}' has {} values for {} categories",
                g.label,
                g.values.len(),
                n
            ))
            .field("groups"));
        }
    }
    let bottom = bottom - 16;
    let vals: Vec<f64> = spec.groups.iter().flat_map(|g| g.values.clone()).collect();
    let mut y = y_axis(spec.y_range, vals, false, true);
    if spec.y_range.is_none() {
        y.max += 10.0;
    }
    let p = Panel {
        x0: left,
        y0: top,
        x1: right,
        y1: bottom,
        x: Axis {
            min: 0.0,
            max: n as f64,
            log: false,
        },
        y,
    };
    axes(b, &p, None, &spec.y_label, None, false)?;
    let ng = spec.groups.len() as f64;
    for (gi, g) in spec.groups.iter().enumerate() {
        for (ci, v) in g.values.iter().enumerate() {
            if !v.is_finite() {
                continue;
            }
            let xa = ci as f64 + 0.12 + 0.76 * gi as f64 / ng;
            let xb = xa + 0.76 / ng * 0.92;
            let (x0, y0) = p.px(xa, v.clamp(y.min, y.max));
            let (x1, y1) = p.px(xb, y.min);
            let c = colour(gi);
            b.draw_rect(
                (x0.round() as i32, y0.round() as i32),
                (x1.round() as i32, y1.round() as i32),
                &c,
                true,
            )
            .map_err(derr)?;
            // Hatching on alternate groups keeps them apart in grey-scale print.
            if gi % 2 == 1 {
                let mut yy = y0 + 4.0;
                while yy < y1 {
                    b.draw_line(
                        (x0.round() as i32, yy.round() as i32),
                        (x1.round() as i32, (yy - 4.0).round() as i32),
                        &WHITE,
                    )
                    .map_err(derr)?;
                    yy += 6.0;
                }
            }
        }
    }
    for (ci, c) in spec.categories.iter().enumerate() {
        let (x, _) = p.px(ci as f64 + 0.5, y.min);
        text(
            b,
            c,
            (x.round() as i32, bottom + 6),
            12.0,
            Pos::new(HPos::Center, VPos::Top),
            false,
        )?;
    }
    if !spec.x_label.is_empty() {
        text(
            b,
            &spec.x_label,
            ((left + right) / 2, bottom + 26),
            13.0,
            Pos::new(HPos::Center, VPos::Top),
            false,
        )?;
    }
    let labels: Vec<String> = spec.groups.iter().map(|g| g.label.clone()).collect();
    legend_with(b, &p, &labels, true)?;
    Ok(vec![p.frame("category")])
}

/// Render `spec` to SVG text.
pub fn render_svg(
    spec: &PlotSpec,
    sets: &BTreeMap<String, FrfSet>,
) -> Result<(String, Vec<Frame>)> {
    if spec.width < 200 || spec.height < 150 || spec.width > 8000 || spec.height > 8000 {
        return Err(Error::usage(format!(
            "plot size {}×{} px is outside 200×150 to 8000×8000",
            spec.width, spec.height
        ))
        .field("width/height"));
    }
    let mut s = String::new();
    let frames = {
        let mut b = SVGBackend::with_string(&mut s, (spec.width, spec.height));
        draw(&mut b, spec, sets)?
    };
    Ok((s, frames))
}

/// The values of every curve of `spec` at the line nearest `freq`.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Probe {
    pub label: String,
    /// The frequency of the nearest line (Hz).
    pub freq: f64,
    pub re: f64,
    pub im: f64,
    pub magnitude: f64,
    pub unit: String,
    pub level_db: f64,
    pub db_label: String,
    pub phase_deg: f64,
}

/// Cursor readout: values at the grid line nearest `freq` for each curve.
pub fn probe(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>, freq: f64) -> Result<Vec<Probe>> {
    let curves = resolve(spec, sets)?;
    let mut out = Vec::new();
    for c in curves {
        if c.freqs.is_empty() {
            continue;
        }
        // Nearest line: the first line at or above freq, or the one before it.
        let k = c.freqs.partition_point(|f| *f < freq);
        let k = if k == c.freqs.len()
            || (k > 0 && (freq - c.freqs[k - 1]).abs() <= (c.freqs[k] - freq).abs())
        {
            k.saturating_sub(1).min(c.freqs.len() - 1)
        } else {
            k
        };
        let v = c.values[k];
        out.push(Probe {
            label: c.label.clone(),
            freq: c.freqs[k],
            re: v.re,
            im: v.im,
            magnitude: v.norm(),
            unit: c.unit.clone(),
            level_db: c.level[k],
            db_label: c.db_label.clone(),
            phase_deg: wrap_phase(v),
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Direction, Dof};

    fn sdof() -> BTreeMap<String, FrfSet> {
        // Receptance of m = 1 kg, k = 1e4 N/m, c = 2 N·s/m: 1/(k − ω²m + iωc).
        let d = Dof::new("demo", "1", Direction::Z);
        let freqs: Vec<f64> = (1..=400).map(|i| i as f64 * 0.5).collect();
        let mut h = FrfSet::zeros(
            "sdof",
            freqs,
            vec![d.clone()],
            vec![d],
            Quantity::Displacement,
            Quantity::Force,
        );
        for l in 0..h.n_lines() {
            let w = h.omega(l);
            h.set(l, 0, 0, 1.0 / Complex64::new(1e4 - w * w, 2.0 * w));
        }
        let mut m = BTreeMap::new();
        m.insert("a".to_string(), h);
        m
    }

    fn spec(kind: &str) -> PlotSpec {
        PlotSpec::from_json(&format!(
            r#"{{"kind":"{kind}","series":[{{"set":"a","out":0,"in":0}}],"title":"t"}}"#
        ))
        .unwrap()
    }

    #[test]
    fn bode_svg_has_two_panels_and_reference_label() {
        let (svg, frames) = render_svg(&spec("bode"), &sdof()).unwrap();
        assert_eq!(frames.len(), 2);
        assert!(svg.starts_with("<svg"));
        assert!(
            svg.contains("dB re 1 (m)/(N)"),
            "dB axis names its reference"
        );
        assert!(svg.contains("phase (°)"));
        assert!(frames[0].x_log && frames[0].x_min == 0.5 && frames[0].x_max == 200.0);
    }

    #[test]
    fn every_kind_draws() {
        for k in ["bode", "magnitude", "re-im", "nyquist"] {
            render_svg(&spec(k), &sdof()).unwrap();
        }
        let lines = PlotSpec::from_json(
            r#"{"kind":"lines","lines":[{"label":"κ","x":[1,2,3],"y":[1,10,100]}],"y_log":true}"#,
        )
        .unwrap();
        let (_, f) = render_svg(&lines, &BTreeMap::new()).unwrap();
        assert!(f[0].y_log);
        let bars = PlotSpec::from_json(
            r#"{"kind":"bars","categories":["A1","A2"],"groups":[{"label":"now","values":[30,20]},{"label":"soft","values":[25,18]}]}"#,
        )
        .unwrap();
        render_svg(&bars, &BTreeMap::new()).unwrap();
        let cond = PlotSpec::from_json(
            r#"{"kind":"lines","lines":[{"label":"c","y":[1,2],"x_from":"a"}]}"#,
        )
        .unwrap();
        // 2 values against 400 lines: a clear error, not a wrong plot.
        assert!(render_svg(&cond, &sdof()).is_err());
    }

    #[test]
    fn ranking_bars_are_energetic_sums() {
        // One line of |H| = 1e-4 m/N inside the range → 20·log10(1e-4) = −80 dB re 1 m/N.
        let mut spec = PlotSpec::from_json(
            r#"{"kind":"bars","ranking":{"set":"a","out":0,"in":0},"x_range":[0.5,0.5]}"#,
        )
        .unwrap();
        let b = bars_from_set(&spec, &sdof()).unwrap();
        let v = b.groups[0].values[0];
        let h = sdof()["a"].get(0, 0, 0).norm();
        assert!((v - 20.0 * h.log10()).abs() < 1e-12);
        // Two lines: 10·log10(|H1|² + |H2|²).
        spec.x_range = Some([0.5, 1.0]);
        let b = bars_from_set(&spec, &sdof()).unwrap();
        let s = sdof();
        let e = s["a"].get(0, 0, 0).norm_sqr() + s["a"].get(1, 0, 0).norm_sqr();
        assert!((b.groups[0].values[0] - 10.0 * e.log10()).abs() < 1e-12);
        render_svg(&spec, &sdof()).unwrap();
    }

    #[test]
    fn report_ranking_becomes_band_bars() {
        // Shape of predict::paths::TargetRanking as a report writes it (−∞ as null).
        let t = serde_json::json!({
            "target": "room:bed", "unit": "dB re 20 µPa", "weighting": "a",
            "total_db": 30.0, "sum_of_paths_db": 31.0,
            "overall": [{"path": "p1", "level_db": 29.0, "share": 0.6, "rank": 1},
                        {"path": "p2", "level_db": 27.0, "share": 0.4, "rank": 2}],
            "bands": [
                {"band": {"label": "63", "lower": 56.2, "upper": 70.8}, "total_db": 20.0,
                 "paths": [{"path": "p2", "level_db": 19.0}, {"path": "p1", "level_db": 12.0}]},
                {"band": {"label": "80", "lower": 70.8, "upper": 89.1}, "total_db": null,
                 "paths": [{"path": "p1", "level_db": null}, {"path": "p2", "level_db": null}]}
            ]
        });
        let spec = PlotSpec {
            path_ranking: Some(t),
            ..PlotSpec::from_json(r#"{"kind":"bars"}"#).unwrap()
        };
        let b = bars_from_set(&spec, &BTreeMap::new()).unwrap();
        assert_eq!(b.categories, vec!["63"]);
        assert_eq!(b.groups[0].label, "p1");
        assert_eq!(b.groups[0].values, vec![12.0]);
        assert_eq!(b.groups[1].values, vec![19.0]);
        assert!(b.y_label.contains("A-weighted"));
        render_svg(&spec, &BTreeMap::new()).unwrap();
    }

    #[test]
    fn mixed_quantities_name_their_reference_in_the_legend() {
        let mut sets = sdof();
        let mut v = sets["a"].to_kind("mobility").unwrap();
        v.name = "v".into();
        sets.insert("b".into(), v);
        let spec = PlotSpec::from_json(r#"{"series":[{"set":"a"},{"set":"b"}]}"#).unwrap();
        let (svg, _) = render_svg(&spec, &sets).unwrap();
        assert!(svg.contains("dB, reference in the legend"));
        assert!(svg.contains("[dB re 1 (m/s)/(N)]"));
        assert!(svg.contains("[dB re 1 (m)/(N)]"));
    }

    #[test]
    fn bad_series_is_an_error_not_a_panic() {
        let mut s = spec("bode");
        s.series[0].out = 3;
        assert!(render_svg(&s, &sdof()).is_err());
        s.series[0].set = "none".into();
        assert!(render_svg(&s, &sdof()).is_err());
        let mut s = spec("bode");
        s.x_range = Some([10.0, 1.0]);
        assert!(render_svg(&s, &sdof()).is_err());
    }

    #[test]
    fn probe_reads_nearest_line() {
        // Static receptance at 0.5 Hz is close to 1/k = 1e-4 m/N (single-DOF
        // oscillator below resonance, textbook result).
        let p = probe(&spec("bode"), &sdof(), 0.6).unwrap();
        assert_eq!(p[0].freq, 0.5);
        assert!((p[0].magnitude - 1e-4).abs() / 1e-4 < 0.01);
        assert!((p[0].level_db - (-80.0)).abs() < 0.1);
        // Just above resonance (sqrt(k/m)/(2π) ≈ 15.92 Hz) a passive receptance
        // with e^{+iωt} has Im H < 0, so its phase lies between −90° and −180°
        // (single-DOF oscillator, textbook result).
        let p = probe(&spec("bode"), &sdof(), 15.9).unwrap();
        assert_eq!(p[0].freq, 16.0);
        assert!(p[0].phase_deg < -90.0 && p[0].phase_deg > -180.0);
    }

    #[test]
    fn ticks_are_readable() {
        assert_eq!(lin_ticks(0.0, 10.0), vec![0.0, 2.0, 4.0, 6.0, 8.0, 10.0]);
        let (maj, _) = log_ticks(10.0, 1000.0);
        assert_eq!(maj, vec![10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0]);
        assert_eq!(tick_text(1500.0), "1.5k");
        assert_eq!(tick_text(0.25), "0.25");
    }

    #[test]
    fn clipping_keeps_inside_part() {
        let r = (0.0, 0.0, 10.0, 10.0);
        let (a, b) = clip((-5.0, 5.0), (5.0, 5.0), r).unwrap();
        assert_eq!((a, b), ((0.0, 5.0), (5.0, 5.0)));
        assert!(clip((-5.0, -5.0), (-1.0, -1.0), r).is_none());
    }
}
