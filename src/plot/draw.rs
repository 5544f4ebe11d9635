//! Drawing primitives over a plotters [`DrawingBackend`]: the colours and
//! dash patterns, text placed by its anchor, dashed strokes, a panel's grid,
//! ticks and titles, legends (line samples or bar patches) and curves (lines
//! or stems).
//!
//! Not here: where things go (`layout.rs`), which plot (`render.rs`).

use super::envelope::pixel_polylines;
use super::layout::{tick_text, x_pixels, Panel};
use super::spec::LegendEntry;
use crate::error::{Error, Result};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::FontTransform;
use plotters_backend::DrawingErrorKind;

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

pub(super) fn colour(i: usize) -> RGBColor {
    let (r, g, b) = PALETTE[i % PALETTE.len()];
    RGBColor(r, g, b)
}
fn dash(i: usize) -> (u32, u32) {
    DASHES[i % DASHES.len()]
}

pub(super) fn derr<E: std::error::Error + Send + Sync>(e: DrawingErrorKind<E>) -> Error {
    Error::io(format!("drawing failed: {e}"))
}

const INK: RGBColor = RGBColor(0x22, 0x2a, 0x30);
const GRID: RGBColor = RGBColor(0xdd, 0xe2, 0xe5);
const GRID_MINOR: RGBColor = RGBColor(0xee, 0xf1, 0xf2);
const FONT: &str = "sans-serif";

pub(super) fn text<DB: DrawingBackend>(
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

/// Curves drawn 2 px wide up to this many in a panel, 1 px wide beyond:
/// many overlaid curves stay apart, and a canvas strokes thin lines far
/// faster (common practice for dense overlays).
pub const THIN_OVER: usize = 12;

/// Stroke a pixel polyline `width` px wide with a dash pattern.
fn stroke<DB: DrawingBackend>(
    b: &mut DB,
    line: &[(f64, f64)],
    c: RGBColor,
    (on, off): (u32, u32),
    width: u32,
) -> Result<()> {
    let style = ShapeStyle::from(&c).stroke_width(width);
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
                seg.clear();
                seg.push(m);
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
pub(super) fn axes<DB: DrawingBackend>(
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

/// The most entries a legend names inside a panel; with more, the panel
/// says how many curves it draws and the entries are returned for a list
/// beside the plot (150 names would hide the data).
pub const LEGEND_INSIDE_MAX: usize = 8;

pub(super) fn legend<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    labels: &[String],
) -> Result<Vec<LegendEntry>> {
    legend_with(b, p, labels, false)
}

/// Draw a legend of line samples (or bar patches) in the panel's top right
/// corner, or with more than [`LEGEND_INSIDE_MAX`] entries a note of their
/// count; returns the entries with their colours and dashes.
pub(super) fn legend_with<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    labels: &[String],
    patches: bool,
) -> Result<Vec<LegendEntry>> {
    let entries: Vec<LegendEntry> = labels
        .iter()
        .enumerate()
        .map(|(i, l)| {
            let c = colour(i);
            LegendEntry {
                label: l.clone(),
                colour: format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2),
                dash: if patches {
                    [0, 0]
                } else {
                    [dash(i).0, dash(i).1]
                },
                hatched: patches && i % 2 == 1,
                inside: labels.len() <= LEGEND_INSIDE_MAX,
            }
        })
        .collect();
    if labels.is_empty() {
        return Ok(entries);
    }
    if labels.len() > LEGEND_INSIDE_MAX {
        let note = format!(
            "{} {}: too many to name here",
            labels.len(),
            if patches { "groups" } else { "curves" }
        );
        let w = note.chars().count() as i32 * 7 + 16;
        let (x0, y0) = (p.x1 - w - 8, p.y0 + 8);
        b.draw_rect(
            (x0, y0),
            (x0 + w, y0 + 22),
            &RGBColor(0xfb, 0xfc, 0xfc),
            true,
        )
        .map_err(derr)?;
        b.draw_rect((x0, y0), (x0 + w, y0 + 22), &GRID, false)
            .map_err(derr)?;
        text(
            b,
            &note,
            (x0 + 8, y0 + 11),
            12.0,
            Pos::new(HPos::Left, VPos::Center),
            false,
        )?;
        return Ok(entries);
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
                2,
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
    Ok(entries)
}

pub(super) fn draw_curves<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    curves: &[Vec<(f64, f64)>],
    drawn: &[bool],
) -> Result<()> {
    draw_curves_stems(b, p, curves, &[], false, drawn)
}

/// A curve's 95 % level band, filled in its colour, light
/// ([`super::band`]); for a line spectrum (`stems`) a bar at each line.
pub(super) fn draw_band<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    i: usize,
    freqs: &[f64],
    band: &super::band::CurveBand,
    stems: bool,
) -> Result<()> {
    let fill = colour(i).mix(super::band::BAND_ALPHA);
    if stems {
        let h = super::band::BAR_HALF_PX;
        for (x, top, bottom) in super::band::bars(p, freqs, band) {
            b.draw_rect((x - h, top), (x + h, bottom), &fill, true)
                .map_err(derr)?;
        }
        return Ok(());
    }
    for poly in super::band::polygons(p, freqs, band) {
        b.fill_polygon(poly, &fill).map_err(derr)?;
    }
    Ok(())
}

/// Curve `i` of `count` drawn again over its unreliable lines in a pale mix
/// of its colour (same dash and width), when it has any.
pub(super) fn draw_pale<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    i: usize,
    count: usize,
    pts: &[(f64, f64)],
    reliable: &[bool],
) -> Result<()> {
    let Some(bad) = super::band::unreliable_points(pts, reliable) else {
        return Ok(());
    };
    let c = colour(i);
    let w = super::band::PALE_WHITE;
    let mixw = |v: u8| (v as f64 * (1.0 - w) + 255.0 * w).round() as u8;
    let pale = RGBColor(mixw(c.0), mixw(c.1), mixw(c.2));
    let width = if count > THIN_OVER { 1 } else { 2 };
    for line in pixel_polylines(p, &bad, None) {
        stroke(b, &line, pale, dash(i), width)?;
    }
    Ok(())
}

/// Lines, or for line spectra (`stems[i]`) a marker at each line, with a
/// stem down to the axis when `stem_lines`; only the curves `drawn[i]`
/// (a pass of the drawing, `render::Pass`), each in the colour and width of
/// its place among all.
pub(super) fn draw_curves_stems<DB: DrawingBackend>(
    b: &mut DB,
    p: &Panel,
    curves: &[Vec<(f64, f64)>],
    stems: &[bool],
    stem_lines: bool,
    drawn: &[bool],
) -> Result<()> {
    let width = if curves.len() > THIN_OVER { 1 } else { 2 };
    // pixel x of the last grid seen: curves on one grid map it once
    let mut grid: (Vec<f64>, Vec<f64>) = (Vec::new(), Vec::new());
    for (i, pts) in curves.iter().enumerate() {
        if !drawn.get(i).copied().unwrap_or(false) {
            continue;
        }
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
        let same = grid.0.len() == pts.len()
            && grid
                .0
                .iter()
                .zip(pts.iter())
                .all(|(a, b)| a.to_bits() == b.0.to_bits());
        if !same {
            grid = (pts.iter().map(|q| q.0).collect(), x_pixels(p, pts));
        }
        for line in pixel_polylines(p, pts, Some(&grid.1)) {
            stroke(b, &line, colour(i), dash(i), width)?;
        }
    }
    Ok(())
}
